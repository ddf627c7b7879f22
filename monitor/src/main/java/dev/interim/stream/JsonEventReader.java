package dev.interim.stream;

import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.core.StreamReadConstraints;
import com.fasterxml.jackson.core.async.ByteArrayFeeder;
import com.fasterxml.jackson.databind.JsonNode;
import dev.interim.events.EventMapping;
import dev.interim.events.MappedExperiment;
import dev.interim.events.Catalog;
import dev.interim.events.EventCatalog;
import dev.interim.events.MetricSource;
import dev.interim.events.ValueRange;
import dev.interim.experiment.MetricDefinition;
import dev.interim.stream.BadEventException.Reason;
import java.io.IOException;
import java.lang.invoke.MethodHandles;
import java.lang.invoke.VarHandle;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.charset.CharacterCodingException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;

/**
 * Reads JSON events through the configured JSON Pointers: experiment, arm, optional unit, and each
 * metric's field. An event is an exposure of its unit (or itself) to its arm, and an observation of
 * every metric whose field it carries. Anything that cannot be read is refused with a reason; an
 * accepted event reaches the sink whole, a refused one not at all.
 *
 * <p>What counts as JSON is RFC 8259, strictly: one object and nothing after it but whitespace, each
 * key the reader reads once in its object (a second "arm" would make the event say two things; keys
 * nothing reads are not checked for repeats), UTF-8 well-formed
 * (Unicode §3.9, Table 3-7: no overlong forms, encoded surrogates or code points above U+10FFFF;
 * one leading byte order mark is allowed, §8.1). The experiment, arm and unit must also be Unicode
 * text: a JSON escape can write an unpaired surrogate (U+D800 alone), which UTF-8 cannot carry, so
 * two such units would become one key in the state topics.
 *
 * <p>An event is read in one pass over its tokens, with no tree: only the values the pointers find
 * are decoded ({@link PointerTrie}); every other token is still read, so the parser checks the
 * whole input's syntax as it would to build the tree (duplicate keys only where it reads). All checks of what was found come after that pass, in the
 * order the fields are listed above, so the first fault found is the same whatever the members'
 * order.
 */
public final class JsonEventReader implements EventReader {
    /** Events above this size are refused before parsing. */
    public static final int MAX_BYTES = 1 << 20;
    /**
     * The largest magnitude a mean's or total's value may have. The tallies keep sums of squared
     * deviations in doubles: below 1e100 a unit's total over 2^63 events, squared and summed over
     * 2^63 units, stays far under Double.MAX_VALUE (about 1.8e308), so no accepted value can make them
     * overflow (which they refuse with an exception that would stop the tally stage).
     */
    public static final double MAX_MAGNITUDE = 1e100;
    /**
     * The longest unit id, in UTF-16 characters. Every unit is held in memory and written as a key to
     * the units topic; an id near the record size limit would make that write fail.
     */
    public static final int MAX_UNIT_LENGTH = 1024;
    private static final int MAX_DEPTH = 64;
    /**
     * A thread's parser is made anew after this many events: its table of member names then holds only
     * the names of recent events (Jackson bounds the shared table the names go back to).
     */
    private static final int RENEW_EVERY = 10_000;
    /** Eight bytes of an array read as one long (any byte order: only the high bits are looked at). */
    private static final VarHandle EIGHT_BYTES = MethodHandles.byteArrayViewVarHandle(long[].class, ByteOrder.nativeOrder());
    /** The high bit of each of eight bytes: set only in the bytes of multi-byte UTF-8 sequences. */
    private static final long HIGH_BITS = 0x8080_8080_8080_8080L;

