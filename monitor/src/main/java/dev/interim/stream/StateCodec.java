package dev.interim.stream;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.interim.experiment.Decision;
import dev.interim.experiment.Estimate;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.LookPoint;
import dev.interim.experiment.LookResult;
import dev.interim.stats.ConfidenceInterval;
import java.time.Instant;
import dev.interim.sequential.Look;
import dev.interim.sequential.SequentialMonitor;
import dev.interim.stats.Alternative;
import dev.interim.experiment.Tally;
import dev.interim.stats.HistogramCounts;
import dev.interim.stats.Moments;
import dev.interim.stats.ProportionCounts;
import dev.interim.stats.RatioMoments;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;

/**
 * The records of the daemon's state topics: partial tallies and look history as JSON, versioned by
 * a field {@code "v"}, and unit state as a small binary record led by a version byte (its JSON
 * records of version 1 still read). Small and explicit, so that a later layout can still read these.
 */
final class StateCodec {
    private static final ObjectMapper JSON = new ObjectMapper();

    private StateCodec() {}

    static byte[] key(String text) {
        return text.getBytes(StandardCharsets.UTF_8);
    }

    static String key(byte[] bytes) {
        return new String(bytes, StandardCharsets.UTF_8);
    }

    static byte[] partial(Tally tally) {
        ObjectNode n = JSON.createObjectNode().put("v", 1);
        if (tally instanceof Tally.Quantile q) {
            HistogramCounts h = q.counts();
            com.fasterxml.jackson.databind.node.ArrayNode groups = n.put("kind", "quantile").putArray("groups");
            for (int g = 0; g < h.groupCount(); g++) {
                if (h.count(g) == 0) {
                    groups.addNull();
                    continue;
                }
                org.HdrHistogram.PackedHistogram one = h.group(g);
                java.nio.ByteBuffer b = java.nio.ByteBuffer.allocate(one.getNeededByteBufferCapacity());
                int length = one.encodeIntoByteBuffer(b);
                groups.add(java.util.Arrays.copyOf(b.array(), length));
            }
        } else if (tally instanceof Tally.Mean m) {
            Moments x = m.moments();
            n.put("kind", "mean").put("count", x.count()).put("m2", x.sumSquaredDeviations());
            if (x.count() > 0) {
                n.put("mean", x.mean()).put("residual", x.meanResidual());
            }
        } else if (tally instanceof Tally.Ratio r) {
            RatioMoments x = r.moments();
            n.put("kind", "ratio").put("count", x.count()).put("m2x", x.sumSquaredDeviationsX())
                    .put("m2y", x.sumSquaredDeviationsY()).put("cxy", x.sumCrossDeviations());
            if (x.count() > 0) {
                n.put("mean_x", x.meanX()).put("mean_y", x.meanY());
            }
        } else {
            ProportionCounts c = ((Tally.Rate) tally).counts();
            n.put("kind", "rate").put("successes", c.successes()).put("trials", c.trials());
        }
        return write(n);
    }

    static Tally partial(byte[] bytes) {
        JsonNode n = read(bytes);
        if ("quantile".equals(n.path("kind").asText())) {
            JsonNode groups = n.path("groups");
            if (!groups.isArray() || groups.isEmpty()) {
                throw new IllegalArgumentException("a quantile partial needs its groups");
            }
            org.HdrHistogram.PackedHistogram[] h = new org.HdrHistogram.PackedHistogram[groups.size()];
            for (int g = 0; g < h.length; g++) {
                if (!groups.get(g).isNull()) {
                    try {
                        h[g] = org.HdrHistogram.PackedHistogram.decodeFromByteBuffer(
                                java.nio.ByteBuffer.wrap(groups.get(g).binaryValue()), 2);
                    } catch (IOException e) {
                        throw new UncheckedIOException(e);
                    }
                }
            }
            return new Tally.Quantile(HistogramCounts.of(h));
        }
        if ("mean".equals(n.path("kind").asText())) {
            long count = n.path("count").asLong();
            if (count == 0) {
                return new Tally.Mean(Moments.EMPTY);
            }
            return new Tally.Mean(new Moments(count, n.path("mean").asDouble(), n.path("m2").asDouble(),
                    n.path("residual").asDouble()));
        }
        if ("ratio".equals(n.path("kind").asText())) {
            long count = n.path("count").asLong();
            if (count == 0) {
                return new Tally.Ratio(RatioMoments.EMPTY);
            }
            return new Tally.Ratio(new RatioMoments(count, n.path("mean_x").asDouble(), n.path("mean_y").asDouble(),
                    n.path("m2x").asDouble(), n.path("m2y").asDouble(), n.path("cxy").asDouble()));
        }
        return new Tally.Rate(new ProportionCounts(n.path("successes").asLong(), n.path("trials").asLong()));
    }

