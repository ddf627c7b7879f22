package dev.interim.simulate;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.interim.reference.ReferenceData;
import dev.interim.sequential.Fractions;
import dev.interim.sequential.Look;
import dev.interim.stats.Alternative;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

/**
 * The simulated paths, checked against a published value that needs no boundary code at all: a
 * fixed two-sided test at nominal 0.05 (|Z| ≥ 1.96) repeated at K equally spaced looks rejects a true
 * null with the probability tabulated by Armitage, McPherson &amp; Rowe (1969), also Jennison &amp;
 * Turnbull (2000) Table 1.1 (from memory; resource reference/repeated-testing.csv, 3 decimals). The
 * same runs through the real design stop falsely about α = 0.05 of the time: what we do is not naive
 * repeated testing.
 */
class NaiveRepeatedTestingTest {
    private static final int RUNS = 100_000;

    @Test
    void aFixedNominalTestRepeatedAtKLooksRejectsAsTabulatedAndTheDesignDoesNot() throws InterruptedException {
        for (Map<String, String> row : ReferenceData.rows("repeated-testing.csv")) {
            int looks = Integer.parseInt(row.get("looks"));
            double published = Double.parseDouble(row.get("error"));
            SimulatedComparison design = Designs.comparison(Designs.twoSided(0.05, "obf"), looks);
            SimulatedComparison naive = naive(design, 1.959963984540054);
            SimulationReport report = new Simulation(RUNS, 2, 1969L + looks, new double[0], EffectUnit.DRIFT)
                    .run(List.of(naive, design), Progress.none());
            Estimate naiveRate = report.comparisons().get(0).effects().get(0).simulated().rejection();
            Estimate designRate = report.comparisons().get(1).effects().get(0).simulated().rejection();
            // 4 Monte Carlo standard errors (at most 0.0055 here) plus the table's rounding (0.0005).
            assertThat(naiveRate.value()).as("naive repeated testing at K = %d", looks)
                    .isCloseTo(published, within(4 * naiveRate.standardError() + 0.0005));
            assertThat(designRate.value()).as("the O'Brien-Fleming-type design at K = %d", looks)
                    .isCloseTo(0.05, within(4 * Math.sqrt(0.05 * 0.95 / RUNS)));
            if (looks == 5) {
                assertThat(naiveRate.value()).isCloseTo(0.142, within(0.006)); // Jennison & Turnbull (2000) Table 1.1, K = 5 (from memory)
            }
        }
    }

    /** The comparison with its boundaries replaced by ±z at every look. */
    private static SimulatedComparison naive(SimulatedComparison c, double z) {
        double[] t = c.fractions();
        Look[] looks = new Look[t.length];
        for (int k = 0; k < t.length; k++) {
            looks[k] = new Look(k + 1, t[k], z, -z, Alternative.TWO_SIDED, Double.NaN, Double.NaN, 0,
                    k == t.length - 1 ? Look.Stage.FINAL : Look.Stage.INTERIM);
        }
        assertThat(t).containsExactly(Fractions.equallySpaced(t.length));
        return new SimulatedComparison(c.experiment(), c.arm(), c.treatments(), c.metric(), c.design(), t, looks,
                c.driftPerUnit());
    }
}