    private final JsonFactory json;
    private final EventMapping mapping;
    private final PointerTrie pointers = new PointerTrie();
    private final int experimentSlot;
    private final int armSlot;
    /** The unit's slot, or -1 when no unit is mapped. */
    private final int unitSlot;
    /** The experiments by catalog index. */
    private final Experiment[] experiments;
    private final Catalog catalog;
    /** Each reading thread's parser, fed event after event. */
    private final ThreadLocal<Feed> feeds = ThreadLocal.withInitial(Feed::new);
    /**
     * The first reading thread's feed, found without the thread-local lookup (a tally thread's map of
     * thread-locals is crowded: a lookup there cost 6% of the thread). Only its owner uses it; another
     * thread sees a feed whose final owner is not itself and goes to {@link #feeds}.
     */
    private Feed first;

    /** A metric's field slots; a ratio's denominator in {@code denominatorSlot} (else -1). */
    private record Metric(String name, MetricSource source, int slot, int denominatorSlot) {}

    private record Experiment(List<Metric> metrics, boolean needsUnit) {}

    public JsonEventReader(EventCatalog config) {
        this.mapping = config.mapping();
        this.json = JsonFactory.builder()
                .streamReadConstraints(StreamReadConstraints.builder()
                        .maxNestingDepth(MAX_DEPTH).maxStringLength(MAX_BYTES).maxNumberLength(100).build())
                .build();   // no STRICT_DUPLICATE_DETECTION: PointerTrie refuses duplicates where it reads
        this.experimentSlot = pointers.add(mapping.experiment());
        this.armSlot = pointers.add(mapping.arm());
        this.unitSlot = mapping.unit().map(pointers::add).orElse(-1);
        this.catalog = config.catalog();
        this.experiments = new Experiment[catalog.size()];
        for (MappedExperiment e : config.experiments()) {
            List<Metric> metrics = new ArrayList<>();
            for (MetricDefinition m : e.definition().metrics()) {
                MetricSource source = e.source(m);
                int denominator = source instanceof MetricSource.Ratio r ? pointers.add(r.denominator()) : -1;
                metrics.add(new Metric(m.name(), source, pointers.add(source.field()), denominator));
            }
            experiments[catalog.index(e.definition().id())] = new Experiment(metrics, e.definition().needsUnits());
        }
        // Nearly every event names a configured experiment and one of its arms: matched without a new string.
        pointers.expect(mapping.experiment(), catalog.experiments().stream().map(d -> d.id()).toList());
        pointers.expect(mapping.arm(), catalog.experiments().stream().flatMap(d -> d.arms().stream()).toList());
    }

    /** The compiled catalog whose indices this reader's observations carry. */
    public Catalog catalog() {
        return catalog;
    }

