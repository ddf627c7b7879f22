package dev.interim.stream;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.experiment.Decision;
import dev.interim.sequential.GroupSequentialDesign;
import dev.interim.sequential.SequentialMonitor;
import dev.interim.sequential.SpendingFunction;
import dev.interim.stats.Alternative;
import java.util.List;
import org.junit.jupiter.api.Test;

/** The look-history record round-trips the monitor's state exactly; version-1 records still read. */
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
        StateCodec.History h = StateCodec.history(StateCodec.history(live.snapshot(), Decision.HELD));
        assertThat(h.decision()).isEqualTo(Decision.HELD);
        SequentialMonitor restored = SequentialMonitor.restore(design, h.snapshot());
        assertThat(restored.lastLook()).isEqualTo(live.lastLook());
        assertThat(restored.lookAt(0.3)).isEqualTo(live.lookAt(0.3));
    }

    @Test
    void versionOneRecordsOfFractionsStillRead() {
        byte[] v1 = "{\"v\":1,\"decision\":\"CONTINUE\",\"fractions\":[0.1,0.2]}".getBytes();
        StateCodec.History h = StateCodec.history(v1);
        assertThat(h.fractions()).isEqualTo(List.of(0.1, 0.2));
        assertThat(h.snapshot()).isNull();
    }
}