    // ---- the units changelog ------------------------------------------------------------------

    /** Version byte of the binary unit record; the JSON records before it start with '{'. */
    static final byte UNIT_VERSION = 2;
    private static final byte SOURCE_END = 0x1e;
    private static final byte EXPERIMENT_END = 0x1f;
    private static final int UNIT_HASH_BYTES = 12;

    /** Where a units changelog record belongs: the input partition and the unit. */
    record UnitRecordKey(String source, UnitKey unit) {}

    /**
     * The record key of a unit on the units changelog: the source ("topic-partition"), 0x1e, the
     * experiment id, 0x1f, then the unit's 96-bit key (its 64-bit half, then its 32-bit half, both
     * big-endian). Topic names and experiment ids hold neither separator, so the first 0x1e and the
     * first 0x1f after it split the key whatever bytes the hash has.
     */
    static byte[] unitKey(String source, UnitKey unit) {
        byte[] s = source.getBytes(StandardCharsets.UTF_8);
        byte[] e = unit.experiment().getBytes(StandardCharsets.UTF_8);
        java.nio.ByteBuffer b = java.nio.ByteBuffer.allocate(s.length + 1 + e.length + 1 + UNIT_HASH_BYTES);
        b.put(s).put(SOURCE_END).put(e).put(EXPERIMENT_END).putLong(unit.hi()).putInt(unit.lo());
        return b.array();
    }

    /**
     * Writes unit records of one experiment of one input partition straight from the unit table,
     * byte for byte what {@link #unitKey(String, UnitKey)} and
     * {@link #unit(UnitState)} write, without the objects in between: a commit writes
     * one record per changed unit, so this is on the tally stage's hot path. The names are encoded
     * once; a record is built in a reused buffer. Mutable, one thread.
     */
    static final class UnitEncoder {
        private final byte[] keyPrefix;
        private final byte[][] arms;
        private final byte[][] rates;
        private final byte[][] totals;
        /** The record being built, reused from unit to unit. */
        private final ByteBuilder value = new ByteBuilder(64);

        UnitEncoder(String source, String experiment, String[] armNames, String[] rateNames, String[] totalNames) {
            byte[] s = source.getBytes(StandardCharsets.UTF_8);
            byte[] e = experiment.getBytes(StandardCharsets.UTF_8);
            keyPrefix = new byte[s.length + 1 + e.length + 1];
            System.arraycopy(s, 0, keyPrefix, 0, s.length);
            keyPrefix[s.length] = SOURCE_END;
            System.arraycopy(e, 0, keyPrefix, s.length + 1, e.length);
            keyPrefix[keyPrefix.length - 1] = EXPERIMENT_END;
            arms = names(armNames);
            rates = names(rateNames);
            totals = names(totalNames);
        }

        private static byte[][] names(String[] names) {
            byte[][] out = new byte[names.length][];
            for (int i = 0; i < names.length; i++) {
                java.io.ByteArrayOutputStream b = new java.io.ByteArrayOutputStream();
                writeName(b, names[i]);
                out[i] = b.toByteArray();
            }
            return out;
        }

        byte[] key(long hi, int lo) {
            ByteBuilder k = new ByteBuilder(keyLength());
            writeKey(k, hi, lo);
            return k.toByteArray();
        }

        /** The length of every key {@link #writeKey} writes. */
        int keyLength() {
            return keyPrefix.length + UNIT_HASH_BYTES;
        }

        /** Writes the key of the unit (hi, lo) into {@code out}: the bytes {@link #key} returns. */
        void writeKey(ByteBuilder out, long hi, int lo) {
            out.write(keyPrefix);
            out.writeLong(hi);
            out.writeInt(lo);
        }