    @Override
    public void read(byte[] value, ObservationSink sink) throws BadEventException {
        if (value.length > MAX_BYTES) {
            throw new BadEventException(Reason.TOO_LARGE, "event of " + value.length + " bytes, above " + MAX_BYTES);
        }
        if (!wellFormedUtf8(value)) {
            throw new BadEventException(Reason.NOT_JSON, "not UTF-8: the event holds an ill-formed byte sequence");
        }
        // Every pointer's find, by slot: a scalar node, PointerTrie.OBJECT or .ARRAY, or null (missing).
        JsonNode[] found = new JsonNode[pointers.slots()];
        if (!feed().read(value, found)) {
            Arrays.fill(found, null);
            readAlone(value, found);
        }
        String experimentId = text(found, experimentSlot, mapping.experiment(), "experiment");
        int experimentIndex = catalog.index(experimentId);
        Experiment experiment = experimentIndex < 0 ? null : experiments[experimentIndex];
        if (experiment == null) {
            throw new BadEventException(Reason.UNKNOWN_EXPERIMENT, "unknown experiment '" + clip(experimentId) + "'");
        }
        String arm = text(found, armSlot, mapping.arm(), "arm");
        int armIndex = catalog.arm(experimentIndex, arm);
        if (armIndex < 0) {
            throw new BadEventException(Reason.UNKNOWN_ARM, "experiment '" + experimentId + "' has no arm '" + clip(arm) + "'");
        }
        String unit = null;
        if (mapping.unit().isPresent()) {
            JsonNode u = PointerTrie.found(found, unitSlot);
            if (u.isTextual() && !isUnicode(u.textValue())) {
                throw new BadEventException(Reason.WRONG_TYPE, "unit at " + mapping.unit().get()
                        + " is not Unicode text: it holds an unpaired surrogate escape");
            }
            if (u.isTextual() || u.isIntegralNumber()) {
                unit = u.asText();
                if (unit.length() > MAX_UNIT_LENGTH) {
                    throw new BadEventException(Reason.TOO_LARGE, "unit at " + mapping.unit().get() + " is " + unit.length()
                            + " characters, above " + MAX_UNIT_LENGTH);
                }
            } else if (!u.isMissingNode() && !u.isNull()) {
                throw new BadEventException(Reason.WRONG_TYPE, "unit at " + mapping.unit().get() + " must be text or an integer");
            }
        }
        if (unit == null && experiment.needsUnit()) {
            throw new BadEventException(Reason.MISSING_FIELD, "no unit at " + mapping.unit().map(Object::toString).orElse("(unmapped)")
                    + ": experiment '" + experimentId + "' has per-unit metrics");
        }
        // Read every metric first, so that a bad field refuses the whole event.
        int n = experiment.metrics().size();
        boolean[] present = new boolean[n];
        boolean[] success = new boolean[n];
        double[] numbers = new double[n];
        double[] denominators = null;
        for (int i = 0; i < n; i++) {
            Metric m = experiment.metrics().get(i);
            JsonNode field = PointerTrie.found(found, m.slot());
            if (m.source() instanceof MetricSource.Ratio r) {
                JsonNode below = PointerTrie.found(found, m.denominatorSlot());
                boolean hasAbove = !field.isMissingNode() && !field.isNull();
                boolean hasBelow = !below.isMissingNode() && !below.isNull();
                if (!hasAbove && !hasBelow) {
                    continue;
                }
                present[i] = true;
                if (denominators == null) {
                    denominators = new double[n];
                }
                numbers[i] = hasAbove ? number(m, field, r.field(), r.range()) : 0;
                denominators[i] = hasBelow ? number(m, below, r.denominator(), r.denominatorRange()) : 0;
                continue;
            }
            if (field.isMissingNode() || field.isNull()) {
                continue;
            }
            present[i] = true;
            if (m.source() instanceof MetricSource.Counted c) {
                if (field.isContainerNode()) {
                    throw new BadEventException(Reason.WRONG_TYPE, m.name() + ": " + m.source().field()
                            + " must be a number, text or true/false, not " + (field.isArray() ? "a list" : "an object"));
                }
                if (c.countsIf().needsNumber() && !field.isNumber()) {
                    throw new BadEventException(Reason.WRONG_TYPE, m.name() + ": " + m.source().field() + " must be a number");
                }
                if (field.isNumber() && !Double.isFinite(field.doubleValue())) {
                    throw new BadEventException(Reason.NOT_FINITE, m.name() + ": " + m.source().field() + " is not finite");
                }
                success[i] = c.countsIf().test(field);
            } else {
                numbers[i] = number(m, field, m.source().field(), ((MetricSource.Value) m.source()).range());
            }
        }
        sink.exposure(experimentIndex, armIndex, unit);
        for (int i = 0; i < n; i++) {
            if (!present[i]) {
                continue;
            }
            Metric m = experiment.metrics().get(i);
            if (m.source() instanceof MetricSource.Counted) {
                sink.outcome(experimentIndex, armIndex, unit, i, success[i]);
            } else if (m.source() instanceof MetricSource.Ratio) {
                sink.ratio(experimentIndex, armIndex, unit, i, numbers[i], denominators[i]);
            } else {
                sink.value(experimentIndex, armIndex, unit, i, numbers[i]);
            }
        }
    }

    private Feed feed() {
        Thread current = Thread.currentThread();
        Feed f = first;
        if (f != null && f.owner == current) {
            return f;
        }
        f = feeds.get();
        if (first == null) {
            first = f;
        }
        return f;
    }

