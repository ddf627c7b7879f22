package dev.interim.sequential;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import dev.interim.stats.Alternative;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * Looks as live data produce them: unplanned, repeated, tiny, past the plan. None may give NaN or an
 * exception, and α already spent is never given back.
 */
class SequentialMonitorEdgeCaseTest {
    private static final GroupSequentialDesign OBF = GroupSequentialDesign.spending(0.05, Alternative.TWO_SIDED,
            SpendingFunction.parse("obf"));

    @Test
    void infiniteBoundariesNeitherRejectNorStopForFutilityWhateverTheStatistic() {
        // Common practice: a boundary at infinity (nothing spent yet, or no futility planned) stops
        // nothing. A one-sided guardrail once stopped for futility on an infinite statistic.
        double inf = Double.POSITIVE_INFINITY;
        for (Alternative alternative : Alternative.values()) {
            Look open = new Look(3, 0.2, inf, -inf, alternative, 0, 0, 0, Look.Stage.INTERIM);
            for (double z : new double[] {-inf, -1e300, 0, 1e300, inf}) {
                assertThat(open.rejects(z)).as("%s rejects %s", alternative, z).isFalse();
                assertThat(open.futile(z)).as("%s futile at %s", alternative, z).isFalse();
            }
        }
        Look lessNoFutility = new Look(3, 0.2, inf, -3, Alternative.LESS, 0.001, 0.001, 0, Look.Stage.INTERIM);
        assertThat(lessNoFutility.futile(inf)).isFalse();
        assertThat(lessNoFutility.rejects(-3.5)).isTrue();
        Look greaterNoFutility = new Look(3, 0.2, 3, -inf, Alternative.GREATER, 0.001, 0.001, 0, Look.Stage.INTERIM);
        assertThat(greaterNoFutility.futile(-inf)).isFalse();
        assertThat(greaterNoFutility.rejects(3.5)).isTrue();
        // With futility planned, a finite futility boundary still stops.
        Look greaterWithFutility = new Look(3, 0.2, 3, -1, Alternative.GREATER, 0.001, 0.001, 0.01, Look.Stage.INTERIM);
        assertThat(greaterWithFutility.futile(-1.5)).isTrue();
    }

    @Test
    void aLookWithoutNewInformationSpendsNothingAndKeepsTheBoundaries() {
        SequentialMonitor m = OBF.monitor();
        Look first = m.lookAt(0.4);
        Look repeated = m.lookAt(0.4);
        Look lower = m.lookAt(0.35);          // information estimated lower than before
        Look almost = m.lookAt(0.4 * (1 + 1e-14));
        for (Look look : List.of(repeated, lower, almost)) {
            assertThat(look.informationAdded()).isFalse();
            assertThat(look.alphaIncrement()).isZero();
            assertThat(look.alphaSpent()).isEqualTo(first.alphaSpent());
            assertThat(look.upper()).isEqualTo(first.upper());
            assertThat(look.fraction()).isEqualTo(0.4);
        }
        assertThat(almost.number()).isEqualTo(4);
        Look next = m.lookAt(0.6);
        assertThat(next.informationAdded()).isTrue();
        // Same boundary as if the empty looks had never happened (they add nothing).
        assertThat(next.upper()).isCloseTo(OBF.looksAt(0.4, 0.6)[1].upper(), within(1e-12));
    }

    @Test
    void tinyIncrementsGiveFiniteOrInfiniteButNeverNaNBoundaries() {
        SequentialMonitor m = OBF.monitor();
        double t = 1e-6;
        double previousSpent = 0;
        for (int i = 0; i < 2000; i++) {
            Look look = m.lookAt(t);
            assertThat(look.upper()).isNotNaN();
            assertThat(look.lower()).isNotNaN();
            assertThat(look.alphaSpent()).isGreaterThanOrEqualTo(previousSpent).isLessThanOrEqualTo(0.05);
            previousSpent = look.alphaSpent();
            t *= 1 + (i % 3 == 0 ? 1e-9 : 0.01);
        }
    }

    @Test
    void aVeryEarlyObrienFlemingLookHasNoAlphaToSpendAndAnInfiniteBoundary() {
        Look look = OBF.monitor().lookAt(1e-4);
        assertThat(look.alphaSpent()).isZero();
        assertThat(look.upper()).isEqualTo(Double.POSITIVE_INFINITY);
        assertThat(look.lower()).isEqualTo(Double.NEGATIVE_INFINITY);
        assertThat(look.rejects(50)).isFalse();
    }