        /** Starts a record: version and arm, then the count of unit-rate metrics met. */
        void begin(int arm, int metCount) {
            value.reset();
            value.write(UNIT_VERSION);
            value.write(arms[arm]);
            value.writeLength(metCount);
        }

        void met(int rate) {
            value.write(rates[rate]);
        }

        void totalCount(int n) {
            value.writeLength(n);
        }

        void total(int metric, double v) {
            value.write(totals[metric]);
            value.writeLong(Double.doubleToRawLongBits(v));
        }

        byte[] finish() {
            return value.toByteArray();
        }

        /** The length of the record begun with {@link #begin}, as it stands. */
        int valueLength() {
            return value.size();
        }

        /** Writes the record begun with {@link #begin} into {@code out}: the bytes {@link #finish} returns. */
        void writeValue(ByteBuilder out) {
            value.writeTo(out);
        }
    }

    /** The source ("topic-partition") of a units-topic key: its bytes before the first 0x1e. */
    static String unitSource(byte[] key) {
        int cut = indexOf(key, SOURCE_END, 0);
        if (cut < 0) {
            throw new IllegalArgumentException("not a units-topic key: " + key(key));
        }
        return new String(key, 0, cut, StandardCharsets.UTF_8);
    }

    static UnitRecordKey unitKey(byte[] key, byte[] value) {
        int cut = indexOf(key, SOURCE_END, 0);
        int end = cut < 0 ? -1 : indexOf(key, EXPERIMENT_END, cut + 1);
        if (end < 0) {
            throw new IllegalArgumentException("not a unit key: " + key(key));
        }
        String source = new String(key, 0, cut, StandardCharsets.UTF_8);
        String experiment = new String(key, cut + 1, end - cut - 1, StandardCharsets.UTF_8);
        int tail = key.length - end - 1;
        if (isJson(value)) {
            return new UnitRecordKey(source, UnitKey.of(experiment,
                    new String(key, end + 1, tail, StandardCharsets.UTF_8)));
        }
        if (tail != UNIT_HASH_BYTES) {
            throw new IllegalArgumentException("a unit key holds " + UNIT_HASH_BYTES + " bytes of hash after the"
                    + " experiment, this one " + tail);
        }
        java.nio.ByteBuffer b = java.nio.ByteBuffer.wrap(key, end + 1, UNIT_HASH_BYTES);
        return new UnitRecordKey(source, new UnitKey(experiment, b.getLong(), b.getInt()));
    }

    /**
     * A unit's state as a binary record, version 2: the version byte, the arm's name, the number of
     * unit-rate metrics the unit met and their names, then the number of unit-total totals written
     * (those that are not +0.0, the total of a unit with no value yet) and for each its name and the
     * 8 bytes of its IEEE 754 bits (big-endian). A name is its UTF-8 length (unsigned LEB128) and its
     * bytes. Names rather than positions: a record stays right when the configuration adds, drops or
     * reorders arms and metrics; arm and metric names are short (at most 128 and 64 characters).
     */
    static byte[] unit(UnitState u) {
        java.io.ByteArrayOutputStream out = new java.io.ByteArrayOutputStream(32);
        out.write(UNIT_VERSION);
        writeName(out, u.arm());
        writeLength(out, u.met().size());
        for (String m : u.met()) {
            writeName(out, m);
        }
        writeLength(out, u.totals().size());
        u.totals().forEach((name, total) -> {
            writeName(out, name);
            long bits = Double.doubleToRawLongBits(total);
            for (int shift = 56; shift >= 0; shift -= 8) {
                out.write((int) (bits >>> shift));
            }
        });
        return out.toByteArray();
    }

