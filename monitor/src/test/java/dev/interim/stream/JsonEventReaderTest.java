package dev.interim.stream;

import dev.interim.events.Catalog;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.experiment.Tally;
import dev.interim.stream.BadEventException.Reason;
import java.nio.charset.StandardCharsets;
import java.util.HashMap;
import java.util.Map;
import org.junit.jupiter.api.Test;

/**
 * Events in, observations out: the configured pointers, per-unit bookkeeping, and a reason for
 * every refusal. The scenario is invented (a fictional parcel-routing canary). No statistical
 * values here: counts and sums are checked against the events written in the test.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class JsonEventReaderTest {
    static final String CONFIG = """
            kafka:
              input_topics: [routing.events]
              input_keyed_by_unit: true
            events:
              experiment: /exp
              arm: /arm
              unit: /user
            experiments:
              - id: router-canary
                assignment: event
                control: old
                treatments: [new]
                min_per_arm: 10
                metrics:
                  - name: failures
                    kind: event-rate
                    role: guardrail
                    worse: higher
                    field: /status
                    counts_if: {at_least: 500}
                    max_per_arm: 10000
                  - name: latency
                    kind: event-mean
                    role: guardrail
                    worse: higher
                    field: /ms
                    max_per_arm: 10000
                  - name: booked
                    kind: unit-rate
                    role: primary
                    worse: lower
                    field: /step
                    counts_if: {equals: booked}
                    max_per_arm: 10000
                  - name: spend
                    kind: unit-total
                    role: primary
                    worse: lower
                    field: /amount
                    max_per_arm: 10000
            """;

    static InterimConfig config() {
        return ConfigLoader.parseWithoutSecrets(CONFIG);
    }

    private final Catalog catalog = new Catalog(config().experiments().stream().map(e -> e.definition()).toList());
    private final JsonEventReader reader = new JsonEventReader(config().catalog());
    private final PartitionState state = new PartitionState("routing.events-0", catalog);

    private void read(String json) throws BadEventException {
        reader.read(json.getBytes(StandardCharsets.UTF_8), state);
    }

    private Map<String, Tally> tallies() {
        Map<String, Tally> out = new HashMap<>();
        state.partials().forEach(p -> out.put(p.key().arm() + "/" + p.key().metric(), p.tally()));
        return out;
    }

    @Test
    void eventsBecomeExposuresAndObservations() throws Exception {
        read("{\"exp\":\"router-canary\",\"arm\":\"new\",\"user\":\"u1\",\"status\":503,\"ms\":120.5}");
        read("{\"exp\":\"router-canary\",\"arm\":\"new\",\"user\":\"u1\",\"status\":200,\"ms\":80}");
        read("{\"exp\":\"router-canary\",\"arm\":\"new\",\"user\":\"u2\",\"step\":\"booked\",\"amount\":30}");
        read("{\"exp\":\"router-canary\",\"arm\":\"new\",\"user\":\"u2\",\"step\":\"booked\",\"amount\":12.5}");
        read("{\"exp\":\"router-canary\",\"arm\":\"old\",\"user\":42,\"status\":200}");
        Map<String, Tally> t = tallies();
        assertThat(t.get("new/").count()).as("units exposed").isEqualTo(2);
        assertThat(((Tally.Rate) t.get("new/failures")).counts().successes()).isEqualTo(1);
        assertThat(((Tally.Rate) t.get("new/failures")).counts().trials()).isEqualTo(2);
        assertThat(((Tally.Mean) t.get("new/latency")).moments().mean()).isCloseTo(100.25, within(1e-12));
        // Per unit: u2 booked (twice, counted once), u1 did not; totals 0 (u1) and 42.5 (u2).
        assertThat(((Tally.Rate) t.get("new/booked")).counts()).satisfies(c -> {
            assertThat(c.successes()).isEqualTo(1);
            assertThat(c.trials()).isEqualTo(2);
        });
        assertThat(((Tally.Mean) t.get("new/spend")).moments().count()).isEqualTo(2);
        assertThat(((Tally.Mean) t.get("new/spend")).moments().mean()).isCloseTo(21.25, within(1e-12));
        assertThat(t.get("old/").count()).isEqualTo(1);
    }

    @Test
    void unreadableEventsAreRefusedWithTheirReasonAndLeaveNothingBehind() {
        Map<String, Reason> cases = Map.ofEntries(
                Map.entry("not json at all", Reason.NOT_JSON),
                Map.entry("[1,2,3]", Reason.NOT_JSON),
                Map.entry("{\"exp\":\"router-canary\",\"arm\":\"new\",\"user\":\"u\",\"ms\":NaN}", Reason.NOT_JSON),
                Map.entry("{\"arm\":\"new\",\"user\":\"u\"}", Reason.MISSING_FIELD),
                Map.entry("{\"exp\":7,\"arm\":\"new\",\"user\":\"u\"}", Reason.WRONG_TYPE),
                Map.entry("{\"exp\":\"other\",\"arm\":\"new\",\"user\":\"u\"}", Reason.UNKNOWN_EXPERIMENT),
                Map.entry("{\"exp\":\"router-canary\",\"arm\":\"beta\",\"user\":\"u\"}", Reason.UNKNOWN_ARM),
                Map.entry("{\"exp\":\"router-canary\",\"arm\":\"new\"}", Reason.MISSING_FIELD),
                Map.entry("{\"exp\":\"router-canary\",\"arm\":\"new\",\"user\":\"u\",\"ms\":\"fast\"}", Reason.WRONG_TYPE),
                Map.entry("{\"exp\":\"router-canary\",\"arm\":\"new\",\"user\":\"u\",\"ms\":1e400}", Reason.NOT_FINITE),
                Map.entry("{\"exp\":\"router-canary\",\"arm\":\"new\",\"user\":\"u\",\"status\":\"500\"}", Reason.WRONG_TYPE));
        cases.forEach((json, reason) -> assertThatThrownBy(() -> read(json)).as(json)
                .isInstanceOfSatisfying(BadEventException.class, e -> assertThat(e.reason()).isEqualTo(reason)));
        assertThat(state.partials()).isEmpty();
        assertThat(state.unitCount()).isZero();
        byte[] huge = new byte[JsonEventReader.MAX_BYTES + 1];
        assertThatThrownBy(() -> reader.read(huge, state))
                .isInstanceOfSatisfying(BadEventException.class, e -> assertThat(e.reason()).isEqualTo(Reason.TOO_LARGE));
        String deep = "[".repeat(5000) + "]".repeat(5000);
        assertThatThrownBy(() -> read(deep))
                .isInstanceOfSatisfying(BadEventException.class, e -> assertThat(e.reason()).isEqualTo(Reason.NOT_JSON));
    }

    @Test
    void changedPartialsAndUnitsAreDrainedOnceAndRoundTripThroughTheirCodec() throws Exception {
        read("{\"exp\":\"router-canary\",\"arm\":\"new\",\"user\":\"u1\",\"status\":503,\"amount\":5}");
        var partials = state.drainChangedPartials();
        assertThat(partials).isNotEmpty();
        assertThat(state.drainChangedPartials()).isEmpty();
        var units = state.drainChangedUnits();
        assertThat(units).hasSize(1);
        PartitionState restored = new PartitionState("routing.events-0", catalog);
        for (var p : partials) {
            restored.restore(new PartitionState.Partial(p.key(), StateCodec.partial(StateCodec.partial(p.tally()))));
        }
        units.forEach((k, u) -> restored.restoreUnit(k, StateCodec.unit(StateCodec.unit(u))));
        // The same next event on the restored state gives the same tallies as on the original.
        String next = "{\"exp\":\"router-canary\",\"arm\":\"new\",\"user\":\"u1\",\"status\":200,\"amount\":7}";
        reader.read(next.getBytes(StandardCharsets.UTF_8), restored);
        read(next);
        Map<PartialKey, Tally> a = new HashMap<>();
        Map<PartialKey, Tally> b = new HashMap<>();
        state.partials().forEach(p -> a.put(p.key(), p.tally()));
        restored.partials().forEach(p -> b.put(p.key(), p.tally()));
        assertThat(b).isEqualTo(a);
    }
}
