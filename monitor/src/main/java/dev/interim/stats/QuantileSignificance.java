package dev.interim.stats;

import org.apache.commons.statistics.distribution.ChiSquaredDistribution;
import org.apache.commons.statistics.distribution.NormalDistribution;

/**
 * Tests of a quantile (the p-th quantile of an arm's values: latency p99), with Woodruff's standard
 * error.
 *
 * <p>Woodruff (1952), "Confidence intervals for medians and other position measures", JASA 47,
 * 635–646: the share of values at or below the estimated quantile, F̂(ξ̂), has a standard error s
 * that is easy to estimate; the interval F̂ ∈ p ± z·s mapped back through the estimated quantile
 * function, [Q̂(p − z·s), Q̂(p + z·s)], is a confidence interval for ξ_p, and its width over 2z is the
 * standard error of ξ̂ (s/f(ξ_p) in the limit; no density estimate with a bandwidth to choose). The
 * interval here is the 95% one (z = 1.96), as in Woodruff's paper and in its use for quantile
 * metrics of online experiments (Liu, Deng et al. 2019, "Large-scale online experimentation with
 * quantile metrics", arXiv:1903.08762; from memory).
 *
 * <p>The standard error s of F̂:
 * <ul>
 *   <li>events assigned independently (one group): binomial, s² = p(1 − p)/n;</li>
 *   <li>units assigned, several events each: F̂ = Σx/Σy over units, x a unit's events at or below
 *       ξ̂ and y its events, a ratio of per-unit sums with the delta-method variance (Deng, Knoblich
 *       &amp; Lu 2018). The threshold ξ̂ is known only at the look, after the events, so the sums are
 *       taken over {@link HistogramCounts#UNIT_GROUPS} random groups of units (each unit's events in the
 *       group of its key's hash), each group a sum of independent units: s² = G/(G − 1)·Σ_g(x_g −
 *       F̂·y_g)²/(Σy)², G the groups with events, the random-group estimator (Wolter 2007,
 *       "Introduction to Variance Estimation", ch. 2), on G − 1 degrees of freedom that the test
 *       carries as a t reference.</li>
 * </ul>
 *
 * <p>Assumptions, and what is held back: the interval rests on F̂ being near normal at the tail, so
 * a quantile is not estimated until each arm has at least {@link #MIN_TAIL} values beyond it (for
 * p = 0.99, 5,000 values; for p = 0.999, 50,000), and, per unit, at least {@link #MIN_GROUPS} groups
 * with events; and p ± z·s must stay inside (0, 1).
 *
 * <p>Two arms: the estimate is ξ̂_a − ξ̂_b with standard error √(se_a² + se_b²). As with the other
 * two-sample tests of the monitor, each arm's width is at least the one read from the values of
 * both arms at the same share (the quantile function pooled under no change), so that an arm whose
 * sample has not met its tail yet cannot shrink the standard error.
 */
public final class QuantileSignificance {
    /** Values beyond the quantile (on its rarer side) that each arm needs before it is estimated. */
    public static final int MIN_TAIL = 50;
    /** Groups of units with events that each arm needs under per-unit assignment. */
    public static final int MIN_GROUPS = 8;
    /** z of Woodruff's 95% interval. */
    static final double Z = NormalDistribution.of(0, 1).inverseSurvivalProbability(0.025);
    /** Confidence of the upper limit behind {@link ArmQuantile#conservativeShare()}, as for the other kinds. */
    private static final double INFORMATION_CONFIDENCE = 0.8;

    private QuantileSignificance() {
    }

    /**
     * One arm's quantile and what its standard error rests on.
     *
     * @param quantile        ξ̂_p
     * @param standardError   Woodruff's standard error of ξ̂_p
     * @param shareError      s, the standard error of F̂ at ξ̂_p
     * @param degreesOfFreedom of s: G − 1 over groups of units, +∞ for the binomial
     * @param tail            values beyond ξ̂_p on the rarer side, min(p, 1 − p)·n
     */
    public record ArmQuantile(double quantile, double standardError, double shareError, double degreesOfFreedom,
                              double tail) {
        /**
         * The variance of ξ̂ at the upper end of a one-sided 80% chi-square interval on the tail's
         * count (or the groups' degrees of freedom, if fewer): what measures progress towards a
         * horizon sized by power, never below the estimate.
         */
        public double conservativeShare() {
            double df = Math.min(tail - 1, degreesOfFreedom);
            double v = standardError * standardError;
            return v * df / ChiSquaredDistribution.of(df).inverseCumulativeProbability(1 - INFORMATION_CONFIDENCE);
        }
    }

    /**
     * The p-th quantile of {@code counts} with Woodruff's standard error.
     *
     * @throws InsufficientDataException before {@link #MIN_TAIL} values beyond it (or {@link #MIN_GROUPS}
     *                                   groups), or when p ± z·s leaves (0, 1)
     */
    public static ArmQuantile arm(HistogramCounts counts, double p) {
        return arm(counts, p, null);
    }

