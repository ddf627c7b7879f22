package dev.interim.simulate;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import dev.interim.experiment.Worse;
import dev.interim.sequential.Fractions;
import dev.interim.sequential.Planning;
import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * Which effects are simulated, and in which units. The reference drift without a plan is
 * z_{α'} + z_{0.90}, the drift a single-look test needs for 90% power (common practice). The standard
 * normal quantiles used, to 6 decimals (from memory; the first test checks them against Apache Commons
 * Math 3.6.1 NormalDistribution): z_{0.975} = 1.959964, z_{0.99} = 2.326348, z_{0.90} = 1.281552.
 */
class EffectsTest {

    @Test
    void theQuantilesUsedHereAreTheStandardNormalOnes() {
        // reference library: Apache Commons Math 3.6.1 NormalDistribution
        org.apache.commons.math3.distribution.NormalDistribution normal =
                new org.apache.commons.math3.distribution.NormalDistribution();
        assertThat(normal.inverseCumulativeProbability(0.975)).isCloseTo(1.959964, within(5e-7));
        assertThat(normal.inverseCumulativeProbability(0.99)).isCloseTo(2.326348, within(5e-7));
        assertThat(normal.inverseCumulativeProbability(0.90)).isCloseTo(1.281552, within(5e-7));
    }

    @Test
    void defaultsAreTheNullAndHalfOneAndOneAndAHalfReferenceDriftsTheWayTheTestWatches() {
        // Two-sided at 0.05 (0.025 a side), worse lower: benefit is positive.
        SimulatedComparison primary = Designs.comparison(Designs.twoSided(0.05, "obf"), 4);
        List<SimulatedEffect> effects = SimulatedEffect.defaults(primary);
        double reference = 1.959964 + 1.281552;
        double[] multiples = {0, 0.5, 1, 1.5};
        assertThat(effects).hasSize(4);
        for (int i = 0; i < 4; i++) {
            assertThat(effects.get(i).drift()).isCloseTo(multiples[i] * reference, within(4e-6)); // quantiles to 6 decimals
        }
        assertThat(effects).extracting(SimulatedEffect::direction).containsExactly("none", "benefit", "benefit", "benefit");
        // A guardrail at 0.01 whose worse is lower watches for negative effects: harm.
        SimulatedComparison guardrail = Designs.comparison(Designs.guardrail(Worse.LOWER, 0.01, "obf"), 4);
        assertThat(guardrail.referenceDrift()).isCloseTo(-(2.326348 + 1.281552), within(1e-5));
        assertThat(SimulatedEffect.defaults(guardrail).get(2).direction()).isEqualTo("harm");
    }

    @Test
    void thePlannedEffectOfAPoweredHorizonIsItsPlannedDrift() {
        // The daemon plans I_max = (eta/delta)^2 with eta the drift for the configured power at the planned
        // looks (Horizon.Powered; Jennison & Turnbull 2000, section 2.4): the configured effect is that drift.
        SimulatedComparison c = Designs.comparison(Designs.powered(0.025, 0.9, -0.5, 4, null), 10);
        double planned = Planning.driftForPower(c.design(), Fractions.equallySpaced(4), 0.9);
        List<SimulatedEffect> given = SimulatedEffect.given(c, new double[] {-0.5, -0.25, 0}, EffectUnit.METRIC);
        assertThat(given).hasSize(3); // 0 is first and counted once
        assertThat(given.get(0).isNull()).isTrue();
        assertThat(given.get(1).drift()).isCloseTo(-planned, within(1e-9));
        assertThat(given.get(2).drift()).isCloseTo(-planned / 2, within(1e-9));
        assertThat(given.get(1).inMetricUnits()).isEqualTo(-0.5);
        assertThat(SimulatedEffect.defaults(c)).extracting(SimulatedEffect::inMetricUnits)
                .containsExactly(0.0, -0.25, -0.5, -0.75);
    }

    @Test
    void effectsInMetricUnitsNeedAPoweredHorizon() {
        SimulatedComparison c = Designs.comparison(Designs.twoSided(0.05, "obf"), 4);
        assertThatThrownBy(() -> SimulatedEffect.given(c, new double[] {0.01}, EffectUnit.METRIC))
                .isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("max_per_arm").hasMessageContaining("--effect-unit drift");
        assertThat(SimulatedEffect.given(c, new double[] {1, -0.0, 1}, EffectUnit.DRIFT))
                .extracting(SimulatedEffect::drift).containsExactly(0.0, 1.0);
    }

    @Test
    void looksMustEndAtThePlannedMaximum() {
        assertThatThrownBy(() -> SimulatedComparison.validate(new double[] {0.5, 0.9}))
                .hasMessageContaining("fraction 1");
        assertThatThrownBy(() -> SimulatedComparison.validate(new double[] {0.5, 0.4, 1}))
                .hasMessageContaining("increase");
    }
}
