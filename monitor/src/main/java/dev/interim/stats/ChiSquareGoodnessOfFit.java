package dev.interim.stats;

import org.apache.commons.statistics.distribution.ChiSquaredDistribution;

/**
 * Pearson's chi-square goodness-of-fit test (Pearson 1900): do the observed counts follow the
 * expected shares? {@code X² = Σ (O − E)² / E} on {@code k − 1} degrees of freedom. Interim uses it
 * for the sample-ratio-mismatch check: exposures per arm against the configured split.
 *
 * <p>The chi-square approximation wants expected counts of about 5 or more in every category; with
 * fewer the p-value is approximate.
 *
 * @param statistic         Pearson's X²
 * @param degreesOfFreedom  number of categories minus 1
 * @param pValue            upper-tail probability of {@code statistic}
 */
public record ChiSquareGoodnessOfFit(double statistic, int degreesOfFreedom, double pValue) {

    public ChiSquareGoodnessOfFit {
        if (!(statistic >= 0.0)) {
            throw new IllegalArgumentException("statistic must be >= 0, was " + statistic);
        }
        if (degreesOfFreedom < 1) {
            throw new IllegalArgumentException("degreesOfFreedom must be >= 1, was " + degreesOfFreedom);
        }
        Probabilities.requireClosed(pValue, "pValue");
    }

    /**
     * Tests the observed counts against expected shares. The shares are relative weights (e.g.
     * {@code {50, 50}} or {@code {0.5, 0.5}}); they are normalised to sum to 1.
     *
     * @throws IllegalArgumentException  if the arrays are null, differ in length or have fewer than 2
     *                                   entries, a count is negative, or a share is not finite and positive
     * @throws InsufficientDataException if all counts are 0
     */
    public static ChiSquareGoodnessOfFit test(long[] observed, double[] expectedShares) {
        Arguments.notNull("observed", observed);
        Arguments.notNull("expectedShares", expectedShares);
        if (observed.length != expectedShares.length || observed.length < 2) {
            throw new IllegalArgumentException("observed and expectedShares need the same length, at least 2;"
                    + " were " + observed.length + " and " + expectedShares.length);
        }
        long total = 0;
        double shareSum = 0;
        for (int i = 0; i < observed.length; i++) {
            if (observed[i] < 0) {
                throw new IllegalArgumentException("observed counts must be >= 0, observed[" + i + "] was " + observed[i]);
            }
            Arguments.positive("expectedShares[" + i + "]", expectedShares[i]);
            total = Math.addExact(total, observed[i]);
            shareSum += expectedShares[i];
        }
        Arguments.atLeast("chi-square goodness of fit", "observations in total", total, 1);
        double statistic = 0;
        for (int i = 0; i < observed.length; i++) {
            double expected = total * (expectedShares[i] / shareSum);
            double deviation = observed[i] - expected;
            statistic += deviation * deviation / expected;
        }
        int df = observed.length - 1;
        return new ChiSquareGoodnessOfFit(statistic, df, ChiSquaredDistribution.of(df).survivalProbability(statistic));
    }

    /**
     * Whether the counts depart from the expected shares at level {@code alpha} ({@code pValue <= alpha}).
     *
     * @throws IllegalArgumentException unless {@code 0 < alpha < 1}
     */
    public boolean reject(double alpha) {
        Probabilities.requireOpen(alpha, "alpha");
        return pValue <= alpha;
    }
}
