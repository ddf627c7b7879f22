package dev.interim.simulate;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.interim.sequential.Fractions;
import dev.interim.sequential.GroupSequentialDesign;
import dev.interim.sequential.Planning;
import java.util.List;
import org.apache.commons.statistics.distribution.NormalDistribution;
import org.junit.jupiter.api.Test;

/**
 * Under an effect the simulated power and expected information agree with the recursion of
 * {@link Planning} (Jennison &amp; Turnbull 2000, ch. 19), itself held to the published tables. Each
 * comparison allows 4 Monte Carlo standard errors: a correct simulation is outside with probability
 * about 6e-5.
 */
class PowerMatchesPlanningTest {
    private static final int RUNS = 100_000;
    private static final double[] FIVE_LOOKS = Fractions.equallySpaced(5);

    @Test
    void twoSidedObrienFlemingTypeAtFiveLooksHasNinetyPercentPowerAtItsPlannedDrift() throws InterruptedException {
        SimulatedComparison c = Designs.comparison(Designs.twoSided(0.05, "obf"), 5);
        GroupSequentialDesign design = c.design();
        double drift = Planning.driftForPower(design, FIVE_LOOKS, 0.9);
        // The drift itself, against a published value: its square over the single-look drift's square is
        // the inflation factor, 1.026 for O'Brien-Fleming at K = 5, two-sided 0.05, power 0.9 (Jennison &
        // Turnbull 2000, ch. 2; REFERENCES.md, from memory, +-0.003; Lan-DeMets spending differs from the
        // classic boundary by less than that here).
        NormalDistribution normal = NormalDistribution.of(0, 1);
        double single = normal.inverseSurvivalProbability(0.025) + normal.inverseCumulativeProbability(0.9);
        assertThat(drift * drift / (single * single)).isCloseTo(1.026, within(0.005));

        SimulationReport report = new Simulation(RUNS, 2, 31L, new double[] {drift}, EffectUnit.DRIFT)
                .run(List.of(c), Progress.none());
        OperatingCharacteristics oc = report.comparisons().get(0).effects().get(1).simulated();
        Estimate power = oc.rejection();
        assertThat(power.value()).isCloseTo(Planning.power(design, FIVE_LOOKS, drift), within(4 * power.standardError()));
        assertThat(power.value()).isCloseTo(0.9, within(4 * power.standardError()));
        Estimate expected = oc.expectedFraction();
        assertThat(expected.value()).isCloseTo(Planning.expectedFraction(design, FIVE_LOOKS, drift),
                within(4 * expected.standardError()));
        // At a positive drift on a two-sided primary metric whose worse is lower, rejections are benefits.
        assertThat(oc.count(Stop.BENEFIT)).isGreaterThan(oc.count(Stop.HARM) * 1000);
    }

    @Test
    void aPoweredMetricWithFutilityHasItsPlannedPowerAtItsPlannedEffect() throws InterruptedException {
        // Planned for power 0.85 at +0.02 over 6 looks, futility by beta spending: at the planned looks and
        // the configured effect (given in the metric's units) the power is the configured power.
        SimulatedComparison c = Designs.comparison(Designs.powered(0.025, 0.85, 0.02, 6, "hsd:-2"), 6);
        SimulationReport report = new Simulation(RUNS, 2, 47L, new double[] {0.02}, EffectUnit.METRIC)
                .run(List.of(c), Progress.none());
        SimulationReport.EffectResult atEffect = report.comparisons().get(0).effects().get(1);
        assertThat(atEffect.effect().inMetricUnits()).isEqualTo(0.02);
        assertThat(atEffect.effect().drift()).isCloseTo(Planning.driftForPower(c.design(), Fractions.equallySpaced(6), 0.85),
                within(1e-9));
        Estimate power = atEffect.simulated().rejection();
        assertThat(power.value()).isCloseTo(0.85, within(4 * power.standardError()));
        // Under the null, non-binding futility only lowers the false-stop rate below alpha (Jennison &
        // Turnbull 2000, section 7.2), and most runs end for futility rather than completing.
        OperatingCharacteristics underNull = report.comparisons().get(0).effects().get(0).simulated();
        assertThat(underNull.rejection().value()).isLessThanOrEqualTo(0.025 + 4 * underNull.rejection().standardError());
        assertThat(underNull.count(Stop.COMPLETE)).isZero(); // the final futility boundary meets the efficacy one
        assertThat(underNull.count(Stop.FUTILITY)).isGreaterThan(RUNS * 9L / 10);
    }

    @Test
    void theRecursionColumnsAgreeWithTheSimulationForEveryDecision() throws InterruptedException {
        // A guardrail watching for lower values with Pocock-type spending at 8 looks, three effects.
        SimulatedComparison c = Designs.comparison(Designs.guardrail(dev.interim.experiment.Worse.LOWER, 0.05, "pocock"), 8);
        SimulationReport report = new Simulation(RUNS, 2, 5L, new double[] {-1.5, -3, 1}, EffectUnit.DRIFT)
                .run(List.of(c), Progress.none());
        for (SimulationReport.EffectResult e : report.comparisons().get(0).effects()) {
            for (Stop s : Stop.values()) {
                Estimate p = e.simulated().probabilities().get(s);
                double se = Math.max(p.standardError(), 1.0 / RUNS);
                assertThat(p.value()).as("%s at drift %s", s, e.effect().drift())
                        .isCloseTo(e.recursion().probabilities().get(s), within(4 * se + 1e-5));
            }
            Estimate t = e.simulated().expectedFraction();
            assertThat(t.value()).isCloseTo(e.recursion().expectedFraction(), within(4 * t.standardError() + 1e-5));
        }
        // Harm is lower values here: negative drifts harm, the positive one never rejects (one-sided).
        assertThat(report.comparisons().get(0).effects().get(1).effect().direction()).isEqualTo("harm");
        assertThat(report.comparisons().get(0).effects().get(3).simulated().count(Stop.BENEFIT)).isZero();
    }
}
