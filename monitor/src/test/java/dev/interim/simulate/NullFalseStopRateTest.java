package dev.interim.simulate;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.experiment.Worse;
import java.util.List;
import org.apache.commons.math3.distribution.BinomialDistribution;
import org.junit.jupiter.api.Test;

/**
 * Under no effect a design built by α spending stops falsely in a share α of runs, however many
 * looks it takes (Lan &amp; DeMets 1983; that a level-α procedure rejects a true null in about α of
 * repetitions is common practice). The count of false stops in N runs of an exact level-α design is
 * Binomial(N, α); the band is its central 99.9% (Apache Commons Math 3.6.1), so a correct simulation
 * fails once in a thousand streams, and a design or a decision rule off by a few tenths of α does not
 * pass.
 */
class NullFalseStopRateTest {
    private static final int RUNS = 200_000;

    @Test
    void twoSidedObrienFlemingTypeStopsFalselyInAboutAlphaOfRuns() throws InterruptedException {
        assertFalseStopsWithinBand(Designs.comparison(Designs.twoSided(0.05, "obf"), 20), 0.05);
    }

    @Test
    void oneSidedPocockTypeGuardrailWatchingForLowerValuesStopsFalselyInAboutAlphaOfRuns() throws InterruptedException {
        // A "less" design: its rejection region is the mirror image, so a sign slip shows here.
        assertFalseStopsWithinBand(Designs.comparison(Designs.guardrail(Worse.LOWER, 0.01, "pocock"), 20), 0.01);
    }

    @Test
    void theMetricAlphaIsSharedOverTheTreatmentsByBonferroni() throws InterruptedException {
        // Three treatments: each comparison gets α/3 (Bonferroni, as the README documents).
        SimulatedComparison c = SimulatedComparison.of(Designs.experiment(3, Designs.twoSided(0.06, "hsd:-4")),
                name -> true, dev.interim.sequential.Fractions.equallySpaced(10)).get(0);
        assertThat(c.alpha()).isEqualTo(0.02);
        assertFalseStopsWithinBand(c, 0.02);
    }

    private static void assertFalseStopsWithinBand(SimulatedComparison c, double alpha) throws InterruptedException {
        SimulationReport report = new Simulation(RUNS, 2, 20_260_101L, new double[0], EffectUnit.DRIFT)
                .run(List.of(c), Progress.none());
        OperatingCharacteristics underNull = report.comparisons().get(0).effects().get(0).simulated();
        assertThat(report.comparisons().get(0).effects().get(0).effect().isNull()).isTrue();
        long falseStops = underNull.count(Stop.HARM) + underNull.count(Stop.BENEFIT);
        BinomialDistribution exact = new BinomialDistribution(RUNS, alpha);
        assertThat(falseStops).as("false stops of %d runs at alpha %s", RUNS, alpha)
                .isBetween((long) exact.inverseCumulativeProbability(0.0005),
                        (long) exact.inverseCumulativeProbability(0.9995));
        assertThat(underNull.count(Stop.COMPLETE) + falseStops).isEqualTo(RUNS); // no futility in these designs
    }
}