    /** {@link #arm}, its width at least the one {@code pooled} has at the same shares (null: none). */
    public static ArmQuantile arm(HistogramCounts counts, double p, HistogramCounts pooled) {
        Probabilities.requireOpen(p, "p");
        long n = counts.count();
        double tail = Math.min(p, 1 - p) * n;
        if (tail < MIN_TAIL - 1e-6) { // 1e-6: (1 − 0.999)·50,000 is 49.99999… in binary
            throw new InsufficientDataException("a quantile " + p + " needs " + MIN_TAIL + " values beyond it in each "
                    + "arm, so " + (long) Math.ceil(MIN_TAIL / Math.min(p, 1 - p)) + " values; an arm has " + n);
        }
        double q = counts.quantile(p);
        double share;
        double df;
        if (counts.groupCount() == 1) {
            share = Math.sqrt(p * (1 - p) / n);
            df = Double.POSITIVE_INFINITY;
        } else {
            int used = counts.groupsUsed();
            if (used < MIN_GROUPS) {
                throw new InsufficientDataException("a quantile under per-unit assignment needs events of at least "
                        + MIN_GROUPS + " groups of units in each arm; an arm has " + used);
            }
            double f = counts.below(q) / n;
            double ss = 0;
            for (int g = 0; g < counts.groupCount(); g++) {
                long y = counts.count(g);
                if (y > 0) {
                    double d = counts.below(g, q) - f * y;
                    ss += d * d;
                }
            }
            share = Math.sqrt(ss * used / (used - 1.0)) / n;
            df = used - 1;
        }
        double lowShare = p - Z * share;
        double highShare = p + Z * share;
        if (!(lowShare > 0 && highShare < 1)) {
            throw new InsufficientDataException("the interval of the share below the " + p + " quantile, " + p + " ± "
                    + Z * share + ", leaves (0, 1): wait for more values");
        }
        double width = counts.quantile(highShare) - counts.quantile(lowShare);
        if (pooled != null && pooled.count() > 0) {
            width = Math.max(width, pooled.quantile(highShare) - pooled.quantile(lowShare));
        }
        return new ArmQuantile(q, width / (2 * Z), share, df, tail);
    }

    /**
     * ξ̂_a − ξ̂_b, each arm's width at least the pooled one, against the t reference of
     * Welch–Satterthwaite's degrees of freedom on the two arms' (normal for binomial shares).
     *
     * @throws InsufficientDataException as {@link #arm}, or when neither arm's values spread
     */
    public static TestResult twoSample(HistogramCounts a, HistogramCounts b, double p, Alternative alternative) {
        HistogramCounts pooled = a.plus(b);
        return twoSample(arm(a, p, pooled), arm(b, p, pooled), alternative);
    }

    /** The two-sample test from each arm's estimate. */
    public static TestResult twoSample(ArmQuantile a, ArmQuantile b, Alternative alternative) {
        double va = a.standardError() * a.standardError();
        double vb = b.standardError() * b.standardError();
        double se = Math.sqrt(va + vb);
        double effect = a.quantile() - b.quantile();
        if (!(se > 0)) {
            throw new InsufficientDataException("Woodruff: the values around the quantile do not spread in either arm; "
                    + "wait for data that vary");
        }
        double df = satterthwaite(va, a.degreesOfFreedom(), vb, b.degreesOfFreedom());
        return TestResult.of("Woodruff quantile z", effect / se, df, alternative, effect, se);
    }

    /**
     * ξ̂ against a fixed {@code value} (single-arm rollouts); the estimate is ξ̂ itself.
     *
     * @throws InsufficientDataException as {@link #arm}, or when the values do not spread
     */
    public static TestResult oneSample(HistogramCounts counts, double p, double value, Alternative alternative) {
        return oneSample(arm(counts, p), value, alternative);
    }

    /** The one-sample test from the arm's estimate. */
    public static TestResult oneSample(ArmQuantile a, double value, Alternative alternative) {
        if (!(a.standardError() > 0)) {
            throw new InsufficientDataException("Woodruff: the values around the quantile do not spread; wait for data "
                    + "that vary");
        }
        return TestResult.of("Woodruff quantile z", (a.quantile() - value) / a.standardError(), a.degreesOfFreedom(),
                alternative, a.quantile(), a.standardError());
    }

    private static double satterthwaite(double va, double dfa, double vb, double dfb) {
        if (dfa == Double.POSITIVE_INFINITY && dfb == Double.POSITIVE_INFINITY) {
            return Double.POSITIVE_INFINITY;
        }
        double denominator = va * va / dfa + vb * vb / dfb;
        return denominator > 0 ? (va + vb) * (va + vb) / denominator : Double.POSITIVE_INFINITY;
    }
}
