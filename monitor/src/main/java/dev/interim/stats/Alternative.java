package dev.interim.stats;

import org.apache.commons.statistics.distribution.ContinuousDistribution;

/**
 * The alternative hypothesis, stated for the estimate relative to its null value. For a two-sample
 * test the estimate is first argument minus second (treatment minus control), so {@link #GREATER}
 * means "treatment is higher".
 */
public enum Alternative {
    /** The estimate differs from the null value in either direction. */
    TWO_SIDED,
    /** The estimate is greater than the null value. */
    GREATER,
    /** The estimate is less than the null value. */
    LESS;

    /**
     * The p-value of {@code statistic} under a null distribution that is symmetric about zero (the
     * normal and t distributions). Each tail is read from its own function (cumulative or survival
     * probability) so that tiny p-values keep their relative accuracy instead of being lost as
     * {@code 1 - 0.9999...}.
     */
    double pValue(ContinuousDistribution nullDistribution, double statistic) {
        return switch (this) {
            case GREATER -> nullDistribution.survivalProbability(statistic);
            case LESS -> nullDistribution.cumulativeProbability(statistic);
            case TWO_SIDED -> Math.min(1.0, 2.0 * Math.min(
                    nullDistribution.cumulativeProbability(statistic),
                    nullDistribution.survivalProbability(statistic)));
        };
    }
}