    /**
     * Reads a unit record: version 2 (binary, see {@link #unit(UnitState)}) or
     * version 1 (JSON: {@code {"v":1,"arm":...,"totals":{name: total},"met":[names]}}).
     *
     * @throws IllegalArgumentException when the record is of no known version or cut short
     */
    static UnitState unit(byte[] bytes) {
        if (isJson(bytes)) {
            JsonNode n = read(bytes);
            java.util.Map<String, Double> totals = new java.util.LinkedHashMap<>();
            n.path("totals").fields().forEachRemaining(e -> totals.put(e.getKey(), e.getValue().asDouble()));
            java.util.Set<String> met = new java.util.LinkedHashSet<>();
            n.path("met").forEach(m -> met.add(m.asText()));
            return new UnitState(n.path("arm").asText(), met, totals);
        }
        if (bytes.length == 0 || bytes[0] != UNIT_VERSION) {
            throw new IllegalArgumentException("a unit record of unknown version "
                    + (bytes.length == 0 ? "(empty)" : Integer.toString(bytes[0] & 0xff)));
        }
        try {
            java.nio.ByteBuffer b = java.nio.ByteBuffer.wrap(bytes, 1, bytes.length - 1);
            String arm = readName(b);
            int metCount = readLength(b);
            java.util.Set<String> met = new java.util.LinkedHashSet<>();
            for (int i = 0; i < metCount; i++) {
                met.add(readName(b));
            }
            int totalCount = readLength(b);
            java.util.Map<String, Double> totals = new java.util.LinkedHashMap<>();
            for (int i = 0; i < totalCount; i++) {
                String name = readName(b);
                totals.put(name, b.getDouble());
            }
            if (b.hasRemaining()) {
                throw new IllegalArgumentException("a unit record with " + b.remaining() + " bytes too many");
            }
            return new UnitState(arm, met, totals);
        } catch (java.nio.BufferUnderflowException e) {
            throw new IllegalArgumentException("a unit record cut short", e);
        }
    }

    private static boolean isJson(byte[] value) {
        return value != null && value.length > 0 && value[0] == '{';
    }

    private static int indexOf(byte[] bytes, byte b, int from) {
        for (int i = from; i < bytes.length; i++) {
            if (bytes[i] == b) {
                return i;
            }
        }
        return -1;
    }

    private static void writeName(java.io.ByteArrayOutputStream out, String name) {
        byte[] b = name.getBytes(StandardCharsets.UTF_8);
        writeLength(out, b.length);
        out.write(b, 0, b.length);
    }

    /** Unsigned LEB128: 7 bits a byte, low bits first, the high bit set on every byte but the last. */
    private static void writeLength(java.io.ByteArrayOutputStream out, int n) {
        while ((n & ~0x7f) != 0) {
            out.write((n & 0x7f) | 0x80);
            n >>>= 7;
        }
        out.write(n);
    }

    private static String readName(java.nio.ByteBuffer b) {
        int n = readLength(b);
        if (n > b.remaining()) {
            throw new IllegalArgumentException("a unit record cut short");
        }
        String s = new String(b.array(), b.arrayOffset() + b.position(), n, StandardCharsets.UTF_8);
        b.position(b.position() + n);
        return s;
    }

    private static int readLength(java.nio.ByteBuffer b) {
        int n = 0;
        for (int shift = 0; shift < 32; shift += 7) {
            int x = b.get() & 0xff;
            n |= (x & 0x7f) << shift;
            if ((x & 0x80) == 0) {
                if (n < 0) {
                    break;
                }
                return n;
            }
        }
        throw new IllegalArgumentException("a unit record with a bad length");
    }

    /**
     * The state of one comparison: its decision and its sequential monitor's snapshot (version 2), or,
     * in records of version 1, the fractions of every look, replayed on restore. From version 3 also
     * the last look's result and how many look points are kept (the points themselves are in blocks
     * of {@link #POINTS_PER_BLOCK}, each a record of its own: see {@link #points(List, int, int)}).
     *
     * @param last the last look's result, or null (none yet, or a record older than version 3)
     * @param points how many look points the blocks hold for this state (0 before version 3)
     */
    record History(List<Double> fractions, SequentialMonitor.Snapshot snapshot, Decision decision, LookResult last,
                   int points) {}

    static byte[] history(SequentialMonitor.Snapshot s, Decision decision) {
        return history(s, decision, null, 0);
    }

