package dev.interim.stream;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.interim.experiment.Decision;
import dev.interim.sequential.Look;
import dev.interim.sequential.SequentialMonitor;
import dev.interim.stats.Alternative;
import dev.interim.experiment.Tally;
import dev.interim.stats.Moments;
import dev.interim.stats.ProportionCounts;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;

/**
 * The JSON of the daemon's state topics: partial tallies, unit state and look history. Small,
 * explicit and versioned by a field {@code "v"} so that a later layout can still read these.
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
        if (tally instanceof Tally.Mean m) {
            Moments x = m.moments();
            n.put("kind", "mean").put("count", x.count()).put("m2", x.sumSquaredDeviations());
            if (x.count() > 0) {
                n.put("mean", x.mean()).put("residual", x.meanResidual());
            }
        } else {
            ProportionCounts c = ((Tally.Rate) tally).counts();
            n.put("kind", "rate").put("successes", c.successes()).put("trials", c.trials());
        }
        return write(n);
    }

    static Tally partial(byte[] bytes) {
        JsonNode n = read(bytes);
        if ("mean".equals(n.path("kind").asText())) {
            long count = n.path("count").asLong();
            if (count == 0) {
                return new Tally.Mean(Moments.EMPTY);
            }
            return new Tally.Mean(new Moments(count, n.path("mean").asDouble(), n.path("m2").asDouble(),
                    n.path("residual").asDouble()));
        }
        return new Tally.Rate(new ProportionCounts(n.path("successes").asLong(), n.path("trials").asLong()));
    }

    static byte[] unit(PartitionState.UnitState u) {
        ObjectNode n = JSON.createObjectNode().put("v", 1).put("arm", u.arm);
        ObjectNode totals = n.putObject("totals");
        u.totals.forEach(totals::put);
        ArrayNode met = n.putArray("met");
        u.met.forEach(met::add);
        return write(n);
    }

    static PartitionState.UnitState unit(byte[] bytes) {
        JsonNode n = read(bytes);
        PartitionState.UnitState u = new PartitionState.UnitState(n.path("arm").asText());
        n.path("totals").fields().forEachRemaining(e -> u.totals.put(e.getKey(), e.getValue().asDouble()));
        n.path("met").forEach(m -> u.met.add(m.asText()));
        return u;
    }

    /**
     * The state of one comparison: its decision and its sequential monitor's snapshot (version 2), or,
     * in records of version 1, the fractions of every look, replayed on restore.
     */
    record History(List<Double> fractions, SequentialMonitor.Snapshot snapshot, Decision decision) {}

    static byte[] history(SequentialMonitor.Snapshot s, Decision decision) {
        ObjectNode n = JSON.createObjectNode().put("v", 2).put("decision", decision.name());
        n.put("alpha_spent", doubles(new double[] {s.alphaSpent(), s.betaSpent()}));
        n.put("null_state", doubles(s.nullState()));
        if (s.alternativeState() != null) {
            n.put("alternative_state", doubles(s.alternativeState()));
        }
        Look l = s.last();
        if (l != null) {
            n.put("last_look", l.number()).put("last_alternative", l.alternative().name())
                    .put("last_flags", (l.informationAdded() ? 1 : 0) + (l.last() ? 2 : 0))
                    .put("last_values", doubles(new double[] {l.fraction(), l.upper(), l.lower(), l.alphaSpent(),
                        l.alphaIncrement(), l.betaSpent()}));
        }
        return write(n);
    }

    static History history(byte[] bytes) {
        JsonNode n = read(bytes);
        Decision decision = Decision.valueOf(n.path("decision").asText(Decision.CONTINUE.name()));
        if (n.path("v").asInt() < 2) {
            List<Double> fractions = new ArrayList<>();
            n.path("fractions").forEach(f -> fractions.add(f.asDouble()));
            return new History(fractions, null, decision);
        }
        double[] spent = doubles(n.path("alpha_spent").asText());
        Look last = null;
        if (n.has("last_look")) {
            double[] v = doubles(n.path("last_values").asText());
            int flags = n.path("last_flags").asInt();
            last = new Look(n.path("last_look").asInt(), v[0], v[1], v[2], Alternative.valueOf(n.path("last_alternative").asText()),
                    v[3], v[4], v[5], (flags & 1) != 0, (flags & 2) != 0);
        }
        SequentialMonitor.Snapshot snapshot = new SequentialMonitor.Snapshot(last, spent[0], spent[1],
                doubles(n.path("null_state").asText()),
                n.has("alternative_state") ? doubles(n.path("alternative_state").asText()) : null);
        return new History(null, snapshot, decision);
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
