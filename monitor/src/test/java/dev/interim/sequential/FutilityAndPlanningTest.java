package dev.interim.sequential;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.interim.stats.Alternative;
import dev.interim.reference.Draws;
import java.util.SplittableRandom;
import org.apache.commons.math3.distribution.NormalDistribution;
import org.junit.jupiter.api.Test;

/** Futility by β spending, power, sample sizes and expected sample sizes. */
class FutilityAndPlanningTest {
    private static final double[] FIVE = Fractions.equallySpaced(5);
    private static final NormalDistribution N = new NormalDistribution();

    /**
     * Single-look sample size per arm, n = 2σ²(z_{1−α/2} + z_{1−β})²/δ²: for δ/σ = 0.5, two-sided
     * α = 0.05 and power 0.8 it is 62.8, so 63 per arm (a textbook example; common practice). The
     * proportions formula (Fleiss, Levin & Paik 2003, §4.2, no continuity correction) gives 686 per
     * arm for 10% against 15% (from memory), recomputed here with Commons Math quantiles.
     */
    @Test
    void singleLookSampleSizesFollowTheTextbookFormulas() {
        GroupSequentialDesign design = GroupSequentialDesign.spending(0.05, Alternative.TWO_SIDED, SpendingFunction.parse("obf"));
        SampleSizePlan means = Planning.sampleSize(design, FIVE, 0.8, new Effect.MeanDifference(0.5, 1));
        assertThat(means.fixedPerArm()).isEqualTo(63);
        SampleSizePlan rates = Planning.sampleSize(design, FIVE, 0.8, new Effect.ProportionDifference(0.10, 0.05));
        double za = N.inverseCumulativeProbability(0.975);
        double zb = N.inverseCumulativeProbability(0.8);
        double k = za * Math.sqrt(2 * 0.125 * 0.875) + zb * Math.sqrt(0.1 * 0.9 + 0.15 * 0.85);
        assertThat(rates.fixedPerArm()).isEqualTo((long) Math.ceil(k * k / 0.0025)).isEqualTo(686);
        assertThat(means.maximumPerArm()).isGreaterThanOrEqualTo(means.fixedPerArm());
        assertThat(means.expectedUnderAlternative()).isLessThan(means.maximumPerArm());
    }

    /**
     * Seeded simulation of the design's sample paths under the planned effect: the share of paths
     * that reject estimates the power (0.9 asked), and the mean stopping fraction the expected
     * information. 200,000 paths: standard errors about 7e-4 and 6e-4; the checks allow 4 of them.
     * Common practice: Monte Carlo check of operating characteristics.
     */
    @Test
    void powerAndExpectedInformationMatchSimulation() {
        GroupSequentialDesign base = GroupSequentialDesign.spending(0.025, Alternative.GREATER, SpendingFunction.parse("hsd:-4"))
                .withFutility(new Futility(0.1, SpendingFunction.parse("hsd:-2"), 1));
        double drift = Planning.driftForPower(base, FIVE, 0.9);
        GroupSequentialDesign design = Planning.aimedAt(base, drift);
        Look[] looks = design.looksAt(FIVE);
        SplittableRandom random = new SplittableRandom(99);
        int paths = 200_000;
        int rejected = 0;
        double stoppedAt = 0;
        for (int p = 0; p < paths; p++) {
            double score = 0;
            double before = 0;
            for (Look look : looks) {
                score += drift * (look.fraction() - before) + Math.sqrt(look.fraction() - before) * Draws.gaussian(random);
                before = look.fraction();
                double z = score / Math.sqrt(look.fraction());
                if (look.rejects(z)) {
                    rejected++;
                    break;
                }
                if (look.futile(z) || look.last()) {
                    break;
                }
            }
            stoppedAt += before;
        }
        assertThat((double) rejected / paths).isCloseTo(0.9, within(4 * Math.sqrt(0.09 / paths)));
        assertThat(stoppedAt / paths).isCloseTo(Planning.expectedFraction(design, FIVE, drift), within(4 * 0.3 / Math.sqrt(paths)));
    }

    /**
     * Non-binding futility: the efficacy boundaries are those of the design without futility, and
     * under the alternative the futility boundaries spend exactly β(t) (recomputed on a finer grid).
     */
    @Test
    void futilityIsNonBindingAndSpendsBetaUnderTheAlternative() {
        SpendingFunction obf = SpendingFunction.parse("obf");
        GroupSequentialDesign efficacyOnly = GroupSequentialDesign.spending(0.025, Alternative.GREATER, obf);
        GroupSequentialDesign withFutility = Planning.aimedAt(efficacyOnly.withFutility(new Futility(0.1, obf, 1)),
                Planning.driftForPower(efficacyOnly.withFutility(new Futility(0.1, obf, 1)), FIVE, 0.9));
        Look[] plain = efficacyOnly.looksAt(FIVE);
        Look[] looks = withFutility.looksAt(FIVE);
        double[] up = new double[5];
        double[] low = new double[5];
        for (int i = 0; i < 5; i++) {
            assertThat(looks[i].upper()).isEqualTo(plain[i].upper());
            up[i] = looks[i].upper();
            low[i] = looks[i].lower();
        }
        assertThat(looks[4].lower()).isEqualTo(looks[4].upper());
        CrossingProbabilities underAlternative = CrossingProbabilities.of(FIVE, up, low, withFutility.futility().drift(), 64);
        double futile = 0;
        for (int i = 0; i < 4; i++) {
            futile += underAlternative.lower()[i];
            assertThat(futile).isCloseTo(obf.spent(FIVE[i], 0.1), within(1e-5));
        }
        assertThat(underAlternative.totalUpper()).as("power").isCloseTo(0.9, within(1e-5));
    }
}
