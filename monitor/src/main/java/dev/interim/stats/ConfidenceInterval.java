package dev.interim.stats;

/**
 * A confidence interval for an estimate. One-sided intervals have an infinite end: a
 * {@link Alternative#GREATER} test gives {@code [lower, +∞)}, a {@link Alternative#LESS} test
 * {@code (-∞, upper]}.
 *
 * @param lower lower end, possibly {@link Double#NEGATIVE_INFINITY}
 * @param upper upper end, possibly {@link Double#POSITIVE_INFINITY}; never below {@code lower}
 * @param level confidence level in (0, 1), e.g. 0.95
 */
public record ConfidenceInterval(double lower, double upper, double level) {

    public ConfidenceInterval {
        Probabilities.requireOpen(level, "level");
        if (Double.isNaN(lower) || Double.isNaN(upper) || lower > upper) {
            throw new IllegalArgumentException(
                    "a confidence interval needs lower <= upper, neither NaN; was [" + lower + ", " + upper + "]");
        }
    }

    /** Whether {@code value} lies in the closed interval. */
    public boolean contains(double value) {
        return lower <= value && value <= upper;
    }
}
