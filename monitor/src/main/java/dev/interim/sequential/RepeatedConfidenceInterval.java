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
}
