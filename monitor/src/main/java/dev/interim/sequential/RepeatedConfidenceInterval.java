package dev.interim.sequential;

import dev.interim.stats.Alternative;
import dev.interim.stats.ConfidenceInterval;

/**
 * Repeated confidence intervals (Jennison & Turnbull 1989; 2000, ch. 9): at look k the interval
 * θ̂_k ± c_k·se_k, with c_k the boundary of the design at that look. Because the boundaries hold the
 * probability of any crossing to α, the whole sequence of intervals covers the true effect
 * simultaneously with probability at least 1 − α, so an interval may be read at any look, including
 * one where monitoring stops for a reason the design did not foresee.
 *
 * <p>One-sided designs give one-sided intervals: a "greater" design a lower confidence bound, a
 * "less" design an upper one. Before any α has been spent the boundary is infinite and so is the
 * interval.
 */
public final class RepeatedConfidenceInterval {
    private RepeatedConfidenceInterval() {}

    /**
     * The repeated confidence interval at {@code look} of {@code design} for an effect estimate
     * with the given standard error; its level is the design's 1 − α, the simultaneous coverage of
     * the whole sequence.
     */
    public static ConfidenceInterval at(GroupSequentialDesign design, Look look, double estimate,
                                        double standardError) {
        if (!Double.isFinite(estimate)) {
            throw new IllegalArgumentException("the effect estimate must be finite, got " + estimate);
        }
        if (!(standardError >= 0) || Double.isInfinite(standardError)) {
            throw new IllegalArgumentException("the standard error must be non-negative and finite, got " + standardError);
        }
        double level = 1 - design.alpha();
        double c = Math.abs(look.efficacyBoundary());
        double half = c == Double.POSITIVE_INFINITY ? Double.POSITIVE_INFINITY : c * standardError;
        Alternative alternative = look.alternative();
        double lower = alternative == Alternative.LESS ? Double.NEGATIVE_INFINITY : estimate - half;
        double upper = alternative == Alternative.GREATER ? Double.POSITIVE_INFINITY : estimate + half;
        return new ConfidenceInterval(lower, upper, level);
    }

    /**
     * The repeated confidence interval when the statistic is a t on {@code degreesOfFreedom} mapped to
     * the Z scale through its p-value: the boundary c is mapped back the same way, to the t quantile
     * with the same tail, T_ν⁻¹(Φ(c)), so that the interval excludes the null exactly when the test
     * rejects. +∞ degrees of freedom give {@link #at(GroupSequentialDesign, Look, double, double)}.
     */
    public static ConfidenceInterval at(GroupSequentialDesign design, Look look, double estimate,
                                        double standardError, double degreesOfFreedom) {
        ConfidenceInterval z = at(design, look, estimate, standardError);
        double c = Math.abs(look.efficacyBoundary());
        if (degreesOfFreedom == Double.POSITIVE_INFINITY || c == Double.POSITIVE_INFINITY) {
            return z;
        }
        double half = criticalValue(c, degreesOfFreedom) * standardError;
        Alternative alternative = look.alternative();
        double lower = alternative == Alternative.LESS ? Double.NEGATIVE_INFINITY : estimate - half;
        double upper = alternative == Alternative.GREATER ? Double.POSITIVE_INFINITY : estimate + half;
        return new ConfidenceInterval(lower, upper, z.level());
    }

    /**
     * The interval for the relative change treatment/control − 1 at this look: the interval of the
     * log ratio, log(1 + relative) ± q·se, mapped back by exp(·) − 1 (delta method on the log ratio;
     * Deng, Knoblich &amp; Lu 2018, §3.3), with q the look's critical value as in
     * {@link #at(GroupSequentialDesign, Look, double, double, double)}. Null when the relative change
     * is undefined (NaN).
     */
    public static ConfidenceInterval relative(GroupSequentialDesign design, Look look, double relative,
                                              double logStandardError, double degreesOfFreedom) {
        if (!Double.isFinite(relative) || !(logStandardError >= 0) || Double.isInfinite(logStandardError)) {
            return null;
        }
        ConfidenceInterval log = at(design, look, Math.log1p(relative), logStandardError, degreesOfFreedom);
        return new ConfidenceInterval(Math.expm1(log.lower()), Math.expm1(log.upper()), log.level());
    }

    /** T_ν⁻¹(Φ(c)): the t quantile with the normal tail of c. */
    static double criticalValue(double c, double degreesOfFreedom) {
        double tail = StandardNormal.sf(c);
        if (tail <= 0) {
            return Double.POSITIVE_INFINITY;
        }
        return org.apache.commons.statistics.distribution.TDistribution.of(degreesOfFreedom).inverseSurvivalProbability(tail);
    }
}