    static byte[] history(SequentialMonitor.Snapshot s, Decision decision, LookResult lastResult, int points) {
        ObjectNode n = JSON.createObjectNode().put("v", 3).put("decision", decision.name());
        n.put("alpha_spent", doubles(new double[] {s.alphaSpent(), s.betaSpent()}));
        n.put("null_state", doubles(s.nullState()));
        if (s.alternativeState() != null) {
            n.put("alternative_state", doubles(s.alternativeState()));
        }
        Look l = s.last();
        if (l != null) {
            n.put("last_look", l.number()).put("last_alternative", l.alternative().name())
                    .put("last_flags", flags(l)).put("last_values", doubles(values(l)));
        }
        if (lastResult != null) {
            Look rl = lastResult.look();
            Estimate e = lastResult.estimate();
            ConfidenceInterval i = lastResult.interval();
            ConfidenceInterval r = lastResult.relativeInterval();
            ObjectNode o = n.putObject("last_result");
            o.put("previous", lastResult.previous().name()).put("decision", lastResult.decision().name())
                    .put("at", lastResult.at().toString())
                    .put("look", rl.number()).put("alternative", rl.alternative().name()).put("flags", flags(rl))
                    .put("look_values", doubles(values(rl)))
                    .put("estimate", doubles(new double[] {e.effect(), e.standardError(), e.z(), e.degreesOfFreedom(),
                        e.treatmentLevel(), e.controlLevel(), e.treatmentLevelError(), e.controlLevelError(),
                        e.conservativeInformation()}))
                    .put("interval", doubles(new double[] {i.lower(), i.upper(), i.level()}));
            if (r != null) {
                o.put("relative_interval", doubles(new double[] {r.lower(), r.upper(), r.level()}));
            }
        }
        n.put("points", points);
        return write(n);
    }

    /**
     * Reads a comparison's state record; {@code experiment}, {@code arm} and {@code metric} come from
     * its key (they name the last look's result).
     */
    static History history(byte[] bytes, String experiment, String arm, String metric) {
        JsonNode n = read(bytes);
        Decision decision = Decision.valueOf(n.path("decision").asText(Decision.CONTINUE.name()));
        if (n.path("v").asInt() < 2) {
            List<Double> fractions = new ArrayList<>();
            n.path("fractions").forEach(f -> fractions.add(f.asDouble()));
            return new History(fractions, null, decision, null, 0);
        }
        double[] spent = doubles(n.path("alpha_spent").asText());
        Look last = null;
        if (n.has("last_look")) {
            last = look(n.path("last_look").asInt(), n.path("last_alternative").asText(), n.path("last_flags").asInt(),
                    doubles(n.path("last_values").asText()));
        }
        SequentialMonitor.Snapshot snapshot = new SequentialMonitor.Snapshot(last, spent[0], spent[1],
                doubles(n.path("null_state").asText()),
                n.has("alternative_state") ? doubles(n.path("alternative_state").asText()) : null);
        LookResult result = null;
        JsonNode o = n.path("last_result");
        if (o.isObject()) {
            Look rl = look(o.path("look").asInt(), o.path("alternative").asText(), o.path("flags").asInt(),
                    doubles(o.path("look_values").asText()));
            double[] e = doubles(o.path("estimate").asText());
            double[] i = doubles(o.path("interval").asText());
            ConfidenceInterval relative = null;
            if (o.has("relative_interval")) {
                double[] r = doubles(o.path("relative_interval").asText());
                relative = new ConfidenceInterval(r[0], r[1], r[2]);
            }
            result = new LookResult(experiment, arm, metric, Decision.valueOf(o.path("previous").asText()),
                    Decision.valueOf(o.path("decision").asText()), rl,
                    new Estimate(e[0], e[1], e[2], e[3], e[4], e[5], e[6], e[7], e[8]),
                    new ConfidenceInterval(i[0], i[1], i[2]), relative, Instant.parse(o.path("at").asText()));
        }
        return new History(null, snapshot, decision, result, n.path("points").asInt(0));
    }

    private static int flags(Look l) {
        return (l.informationAdded() ? 1 : 0) + (l.last() ? 2 : 0);
    }

    private static double[] values(Look l) {
        return new double[] {l.fraction(), l.upper(), l.lower(), l.alphaSpent(), l.alphaIncrement(), l.betaSpent()};
    }

    private static Look look(int number, String alternative, int flags, double[] v) {
        boolean added = (flags & 1) != 0;
        boolean last = (flags & 2) != 0;
        Look.Stage stage = added ? (last ? Look.Stage.FINAL : Look.Stage.INTERIM)
                : (last ? Look.Stage.AFTER_END : Look.Stage.NO_INFORMATION);
        return new Look(number, v[0], v[1], v[2], Alternative.valueOf(alternative), v[3], v[4], v[5], stage);
    }

