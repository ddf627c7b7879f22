package dev.interim.stream;

import dev.interim.experiment.RunMode;

import dev.interim.experiment.Sides;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import dev.interim.experiment.Comparison;
import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.Horizon;
import dev.interim.experiment.LookPoint;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.MetricKind;
import dev.interim.experiment.Role;
import dev.interim.experiment.StopAction;
import dev.interim.experiment.Tally;
import dev.interim.experiment.Worse;
import dev.interim.stats.ProportionCounts;
import dev.interim.sequential.GroupSequentialDesign;
import dev.interim.sequential.SequentialMonitor;
import dev.interim.sequential.SpendingFunction;
import dev.interim.stats.Alternative;
import java.nio.charset.StandardCharsets;
import java.util.List;
import java.util.Map;
import java.util.Set;
import org.junit.jupiter.api.Test;

/**
 * The look-history record round-trips the monitor's state exactly; version-1 records still read.
 * Unit records and their keys round-trip exactly too, and the JSON unit records of version 1, keyed
 * by the unit id as text, still read as the unit they were.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class StateCodecTest {

    @Test
    void aMonitorSnapshotRoundTripsBitForBit() {
        GroupSequentialDesign design = GroupSequentialDesign.spending(0.05, Alternative.TWO_SIDED, SpendingFunction.parse("obf"));
        SequentialMonitor live = design.monitor();
        for (int k = 1; k <= 50; k++) {
            live.lookAt(k / 1000.0);   // early looks: infinite boundaries must survive too
        }
        StateCodec.History h = StateCodec.history(StateCodec.history(live.snapshot(), Decision.HELD), "e", "a", "m");
        assertThat(h.decision()).isEqualTo(Decision.HELD);
        SequentialMonitor restored = SequentialMonitor.restore(design, h.snapshot());
        assertThat(restored.lastLook()).isEqualTo(live.lastLook());
        assertThat(restored.lookAt(0.3)).isEqualTo(live.lookAt(0.3));
    }

    @Test
    void versionOneRecordsOfFractionsStillRead() {
        byte[] v1 = "{\"v\":1,\"decision\":\"CONTINUE\",\"fractions\":[0.1,0.2]}".getBytes();
        StateCodec.History h = StateCodec.history(v1, "e", "a", "m");
        assertThat(h.fractions()).isEqualTo(List.of(0.1, 0.2));
        assertThat(h.snapshot()).isNull();
    }

    @Test
    void aComparisonsLastLookAndPointsRoundTripExactly() {
        MetricDefinition errors = new MetricDefinition("errors", MetricKind.EVENT_RATE, Role.GUARDRAIL, Worse.HIGHER,
                0.05, Sides.ONE, SpendingFunction.parse("obf"), null, new Horizon.MaxPerArm(40_000), null, StopAction.KILL);
        ExperimentMonitor m = new ExperimentMonitor(new ExperimentDefinition("checkout-canary", "stable",
                List.of("candidate"), null, java.time.Duration.ofMinutes(1), 50, RunMode.LIVE, 0.001, List.of(errors)), "run-7");
        java.util.SplittableRandom random = new java.util.SplittableRandom(9);
        long[] stable = new long[2];
        long[] candidate = new long[2];
        for (int look = 1; look <= 150; look++) {
            for (long[] arm : new long[][] {stable, candidate}) {
                for (int i = 0; i < 50; i++) {
                    arm[0] += random.nextDouble() < 0.02 ? 1 : 0;
                }
                arm[1] += 50;
            }
            m.look(java.time.Instant.parse("2026-04-01T00:00:00Z").plusSeconds(look),
                    Map.of("stable", stable[1], "candidate", candidate[1]),
                    Map.of("errors", Map.of("stable", new Tally.Rate(new ProportionCounts(stable[0], stable[1])),
                            "candidate", new Tally.Rate(new ProportionCounts(candidate[0], candidate[1])))));
        }
        Comparison c = m.comparison("errors", "candidate");
        List<LookPoint> points = c.points();
        StateCodec.History h = StateCodec.history(StateCodec.history(c.snapshot(), c.decision(), c.last(), points.size()),
                "checkout-canary", "candidate", "errors");
        assertThat(h.last()).isEqualTo(c.last());
        assertThat(h.points()).isEqualTo(points.size());
        // three blocks of 64, 64 and the rest; record equality compares doubles bit for bit (NaN, ±∞ included)
        List<LookPoint> back = new java.util.ArrayList<>();
        for (int block = 0; block * StateCodec.POINTS_PER_BLOCK < points.size(); block++) {
            back.addAll(StateCodec.points(StateCodec.points(points, block, points.size())));
        }
        assertThat(back).isEqualTo(points);
        assertThat(points.get(0).upper()).isInfinite();   // an early look: the boundary is infinite
    }

    @Test
    void whatOperatorsSetRoundTrips() {
        var held = new ExperimentMonitor.OperatorState("run-1", "incident 42", true);
        var free = new ExperimentMonitor.OperatorState("run-2", null, false);
        assertThat(StateCodec.operatorState(StateCodec.operatorState(held))).isEqualTo(held);
        assertThat(StateCodec.operatorState(StateCodec.operatorState(free))).isEqualTo(free);
        assertThatThrownBy(() -> StateCodec.operatorState("{\"v\":1}".getBytes(StandardCharsets.UTF_8)))
                .hasMessageContaining("run");
    }

    // ---- the units changelog ----------------------------------------------------------------------

    @Test
    void aUnitRecordRoundTripsBitForBit() {
        UnitState u = new UnitState("bold", Set.of("booked", "returned"),
                Map.of("spend", -0.1, "tiny", Double.MIN_VALUE, "huge", 1e300, "negativeZero", -0.0));
        UnitState back = StateCodec.unit(StateCodec.unit(u));
        // common practice: Double.equals compares the bits, so -0.0 and every last digit must survive
        assertThat(back).isEqualTo(u);
        UnitState bare = new UnitState("a", Set.of(), Map.of());
        assertThat(StateCodec.unit(StateCodec.unit(bare))).isEqualTo(bare);
    }

    @Test
    void aUnitRecordIsTheVersionByteTheArmAndTheNamedTotals() {
        byte[] record = StateCodec.unit(new UnitState("new", Set.of(), Map.of("spend", 42.5)));
        // the layout documented in StateCodec.unit: 1 version byte, 1 + 3 for "new", 1 for no met
        // metric, 1 for one total, then 1 + 5 for "spend" and 8 for its bits
        assertThat(record).hasSize(21);
        assertThat(record[0]).isEqualTo(StateCodec.UNIT_VERSION);
        assertThat(java.util.Arrays.copyOfRange(record, 13, 21))
                .isEqualTo(java.nio.ByteBuffer.allocate(8).putDouble(42.5).array());
    }

    @Test
    void aUnitKeyRoundTripsWhateverBytesItsHashHas() {
        // invented keys whose hash bytes are the separators themselves, and their complements
        for (UnitKey unit : List.of(
                new UnitKey("varrow-search", 0x1e1f1e1f1e1f1e1fL, 0x1f1e1f1e),
                new UnitKey("varrow-search", -1L, 0),
                UnitKey.of("h.maps_2", "ana"))) {
            byte[] key = StateCodec.unitKey("varrow.events-11", unit);
            byte[] value = StateCodec.unit(new UnitState("a", Set.of(), Map.of()));
            assertThat(StateCodec.unitKey(key, value)).isEqualTo(new StateCodec.UnitRecordKey("varrow.events-11", unit));
            // the layout documented in StateCodec.unitKey: source, 0x1e, experiment, 0x1f, 12 bytes
            assertThat(key).hasSize("varrow.events-11".length() + 1 + unit.experiment().length() + 1 + 12);
        }
    }

    @Test
    void versionOneUnitRecordsStillReadAsTheSameUnit() {
        String unit = "ana\u001e\u001f🦊";
        byte[] key = ("varrow.events-0\u001evarrow-search\u001f" + unit).getBytes(StandardCharsets.UTF_8);
        byte[] value = "{\"v\":1,\"arm\":\"old\",\"totals\":{\"spend\":42.5},\"met\":[\"booked\"]}"
                .getBytes(StandardCharsets.UTF_8);
        // the key of version 1 was the id as text: it is hashed to the key the unit has now
        assertThat(StateCodec.unitKey(key, value)).isEqualTo(
                new StateCodec.UnitRecordKey("varrow.events-0", UnitKey.of("varrow-search", unit)));
        assertThat(StateCodec.unit(value)).isEqualTo(
                new UnitState("old", Set.of("booked"), Map.of("spend", 42.5)));
    }

    @Test
    void aUnitRecordOfNoKnownVersionOrCutShortIsRefused() {
        byte[] good = StateCodec.unit(new UnitState("new", Set.of("booked"), Map.of("spend", 1.0)));
        assertThatThrownBy(() -> StateCodec.unit(new byte[] {9, 0, 0, 0})).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("version 9");
        for (int n = 0; n < good.length; n++) {
            byte[] cut = java.util.Arrays.copyOf(good, n);
            assertThatThrownBy(() -> StateCodec.unit(cut)).as("cut to %d bytes", n).isInstanceOf(IllegalArgumentException.class);
        }
        byte[] longer = java.util.Arrays.copyOf(good, good.length + 1);
        assertThatThrownBy(() -> StateCodec.unit(longer)).isInstanceOf(IllegalArgumentException.class);
        byte[] shortKey = "varrow.events-0\u001evarrow-search\u001fabc".getBytes(StandardCharsets.UTF_8);
        assertThatThrownBy(() -> StateCodec.unitKey(shortKey, good)).isInstanceOf(IllegalArgumentException.class);
        assertThatThrownBy(() -> StateCodec.unitKey("no separators".getBytes(StandardCharsets.UTF_8), good))
                .isInstanceOf(IllegalArgumentException.class);
    }
}
