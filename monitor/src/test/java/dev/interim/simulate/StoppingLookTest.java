package dev.interim.simulate;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.interim.experiment.Worse;
import dev.interim.sequential.CrossingProbabilities;
import dev.interim.sequential.Look;
import java.util.List;
import org.apache.commons.math3.distribution.BinomialDistribution;
import org.junit.jupiter.api.Test;

/**
 * The distribution of the stopping look: look by look against the crossing probabilities of the
 * recursion (Jennison &amp; Turnbull 2000, ch. 19), within binomial bands; and the summaries
 * (quantiles with their order-statistic intervals, expectations with standard errors) on counts
 * small enough to work out by hand.
 */
class StoppingLookTest {

    @Test
    void runsStopAtEachLookAsOftenAsTheRecursionSays() throws InterruptedException {
        int runs = 100_000;
        double drift = 2.5;
        SimulatedComparison c = Designs.comparison(Designs.guardrail(Worse.HIGHER, 0.025, "obf"), 10);
        SimulationReport report = new Simulation(runs, 2, 2000L, new double[] {drift}, EffectUnit.DRIFT)
                .run(List.of(c), Progress.none());
        OperatingCharacteristics oc = report.comparisons().get(0).effects().get(1).simulated();
        Look[] looks = c.looks();
        double[] up = new double[looks.length];
        double[] low = new double[looks.length];
        for (int k = 0; k < looks.length; k++) {
            up[k] = looks[k].upper();
            low[k] = looks[k].lower();
        }
        CrossingProbabilities exact = CrossingProbabilities.of(c.fractions(), up, low, drift, 32);
        double remaining = 1;
        for (int k = 1; k <= looks.length; k++) {
            double p = k < looks.length ? exact.stopAt(k - 1) : remaining; // the final look takes the rest
            remaining -= exact.stopAt(k - 1);
            // A central band of Binomial(runs, p) at 1 - 0.001/10 per look: all ten hold with 99.9%.
            BinomialDistribution count = new BinomialDistribution(runs, Math.min(1, Math.max(0, p)));
            assertThat(oc.stoppedAt(k)).as("look %d, p = %s", k, p)
                    .isBetween((long) count.inverseCumulativeProbability(0.00005),
                            (long) count.inverseCumulativeProbability(0.99995));
        }
    }

    /** 10 runs: 1 stopped at look 1, 2 at look 2, 3 at look 3, 4 at look 4 (fractions 0.25 .. 1). */
    private static OperatingCharacteristics tenRuns() {
        long[][] counts = new long[Stop.values().length][4];
        counts[Stop.HARM.ordinal()] = new long[] {1, 2, 0, 0};
        counts[Stop.FUTILITY.ordinal()] = new long[] {0, 0, 3, 0};
        counts[Stop.COMPLETE.ordinal()] = new long[] {0, 0, 0, 4};
        return new OperatingCharacteristics(new double[] {0.25, 0.5, 0.75, 1}, counts);
    }

    @Test
    void summariesOfTenRunsWorkedOutByHand() {
        OperatingCharacteristics oc = tenRuns();
        assertThat(oc.runs()).isEqualTo(10);
        // P(harm) = 3/10, se = sqrt(0.3 * 0.7 / 10) = 0.144914 (binomial standard error, common practice).
        assertThat(oc.probabilities().get(Stop.HARM).value()).isEqualTo(0.3);
        assertThat(oc.probabilities().get(Stop.HARM).standardError()).isCloseTo(0.144914, within(1e-6));
        assertThat(oc.rejection().value()).isEqualTo(0.3);
        // E[t] = (0.25 + 2*0.5 + 3*0.75 + 4*1)/10 = 0.75; sample variance = sum n(t - 0.75)^2 / 9 = 0.625/9,
        // se = sqrt(0.625/9/10) = 0.0833333.
        assertThat(oc.expectedFraction().value()).isCloseTo(0.75, within(1e-12));
        assertThat(oc.expectedFraction().standardError()).isCloseTo(0.0833333, within(1e-6));
        // E[look] = (1 + 4 + 9 + 16)/10 = 3, se = 4 times that of E[t] (looks are 4t).
        assertThat(oc.expectedLook().value()).isCloseTo(3, within(1e-12));
        assertThat(oc.expectedLook().standardError()).isCloseTo(0.333333, within(1e-6));
        // Sorted looks: 1 2 2 3 3 3 4 4 4 4. Median: rank ceil(5) = 5 -> look 3; 10%: rank 1 -> look 1;
        // 90%: rank 9 -> look 4. Median interval: ranks 5 -/+ 1.96*sqrt(2.5) = 1.9 and 8.1 -> floor 1, ceil 9
        // -> looks 1 and 4.
        LookQuantile median = oc.quantile(0.5);
        assertThat(median).isEqualTo(new LookQuantile(0.5, 3, 1, 4));
        assertThat(oc.quantile(0.1).look()).isEqualTo(1);
        assertThat(oc.quantile(0.9).look()).isEqualTo(4);
        assertThat(oc.stoppedAt(Stop.FUTILITY, 3)).isEqualTo(3);
    }

    @Test
    void theTextHistogramMarksTheBusiestLookDarkestAndEmptyLooksBlank() {
        // Nine levels ".:-=+*#%@", level ceil(9 * count / most): 1, 2, 3, 4 runs of most 4 are levels
        // ceil(2.25) = 3, ceil(4.5) = 5, ceil(6.75) = 7 and 9.
        assertThat(ReportTable.histogram(tenRuns())).isEqualTo("-+#@");
        long[][] counts = new long[Stop.values().length][3];
        counts[Stop.COMPLETE.ordinal()] = new long[] {0, 0, 7};
        assertThat(ReportTable.histogram(new OperatingCharacteristics(new double[] {0.2, 0.6, 1}, counts))).isEqualTo("  @");
    }
}