    /**
     * Reads the event with a parser of its own, which checks all of it: finds what the pointers find,
     * or refuses the event with the reason and the parser's message. Every event the fast path of
     * {@link Feed} does not accept comes here, so what is refused, and how, is this method's.
     */
    private void readAlone(byte[] value, JsonNode[] found) throws BadEventException {
        JsonToken first;
        JsonToken trailing;
        try (JsonParser p = json.createParser(value)) {
            first = p.nextToken();
            if (first == null) {                          // nothing but whitespace
                throw new BadEventException(Reason.NOT_JSON, "an event must be a JSON object");
            }
            pointers.read(p, first, found);
            trailing = p.nextToken();
        } catch (IOException | RuntimeException e) {
            throw new BadEventException(Reason.NOT_JSON, "not readable JSON: " + firstLine(e.getMessage()));
        }
        if (trailing != null) {
            // Worded as ObjectMapper words it (DeserializationFeature.FAIL_ON_TRAILING_TOKENS), as
            // this reader did when it read events as trees.
            throw new BadEventException(Reason.NOT_JSON, "not readable JSON: " + clip("Trailing token (of type "
                    + trailing + ") found after value (bound as `" + JsonNode.class.getName()
                    + "`): not allowed as per `DeserializationFeature.FAIL_ON_TRAILING_TOKENS`"));
        }
        if (first != JsonToken.START_OBJECT) {
            throw new BadEventException(Reason.NOT_JSON, "an event must be a JSON object");
        }
    }

    /**
     * One thread's non-blocking parser, fed event after event. A parser of Jackson's costs more to make
     * than a small event costs to read (some 700 bytes of parser, contexts and buffers); this one is
     * made once per {@link #RENEW_EVERY} events. It reads an event only when the event is one object
     * followed by nothing but whitespace, and says so; on anything else (a scalar, an object cut
     * short, a token after the object, a byte order mark, any error) it says no and starts afresh,
     * and the event is read again by {@link #readAlone}, which decides. So the fast path accepts
     * exactly what {@code readAlone} accepts and finds the same values: both are Jackson's parsers with
     * the same factory and limits, and the same pointer walk.
     */
    private final class Feed {
        private final Thread owner = Thread.currentThread();
        private JsonParser parser;
        private ByteArrayFeeder feeder;
        /** Bytes fed before the current event: the parser counts its offsets from its first input. */
        private long fedBefore;
        private int events;

        boolean read(byte[] value, JsonNode[] found) {
            if (value.length == 0 || value[0] == (byte) 0xEF) {       // nothing, or a byte order mark: readAlone
                return false;
            }
            try {
                if (parser == null || events >= RENEW_EVERY) {
                    renew();
                }
                feeder.feedInput(value, 0, value.length);
                JsonToken first = parser.nextToken();
                if (first != JsonToken.START_OBJECT) {
                    renew();
                    return false;
                }
                pointers.read(parser, first, found);
                if (!parser.getParsingContext().inRoot()) {
                    // The input ran out inside the object (the walk took "not available" for its end).
                    renew();
                    return false;
                }
                // After the object's last brace: only whitespace (RFC 8259 §2) may follow.
                long end = parser.currentLocation().getByteOffset() - fedBefore;
                if (end < 0 || end > value.length || !whitespace(value, (int) end)
                        || parser.nextToken() != JsonToken.NOT_AVAILABLE) {
                    renew();
                    return false;
                }
                fedBefore += value.length;
                events++;
                return true;
            } catch (IOException | RuntimeException e) {
                renew();
                return false;
            }
        }

        private static boolean whitespace(byte[] value, int from) {
            for (int i = from; i < value.length; i++) {
                byte b = value[i];
                if (b != ' ' && b != '\t' && b != '\n' && b != '\r') {
                    return false;
                }
            }
            return true;
        }

