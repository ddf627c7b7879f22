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

    /**
     * One thread's events share one parser, fed event after event: each event must still be decided
     * on its own, as a reader that has seen nothing else decides it, whatever came before (an event cut
     * short, a token after the object, a byte order mark) and across the parser's renewals.
     */
    @Test
    void eventsReadOneAfterAnotherAreEachDecidedAsIfAlone() throws Exception {
        String ok = "{\"exp\":\"router-canary\",\"arm\":\"new\",\"user\":\"u1\",\"status\":503,\"ms\":120.5}";
        String bom = new String(new byte[] {(byte) 0xEF, (byte) 0xBB, (byte) 0xBF}, StandardCharsets.UTF_8);
        // Expected outcomes: RFC 8259 (§2 whitespace around a value, §8.1 a byte order mark may be
        // ignored), and this reader's rule of one object per event (common practice for event streams).
        java.util.LinkedHashMap<String, Reason> sequence = new java.util.LinkedHashMap<>();
        sequence.put(ok, null);
        sequence.put(ok.substring(0, ok.length() - 1), Reason.NOT_JSON);                      // cut before its brace
        sequence.put(ok.replace("120.5", "121.5"), null);
        sequence.put(ok.substring(0, ok.indexOf("120") + 2), Reason.NOT_JSON);                // cut inside a number
        sequence.put(ok.replace("120.5", "122.5") + " \t\r\n ", null);
        sequence.put(ok + " 12", Reason.NOT_JSON);
        sequence.put(ok + ok, Reason.NOT_JSON);
        sequence.put(" \n" + ok.replace("120.5", "123.5"), null);
        sequence.put(bom + ok.replace("120.5", "124.5"), null);
        sequence.put("", Reason.NOT_JSON);
        sequence.put("   ", Reason.NOT_JSON);
        sequence.put(ok + "}", Reason.NOT_JSON);
        sequence.put("[" + ok + "]", Reason.NOT_JSON);
        sequence.put(ok.replace("router-canary", "router-canar"), Reason.UNKNOWN_EXPERIMENT); // near a known id
        sequence.put(ok.replace("\"new\"", "\"ne\\u0077\""), null);                        // a known arm, escaped
        sequence.put(ok.replace("120.5", "125.5"), null);
        RecordingSink together = new RecordingSink(catalog);
        for (Map.Entry<String, Reason> e : sequence.entrySet()) {
            byte[] event = e.getKey().getBytes(StandardCharsets.UTF_8);
            RecordingSink alone = new RecordingSink(catalog);
            Reason aloneReason = outcome(new JsonEventReader(config().catalog()), event, alone);
            int before = together.calls.size();
            Reason togetherReason = outcome(reader, event, together);
            assertThat(togetherReason).as(e.getKey()).isEqualTo(e.getValue()).isEqualTo(aloneReason);
            assertThat(together.calls.subList(before, together.calls.size())).as(e.getKey()).isEqualTo(alone.calls);
        }
        // Past the parser's renewal (every 10,000 events): nothing lost or doubled.
        RecordingSink many = new RecordingSink(catalog);
        int n = 25_001;
        for (int i = 0; i < n; i++) {
            reader.read(ok.replace("u1", "u" + i).getBytes(StandardCharsets.UTF_8), many);
        }
        assertThat(many.calls.stream().filter(c -> c.startsWith("exposure")).count()).isEqualTo(n);
        assertThat(many.calls.get(many.calls.size() - 3)).isEqualTo("exposure router-canary new u" + (n - 1));
    }

    /**
     * The reason for the shared parser: a parser of its own per event costs some 700 bytes of parser,
     * contexts and buffers before the first byte is read (Jackson 2.21, measured here with the JDK's
     * per-thread allocation counter, a count of bytes and not a time). Reading through the shared one
     * must stay well below that, or every event has gone the slow way.
     */
    @Test
    void validEventsAreReadWithoutAParserOfTheirOwn() throws Exception {
        byte[] event = "{\"exp\":\"router-canary\",\"arm\":\"new\",\"user\":\"u1\",\"status\":503,\"ms\":120.5}"
                .getBytes(StandardCharsets.UTF_8);
        ObservationSink nothing = new ObservationSink() {
            @Override public void exposure(int experiment, int arm, String unit) {}
            @Override public void outcome(int experiment, int arm, String unit, int metric, boolean success) {}
            @Override public void value(int experiment, int arm, String unit, int metric, double value) {}
            @Override public void ratio(int experiment, int arm, String unit, int metric, double n, double d) {}
        };
        var threads = (com.sun.management.ThreadMXBean) java.lang.management.ManagementFactory.getThreadMXBean();
        long id = Thread.currentThread().getId();
        for (int i = 0; i < 5_000; i++) {
            reader.read(event, nothing);
        }
        long before = threads.getThreadAllocatedBytes(id);
        int n = 20_000;
        for (int i = 0; i < n; i++) {
            reader.read(event, nothing);
        }
        double perEvent = (threads.getThreadAllocatedBytes(id) - before) / (double) n;
        System.out.printf("JsonEventReaderTest: %.0f bytes allocated per event read%n", perEvent);
        assertThat(perEvent).isLessThan(600);
    }

    private static Reason outcome(JsonEventReader reader, byte[] event, ObservationSink sink) {
        try {
            reader.read(event, sink);
            return null;
        } catch (BadEventException e) {
            return e.reason();
        }
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
