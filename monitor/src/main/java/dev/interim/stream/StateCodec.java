package dev.interim.stream;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.interim.experiment.Decision;
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

    /** The look history of one comparison: its fractions in order and its decision. */
    record History(List<Double> fractions, Decision decision) {}

    static byte[] history(List<Double> fractions, Decision decision) {
        ObjectNode n = JSON.createObjectNode().put("v", 1).put("decision", decision.name());
        ArrayNode a = n.putArray("fractions");
        fractions.forEach(a::add);
        return write(n);
    }

    static History history(byte[] bytes) {
        JsonNode n = read(bytes);
        List<Double> fractions = new ArrayList<>();
        n.path("fractions").forEach(f -> fractions.add(f.asDouble()));
        return new History(fractions, Decision.valueOf(n.path("decision").asText(Decision.CONTINUE.name())));
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