    @Test
    void theFirstLookAtOrPastThePlanSpendsAllThatIsLeftAndLaterLooksHaveNone() {
        SequentialMonitor m = OBF.monitor();
        m.lookAt(0.5);
        Look overrun = m.lookAt(1.3);
        assertThat(overrun.last()).isTrue();
        assertThat(overrun.alphaSpent()).isEqualTo(0.05);
        assertThat(overrun.upper()).isFinite();
        Look after = m.lookAt(1.6);
        assertThat(after.last()).isTrue();
        assertThat(after.alphaIncrement()).isZero();
        assertThat(after.upper()).isEqualTo(Double.POSITIVE_INFINITY);
        assertThat(after.alphaSpent()).isEqualTo(0.05);
        // The overrun look's boundary spends exactly the remainder (recomputed on a finer grid).
        Look half = OBF.looksAt(0.5)[0];
        CrossingProbabilities p = CrossingProbabilities.of(new double[] {0.5, 1.3},
                new double[] {half.upper(), overrun.upper()}, new double[] {half.lower(), overrun.lower()}, 0, 64);
        assertThat(p.totalUpper() + p.totalLower()).isCloseTo(0.05, within(1e-6));
    }

    @Test
    void replayRebuildsExactlyTheSameState() {
        double[] seen = {0.1, 0.1, 0.23, 0.2300001, 0.5, 0.51, 0.9};
        SequentialMonitor live = OBF.monitor();
        List<Look> looks = new ArrayList<>();
        for (double t : seen) {
            looks.add(live.lookAt(t));
        }
        SequentialMonitor restored = SequentialMonitor.replay(OBF, seen);
        assertThat(restored.lastLook()).isEqualTo(looks.get(looks.size() - 1));
        assertThat(restored.lookAt(0.97)).isEqualTo(live.lookAt(0.97));
    }

    /**
     * A snapshot (a few kilobytes, whatever the number of looks) restores a monitor that goes on
     * exactly as the original: same boundaries, same α, bit for bit. This is what a restarted daemon
     * keeps instead of every fraction it ever saw.
     */
    @Test
    void aSnapshotRestoresTheMonitorExactly() {
        GroupSequentialDesign design = GroupSequentialDesign.spending(0.025, Alternative.GREATER, SpendingFunction.parse("hsd:-2"))
                .withFutility(new Futility(0.1, SpendingFunction.parse("obf"), 3));
        SequentialMonitor live = design.monitor();
        for (int k = 1; k <= 300; k++) {
            live.lookAt(k / 400.0);
        }
        SequentialMonitor restored = SequentialMonitor.restore(design, live.snapshot());
        assertThat(restored.lastLook()).isEqualTo(live.lastLook());
        for (int k = 301; k <= 420; k++) {
            assertThat(restored.lookAt(k / 400.0)).isEqualTo(live.lookAt(k / 400.0));
        }
        assertThat(live.snapshot().nullState().length).as("state size does not grow with looks").isLessThan(4000);
    }

    @Test
    void aLessDesignIsTheMirrorImageOfAGreaterOne() {
        SpendingFunction f = SpendingFunction.parse("hsd:-2");
        Look[] greater = GroupSequentialDesign.spending(0.025, Alternative.GREATER, f).looksAt(0.3, 0.7, 1);
        Look[] less = GroupSequentialDesign.spending(0.025, Alternative.LESS, f).looksAt(0.3, 0.7, 1);
        for (int i = 0; i < 3; i++) {
            assertThat(less[i].lower()).isEqualTo(-greater[i].upper());
            assertThat(less[i].upper()).isEqualTo(Double.POSITIVE_INFINITY);
            assertThat(less[i].rejects(less[i].lower() - 1e-9)).isTrue();
            assertThat(less[i].rejects(-less[i].lower())).isFalse();
        }
    }

    @ParameterizedTest
    @ValueSource(doubles = {0, -0.1, Double.NaN, Double.POSITIVE_INFINITY})
    void anImpossibleFractionIsRefusedWithAClearMessage(double t) {
        assertThatThrownBy(() -> OBF.monitor().lookAt(t))
                .isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("information fraction must be positive and finite");
    }

    @Test
    void designsRefuseImpossibleSettings() {
        assertThatThrownBy(() -> GroupSequentialDesign.spending(1.2, Alternative.TWO_SIDED, SpendingFunction.parse("obf")))
                .hasMessageContaining("alpha must lie strictly between 0 and 1");
        assertThatThrownBy(() -> OBF.withFutility(new Futility(0.1, SpendingFunction.parse("obf"), 3)))
                .hasMessageContaining("one-sided");
        assertThatThrownBy(() -> GroupSequentialDesign.classic(0.05, Alternative.TWO_SIDED,
                ClassicBoundary.Shape.POCOCK, new double[] {0.5, 0.8}))
                .hasMessageContaining("must end at 1");
        assertThatThrownBy(() -> Fractions.validate(new double[] {0.5, 0.4, 1}))
                .hasMessageContaining("must increase");
    }
}
