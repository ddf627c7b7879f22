package dev.interim.stats;

import org.apache.commons.statistics.distribution.ContinuousDistribution;
import org.apache.commons.statistics.distribution.NormalDistribution;
import org.apache.commons.statistics.distribution.TDistribution;

/**
 * The outcome of a fixed-horizon test.
 *
 * @param name              the test, e.g. {@code "Welch t"}
 * @param statistic         the test statistic; ±∞ when the data have no variation but differ from the null
 * @param degreesOfFreedom  degrees of freedom of the t reference distribution, or
 *                          {@link Double#POSITIVE_INFINITY} for z tests (standard normal reference)
 * @param pValue            p-value for {@code alternative}, in [0, 1]
 * @param alternative       the alternative hypothesis
 * @param estimate          the effect: a mean or rate (one-sample), or first minus second (two-sample)
 * @param standardError     the standard error used for the confidence interval, {@code >= 0}
 */
public record TestResult(String name, double statistic, double degreesOfFreedom, double pValue,
                         Alternative alternative, double estimate, double standardError) {

    private static final NormalDistribution STANDARD_NORMAL = NormalDistribution.of(0, 1);

    public TestResult {
        if (name == null || name.isBlank()) {
            throw new IllegalArgumentException("name must be a non-blank test name");
        }
        Arguments.notNull("alternative", alternative);
        if (Double.isNaN(statistic)) {
            throw new IllegalArgumentException("statistic must not be NaN");
        }
        if (!(degreesOfFreedom > 0.0)) {
            throw new IllegalArgumentException(
                    "degreesOfFreedom must be > 0 (or +Infinity for a z test), was " + degreesOfFreedom);
        }
        Probabilities.requireClosed(pValue, "pValue");
        Arguments.finite("estimate", estimate);
        if (!(standardError >= 0.0 && standardError < Double.POSITIVE_INFINITY)) {
            throw new IllegalArgumentException("standardError must be finite and >= 0, was " + standardError);
        }
    }

    /** Builds a result, reading the p-value from the reference distribution for {@code degreesOfFreedom}. */
    static TestResult of(String name, double statistic, double degreesOfFreedom, Alternative alternative,
                         double estimate, double standardError) {
        double p = alternative.pValue(referenceDistribution(degreesOfFreedom), statistic);
        return new TestResult(name, statistic, degreesOfFreedom, p, alternative, estimate, standardError);
    }

    /** Whether this is a z test, judged against the standard normal distribution. */
    public boolean isZTest() {
        return degreesOfFreedom == Double.POSITIVE_INFINITY;
    }

    /**
     * Whether the test rejects the null hypothesis at level {@code alpha}: {@code pValue <= alpha},
     * the p-value being the smallest level at which the test rejects.
     *
     * @throws IllegalArgumentException unless {@code 0 < alpha < 1}
     */
    public boolean reject(double alpha) {
        Probabilities.requireOpen(alpha, "alpha");
        return pValue <= alpha;
    }

    /**
     * The confidence interval for {@link #estimate()} that matches this test: {@code estimate ± q·SE}
     * with q the t quantile at this test's degrees of freedom (normal quantile for z tests). A
     * one-sided alternative gives a one-sided interval: {@code [lower, +∞)} for
     * {@link Alternative#GREATER}, {@code (-∞, upper]} for {@link Alternative#LESS}.
     *
     * <p>Proportion tests use the unpooled (Wald) standard error here, so the interval can disagree
     * with the test near its edge and is poor for rates near 0 or 1.
     *
     * @throws IllegalArgumentException unless {@code 0 < level < 1}
     */
    public ConfidenceInterval confidenceInterval(double level) {
        Probabilities.requireOpen(level, "level");
        ContinuousDistribution reference = referenceDistribution(degreesOfFreedom);
        return switch (alternative) {
            case TWO_SIDED -> {
                double halfWidth = reference.inverseSurvivalProbability((1 - level) / 2) * standardError;
                yield new ConfidenceInterval(estimate - halfWidth, estimate + halfWidth, level);
            }
            case GREATER -> new ConfidenceInterval(
                    estimate - reference.inverseSurvivalProbability(1 - level) * standardError,
                    Double.POSITIVE_INFINITY, level);
            case LESS -> new ConfidenceInterval(Double.NEGATIVE_INFINITY,
                    estimate + reference.inverseSurvivalProbability(1 - level) * standardError, level);
        };
    }

    /**
     * The statistic on the standard normal scale, with the same tail probabilities: the z with
     * {@code Φ(z) = T_df(t)}. For a z test this is the statistic itself. Group-sequential boundaries
     * are z values, so a t statistic from a small sample meets them through this map.
     *
     * <p>Each tail is taken from the function that keeps its precision: for {@code t > 0} the survival
     * probability is inverted through the normal survival function, for {@code t <= 0} the cumulative
     * probability through the normal quantile. Computing {@code Φ⁻¹(T(t))} directly would round
     * {@code T(t)} to 1 and give +∞ for large t.
     */
    public double zEquivalent() {
        if (isZTest() || Double.isInfinite(statistic)) {
            return statistic;
        }
        TDistribution t = TDistribution.of(degreesOfFreedom);
        double tail = statistic > 0 ? t.survivalProbability(statistic) : t.cumulativeProbability(statistic);
        if (tail < Double.MIN_NORMAL) {
            return Math.copySign(beyondDoubleTail(Math.abs(statistic)), statistic);
        }
        return statistic > 0
                ? STANDARD_NORMAL.inverseSurvivalProbability(tail)
                : STANDARD_NORMAL.inverseCumulativeProbability(tail);
    }

    /** |z| of the smallest normal tail a double holds: Φ̄(37.5) ≈ 2e-308, the smallest normal double. */
    static final double LARGEST_REPRESENTED_Z = 37.5;

    /**
     * |z| for a t statistic whose tail probability is below what a double can hold (many degrees of
     * freedom and t beyond about 37): Wallace's (1959) normalising map √(ν·ln(1 + t²/ν)), which tends
     * to |t| as ν grows and keeps |z| ≤ |t|, held at least at {@link #LARGEST_REPRESENTED_Z} so that z
     * keeps growing with t across the switch. Such a z is finite and beyond every boundary a look can
     * have, which is all a decision needs of it; an infinite z would cross even an infinite boundary.
     */
    private double beyondDoubleTail(double t) {
        double wallace = Math.sqrt(degreesOfFreedom * Math.log1p(t * t / degreesOfFreedom));
        return Math.min(t, Math.max(LARGEST_REPRESENTED_Z, wallace));
    }

    private static ContinuousDistribution referenceDistribution(double degreesOfFreedom) {
        return degreesOfFreedom == Double.POSITIVE_INFINITY ? STANDARD_NORMAL : TDistribution.of(degreesOfFreedom);
    }
}
