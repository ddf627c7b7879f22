package dev.interim.stats;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import dev.interim.sequential.Planning;
import org.junit.jupiter.api.Test;

/**
 * The one probability-argument check: the bounds and the one message. Source: a probability lies in
 * [0, 1] (Kolmogorov's axioms); a significance level, a power or a planned rate strictly inside
 * (common practice: at 0 or 1 no test or plan exists). No statistical values here.
 */
class ProbabilitiesTest {
    @Test
    void anOpenCheckTakesWhatLiesStrictlyBetweenZeroAndOne() {
        assertThat(Probabilities.requireOpen(0.05, "alpha")).isEqualTo(0.05);
        assertThat(Probabilities.requireOpen(Math.ulp(0.0), "alpha")).isEqualTo(Math.ulp(0.0));
        for (double bad : new double[] {0, 1, -0.1, 1.5, Double.NaN, Double.POSITIVE_INFINITY}) {
            assertThatThrownBy(() -> Probabilities.requireOpen(bad, "alpha")).isInstanceOf(IllegalArgumentException.class)
                    .hasMessageStartingWith("alpha must lie strictly between 0 and 1, got ");
        }
        assertThatThrownBy(() -> Probabilities.requireOpen(1.5, "power")).hasMessage("power must lie strictly between 0 and 1, got 1.5");
        assertThatThrownBy(() -> Probabilities.requireOpen(2.0, "alpha")).hasMessage("alpha must lie strictly between 0 and 1, got 2");
        assertThatThrownBy(() -> Probabilities.requireOpen(Double.NaN, "level")).hasMessage("level must lie strictly between 0 and 1, got NaN");
    }

    @Test
    void aClosedCheckTakesZeroAndOne() {
        assertThat(Probabilities.requireClosed(0, "pValue")).isZero();
        assertThat(Probabilities.requireClosed(1, "pValue")).isEqualTo(1);
        assertThatThrownBy(() -> Probabilities.requireClosed(-0.5, "jitter")).hasMessage("jitter must lie between 0 and 1, got -0.5");
        assertThatThrownBy(() -> Probabilities.requireClosed(Double.NaN, "pValue")).hasMessage("pValue must lie between 0 and 1, got NaN");
    }

    @Test
    void everyLayerSaysTheSame() {
        TestResult r = TestResult.of("t", 2, 10, Alternative.TWO_SIDED, 1.5, 0.5);
        assertThatThrownBy(() -> r.reject(1.5)).hasMessage("alpha must lie strictly between 0 and 1, got 1.5");
        assertThatThrownBy(() -> Planning.driftForPower(null, new double[] {1}, 1.5))
                .hasMessage("power must lie strictly between 0 and 1, got 1.5");
    }
}