        private void renew() {
            if (parser != null) {
                try {
                    parser.close();
                } catch (IOException ignored) {
                    // nothing to release but buffers
                }
            }
            try {
                parser = json.createNonBlockingByteArrayParser();
            } catch (IOException e) {
                throw new java.io.UncheckedIOException(e);
            }
            feeder = (ByteArrayFeeder) parser.getNonBlockingInputFeeder();
            fedBefore = 0;
            events = 0;
        }
    }

    /** The number a mean, total or ratio part reads: finite, within the tallies' magnitude and its range. */
    private static double number(Metric m, JsonNode field, JsonPointer pointer, ValueRange range) throws BadEventException {
        if (!field.isNumber()) {
            throw new BadEventException(Reason.WRONG_TYPE, m.name() + ": " + pointer + " must be a number");
        }
        double v = field.doubleValue();
        if (!Double.isFinite(v)) {
            throw new BadEventException(Reason.NOT_FINITE, m.name() + ": " + pointer + " is not finite");
        }
        if (Math.abs(v) > MAX_MAGNITUDE) {
            throw new BadEventException(Reason.FORBIDDEN_VALUE, m.name() + ": " + pointer + " is " + v
                    + ", beyond ±" + MAX_MAGNITUDE + ", the largest magnitude the tallies take");
        }
        if (!range.contains(v)) {
            throw new BadEventException(Reason.FORBIDDEN_VALUE, m.name() + ": " + pointer + " is " + v
                    + ", outside its range " + range);
        }
        return v;
    }

    private static String text(JsonNode[] found, int slot, JsonPointer pointer, String what) throws BadEventException {
        JsonNode node = PointerTrie.found(found, slot);
        if (node.isMissingNode() || node.isNull()) {
            throw new BadEventException(Reason.MISSING_FIELD, "no " + what + " at " + pointer);
        }
        if (!node.isTextual()) {
            throw new BadEventException(Reason.WRONG_TYPE, what + " at " + pointer + " must be text");
        }
        if (!isUnicode(node.textValue())) {
            throw new BadEventException(Reason.WRONG_TYPE, what + " at " + pointer
                    + " is not Unicode text: it holds an unpaired surrogate escape");
        }
        return node.textValue();
    }

    /**
     * Whether {@code value} is well-formed UTF-8. Jackson's own decoding lets overlong forms, encoded
     * surrogates and code points above U+10FFFF through, so the JDK's strict decoder checks the bytes
     * from the first non-ASCII one on; an all-ASCII event, the usual case, costs one pass, eight
     * bytes at a time.
     */
    private static boolean wellFormedUtf8(byte[] value) {
        int first = 0;
        for (int last = value.length - Long.BYTES; first <= last; first += Long.BYTES) {
            if (((long) EIGHT_BYTES.get(value, first) & HIGH_BITS) != 0) {
                break;
            }
        }
        while (first < value.length && value[first] >= 0) {
            first++;
        }
        if (first == value.length) {
            return true;
        }
        try {
            StandardCharsets.UTF_8.newDecoder().decode(ByteBuffer.wrap(value, first, value.length - first));
            return true;
        } catch (CharacterCodingException e) {
            return false;
        }
    }

    /** Whether every surrogate in {@code s} is half of a pair. */
    private static boolean isUnicode(String s) {
        for (int i = 0; i < s.length(); i++) {
            char c = s.charAt(i);
            if (Character.isHighSurrogate(c) && i + 1 < s.length() && Character.isLowSurrogate(s.charAt(i + 1))) {
                i++;
            } else if (Character.isSurrogate(c)) {
                return false;
            }
        }
        return true;
    }

    private static String clip(String s) {
        return s.length() <= 80 ? s : s.substring(0, 80) + "…";
    }

    private static String firstLine(String message) {
        if (message == null) {
            return "";
        }
        int nl = message.indexOf('\n');
        return clip(nl < 0 ? message : message.substring(0, nl));
    }
}
