package dev.interim.stats;

/**
 * An immutable snapshot of the first two moments of a sample: the count, the mean and the sum of
 * squared deviations from the mean ({@code M2}). It is a sufficient statistic for the mean tests,
 * and snapshots of disjoint samples merge exactly as their union would ({@link #plus}).
 *
 * <p>Merging follows Chan, Golub &amp; LeVeque (1983), "Algorithms for computing the sample
 * variance: analysis and recommendations", The American Statistician 37(3):242–247, eq. 2.1b: it
 * updates {@code M2} with the difference of the means instead of subtracting sums of squares, which
 * would cancel catastrophically when the mean is large compared with the spread.
 *
 * <p>The mean is carried as an unevaluated sum {@code mean + meanResidual} (a double-double): a
 * double holds a mean near 10⁷ only to about 1e-9, and every merge would otherwise add that much
 * error to the difference of the means and so to {@code M2}. With the residual, merging NIST StRD
 * NumAcc4 (values 10,000,000.2 ± 0.1) in any split and order matches one pass to 1e-12 relative.
 * {@link #mean()} is the rounded mean; the residual matters only to further merges.
 *
 * <p>Empty and tiny samples: an empty sample has count 0, mean NaN (there is no mean; 0 would be
 * a plausible value and so would hide the emptiness) and {@code M2 = 0}. A single observation has
 * {@code M2 = 0}, population variance 0 and sample variance NaN.
 *
 * @param count                 number of observations, {@code >= 0}
 * @param mean                  their mean; NaN exactly when {@code count == 0}
 * @param sumSquaredDeviations  {@code Σ (x - mean)²}; finite, {@code >= 0}, and 0 when
 *                              {@code count <= 1}
 * @param meanResidual          the part of the exact mean that {@code mean} could not hold; at most
 *                              one ulp of {@code mean} in magnitude, 0 when empty
 */
public record Moments(long count, double mean, double sumSquaredDeviations, double meanResidual) {

    /** The moments of no observations. */
    public static final Moments EMPTY = new Moments(0, Double.NaN, 0.0);

    /** Moments whose mean is exactly representable (no residual). */
    public Moments(long count, double mean, double sumSquaredDeviations) {
        this(count, mean, sumSquaredDeviations, 0.0);
    }

    public Moments {
        if (count < 0) {
            throw new IllegalArgumentException("count must be >= 0, was " + count);
        }
        if (!(Math.abs(meanResidual) <= (count == 0 ? 0.0 : Math.ulp(mean)))) {
            throw new IllegalArgumentException("meanResidual must be within one ulp of the mean (0 when empty), was "
                    + meanResidual);
        }
        if (count == 0) {
            if (!Double.isNaN(mean) || sumSquaredDeviations != 0.0) {
                throw new IllegalArgumentException("an empty sample has mean NaN and sumSquaredDeviations 0"
                        + " (use Moments.EMPTY); was mean " + mean + ", sumSquaredDeviations " + sumSquaredDeviations);
            }
        } else {
            Arguments.finite("mean", mean);
            if (!(sumSquaredDeviations >= 0.0 && sumSquaredDeviations < Double.POSITIVE_INFINITY)) {
                throw new IllegalArgumentException(
                        "sumSquaredDeviations must be finite and >= 0, was " + sumSquaredDeviations);
            }
            if (count == 1 && sumSquaredDeviations != 0.0) {
                throw new IllegalArgumentException(
                        "a single observation has sumSquaredDeviations 0, was " + sumSquaredDeviations);
            }
        }
    }

    /**
     * Moments from published summary statistics: count, mean and sample standard deviation (the
     * n − 1 kind). With {@code count <= 1} the standard deviation carries no information and is
     * ignored (after validation); with {@code count == 0} the result is {@link #EMPTY}.
     *
     * @throws IllegalArgumentException if count is negative, mean not finite, or sd negative or not finite
     */
    public static Moments of(long count, double mean, double standardDeviation) {
        if (count < 0) {
            throw new IllegalArgumentException("count must be >= 0, was " + count);
        }
        Arguments.finite("mean", mean);
        if (!(standardDeviation >= 0.0 && standardDeviation < Double.POSITIVE_INFINITY)) {
            throw new IllegalArgumentException("standard deviation must be finite and >= 0, was " + standardDeviation);
        }
        if (count == 0) {
            return EMPTY;
        }
        return new Moments(count, mean, standardDeviation * standardDeviation * (count - 1));
    }

    /** The moments of the given values, computed in one pass (Welford). */
    public static Moments ofValues(double... values) {
        RunningMoments running = new RunningMoments();
        for (double value : Arguments.notNull("values", values)) {
            running.accept(value);
        }
        return running.snapshot();
    }

    /** Sample variance {@code M2 / (n − 1)}; NaN when {@code count < 2}. */
    public double variance() {
        return count < 2 ? Double.NaN : sumSquaredDeviations / (count - 1);
    }

    /** Population variance {@code M2 / n}; NaN when empty, 0 for one observation. */
    public double populationVariance() {
        return count < 1 ? Double.NaN : sumSquaredDeviations / count;
    }

    /** Sample standard deviation, the square root of {@link #variance()}; NaN when {@code count < 2}. */
    public double standardDeviation() {
        return Math.sqrt(variance());
    }

    /** Estimated standard error of the mean, {@code s / √n}; NaN when {@code count < 2}. */
    public double standardErrorOfMean() {
        return Math.sqrt(variance() / count);
    }

    /**
     * The moments of the union of this sample and a disjoint {@code other} (Chan, Golub &amp;
     * LeVeque 1983). Merging with an empty sample returns the other operand unchanged, bit for bit.
     *
     * @throws ArithmeticException if the merged count overflows a long
     */
    public Moments plus(Moments other) {
        Arguments.notNull("other", other);
        if (other.count == 0) {
            return this;
        }
        if (count == 0) {
            return other;
        }
        long n = Math.addExact(count, other.count);
        // The difference of the two double-double means: other.mean − mean is exact when the means
        // are within a factor of two of each other (Sterbenz), the usual case for parts of one sample.
        double delta = (other.mean - mean) + (other.meanResidual - meanResidual);
        // The weight as a double: count * other.count can overflow a long for very large tallies.
        double otherShare = (double) other.count / n;
        double[] merged = twoSum(mean, meanResidual + delta * otherShare);
        double mergedM2 = sumSquaredDeviations + other.sumSquaredDeviations + delta * delta * count * otherShare;
        return new Moments(n, merged[0], mergedM2, merged[1]);
    }

    /**
     * Knuth's TwoSum: {@code a + b} as its rounded sum and the exact rounding error, so that
     * {@code s + e == a + b} exactly.
     */
    static double[] twoSum(double a, double b) {
        double s = a + b;
        double bb = s - a;
        double e = (a - (s - bb)) + (b - bb);
        return new double[] {s, e};
    }
}