    /**
     * Look points per record. A look rewrites only the block its point went into (at most 64 points,
     * about 7 kB), so the history costs a bounded write per look however long it grows; the thinning
     * of the oldest half (every ~1,000 looks) rewrites them all once.
     */
    static final int POINTS_PER_BLOCK = 64;
    /** The key suffix of a block of look points: {@code experiment 0x1f arm 0x1f metric 0x1f points 0x1f n}. */
    static final String POINTS = "points";
    private static final int POINT_BYTES = 4 + 8 + 4 + 11 * 8 + 1;
    private static final byte POINTS_VERSION = 1;

    /** Block {@code block} of {@code points}: those at indices [64·block, 64·block + 64), as one binary record. */
    static byte[] points(List<LookPoint> points, int block, int size) {
        int from = block * POINTS_PER_BLOCK;
        int to = Math.min(size, from + POINTS_PER_BLOCK);
        java.nio.ByteBuffer b = java.nio.ByteBuffer.allocate(1 + 4 + (to - from) * POINT_BYTES);
        b.put(POINTS_VERSION).putInt(to - from);
        for (int i = from; i < to; i++) {
            LookPoint p = points.get(i);
            b.putInt(p.look()).putLong(p.at().getEpochSecond()).putInt(p.at().getNano());
            for (double v : new double[] {p.fraction(), p.statistic(), p.upper(), p.lower(), p.alphaSpent(), p.estimate(),
                p.intervalLower(), p.intervalUpper(), p.relative(), p.relativeLower(), p.relativeUpper()}) {
                b.putDouble(v);
            }
            b.put((byte) p.decision().ordinal());
        }
        return b.array();
    }

    static List<LookPoint> points(byte[] bytes) {
        java.nio.ByteBuffer b = java.nio.ByteBuffer.wrap(bytes);
        if (b.get() != POINTS_VERSION) {
            throw new IllegalArgumentException("a block of look points of an unknown version");
        }
        int n = b.getInt();
        List<LookPoint> out = new ArrayList<>(n);
        Decision[] decisions = Decision.values();
        for (int i = 0; i < n; i++) {
            int look = b.getInt();
            Instant at = Instant.ofEpochSecond(b.getLong(), b.getInt());
            double[] v = new double[11];
            for (int j = 0; j < v.length; j++) {
                v[j] = b.getDouble();
            }
            out.add(new LookPoint(look, at, v[0], v[1], v[2], v[3], v[4], v[5], v[6], v[7], decisions[b.get()], v[8], v[9],
                    v[10]));
        }
        return out;
    }

    /**
     * What operators set on an experiment, and its run: the record under the experiment id alone.
     */
    static byte[] operatorState(ExperimentMonitor.OperatorState s) {
        ObjectNode n = JSON.createObjectNode().put("v", 1).put("run", s.run()).put("acknowledged", s.acknowledged());
        if (s.hold() != null) {
            n.put("hold", s.hold());
        }
        return write(n);
    }

    static ExperimentMonitor.OperatorState operatorState(byte[] bytes) {
        JsonNode n = read(bytes);
        String run = n.path("run").asText("");
        if (run.isEmpty()) {
            throw new IllegalArgumentException("an experiment's state record without its run");
        }
        return new ExperimentMonitor.OperatorState(run, n.hasNonNull("hold") ? n.path("hold").asText() : null,
                n.path("acknowledged").asBoolean(false));
    }

    /** Doubles as base64 of their IEEE 754 bits: exact, infinities included, and compact. */
    private static String doubles(double[] values) {
        java.nio.ByteBuffer b = java.nio.ByteBuffer.allocate(8 * values.length);
        for (double v : values) {
            b.putDouble(v);
        }
        return java.util.Base64.getEncoder().encodeToString(b.array());
    }

    private static double[] doubles(String text) {
        java.nio.ByteBuffer b = java.nio.ByteBuffer.wrap(java.util.Base64.getDecoder().decode(text));
        double[] out = new double[b.remaining() / 8];
        for (int i = 0; i < out.length; i++) {
            out[i] = b.getDouble();
        }
        return out;
    }

    private static byte[] write(JsonNode n) {
        try {
            return JSON.writeValueAsBytes(n);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    private static JsonNode read(byte[] bytes) {
        try {
            return JSON.readTree(bytes);
        } catch (IOException e) {
            throw new UncheckedIOException("a state record is not readable JSON", e);
        }
    }
}
