package dev.interim.stats;

import static org.assertj.core.api.Assertions.assertThat;

import java.util.SplittableRandom;
import org.apache.commons.math3.distribution.BinomialDistribution;
import org.junit.jupiter.api.Test;

/**
 * A test at level α rejects a true null hypothesis in about a fraction α of repetitions (common
 * practice). The random stream is fixed, so the count is reproducible; the band is what a correct test would meet with
 * probability 99.9%, so a wrong one (say, df off by one at n = 10, or a one-sided p doubled) stands out.
 */
class TypeIErrorSimulationTest {

    private static final int REPETITIONS = 20_000;
    private static final double ALPHA = 0.05;
    private static final int PER_ARM = 10;

    @Test
    void fixedTwoSampleTestsRejectATrueNullInAboutAlphaOfRepetitions() {
        SplittableRandom random = new SplittableRandom(20_240_517L);
        int welchRejections = 0;
        int pooledRejections = 0;
        for (int rep = 0; rep < REPETITIONS; rep++) {
            RunningMoments a = new RunningMoments();
            RunningMoments b = new RunningMoments();
            for (int i = 0; i < PER_ARM; i++) {
                a.accept(3.0 + 2.0 * random.nextGaussian()); // same normal distribution in both arms
                b.accept(3.0 + 2.0 * random.nextGaussian());
            }
            if (MeanSignificance.welchT(a.snapshot(), b.snapshot(), Alternative.TWO_SIDED).reject(ALPHA)) {
                welchRejections++;
            }
            if (MeanSignificance.pooledT(a.snapshot(), b.snapshot(), Alternative.TWO_SIDED).reject(ALPHA)) {
                pooledRejections++;
            }
        }
        // The number of rejections of an exact level-α test is Binomial(20000, 0.05): mean 1000, sd
        // about 31. The central 99.9% band of that distribution (reference library: Apache Commons Math
        // 3.6.1 BinomialDistribution) is about 1000 ± 102, i.e. a rate of 0.0449..0.0551. Pooled t is
        // exact for normal data with equal variances; Welch's is within a few tenths of a percent of α
        // at n = 10 per arm, well inside the band.
        BinomialDistribution nullCount = new BinomialDistribution(REPETITIONS, ALPHA);
        int low = nullCount.inverseCumulativeProbability(0.0005);
        int high = nullCount.inverseCumulativeProbability(0.9995);
        assertThat(pooledRejections).isBetween(low, high); // common practice: size α under the null
        assertThat(welchRejections).isBetween(low, high); // common practice: size α under the null
    }
}
