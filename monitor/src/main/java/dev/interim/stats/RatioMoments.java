package dev.interim.stats;

/**
 * The sufficient statistics of a ratio of means over independent units: the count of units, the
 * means of their numerators X and denominators Y, the sums of squared deviations of each and the
 * sum of their cross-deviations. The ratio is R = x̄/ȳ (errors per request, revenue per session);
 * its variance comes from the delta method.
 *
 * <p>Delta method (Deng, Knoblich &amp; Lu 2018, "Applying the Delta Method in Metric Analytics: A
 * Practical Guide with Novel Ideas", KDD, §2 and eq. for Var(X̄/Ȳ)): with the units i.i.d.,
 * Var(x̄/ȳ) ≈ (σ_X² / μ_Y² − 2 μ_X σ_XY / μ_Y³ + μ_X² σ_Y² / μ_Y⁴) / n. Written here in the equivalent
 * form Var(X − R·Y) / (n μ_Y²), the variance of the linearised unit value, which is never negative.
 * Sample moments (divisor n − 1) stand in for the population ones.
 *
 * <p>Merging two disjoint samples follows Chan, Golub &amp; LeVeque (1979) for both variances and the
 * co-moment. Empty: count 0, means NaN, sums 0.
 *
 * @param count units, {@code >= 0}
 * @param meanX mean numerator per unit (NaN when empty)
 * @param meanY mean denominator per unit (NaN when empty)
 * @param sumSquaredDeviationsX Σ(x − x̄)²
 * @param sumSquaredDeviationsY Σ(y − ȳ)²
 * @param sumCrossDeviations Σ(x − x̄)(y − ȳ)
 */
public record RatioMoments(long count, double meanX, double meanY, double sumSquaredDeviationsX,
                           double sumSquaredDeviationsY, double sumCrossDeviations) {

    /** No units. */
    public static final RatioMoments EMPTY = new RatioMoments(0, Double.NaN, Double.NaN, 0, 0, 0);

    public RatioMoments {
        if (count < 0) {
            throw new IllegalArgumentException("count must be >= 0, was " + count);
        }
        if (count == 0) {
            if (!Double.isNaN(meanX) || !Double.isNaN(meanY) || sumSquaredDeviationsX != 0
                    || sumSquaredDeviationsY != 0 || sumCrossDeviations != 0) {
                throw new IllegalArgumentException("an empty sample has NaN means and zero sums (use RatioMoments.EMPTY)");
            }
        } else {
            Arguments.finite("meanX", meanX);
            Arguments.finite("meanY", meanY);
            if (!(sumSquaredDeviationsX >= 0) || !(sumSquaredDeviationsY >= 0)
                    || Double.isInfinite(sumSquaredDeviationsX) || Double.isInfinite(sumSquaredDeviationsY)) {
                throw new IllegalArgumentException("sums of squared deviations must be finite and >= 0, were "
                        + sumSquaredDeviationsX + " and " + sumSquaredDeviationsY);
            }
            Arguments.finite("sumCrossDeviations", sumCrossDeviations);
        }
    }

    /** The ratio of the means, x̄/ȳ; NaN when empty or when ȳ is 0. */
    public double ratio() {
        return count == 0 || meanY == 0 ? Double.NaN : meanX / meanY;
    }

    /**
     * The sample variance of the linearised unit value (X − R·Y)/ȳ, the per-unit variance of the
     * ratio: {@code n · Var(x̄/ȳ)}. NaN with fewer than 2 units or ȳ = 0.
     */
    public double linearisedVariance() {
        if (count < 2 || meanY == 0) {
            return Double.NaN;
        }
        double r = meanX / meanY;
        double residual = sumSquaredDeviationsX - 2 * r * sumCrossDeviations + r * r * sumSquaredDeviationsY;
        // Cauchy–Schwarz makes the exact value non-negative; rounding may not.
        return Math.max(0, residual) / (count - 1) / (meanY * meanY);
    }

    /** The delta-method variance of the ratio x̄/ȳ: {@link #linearisedVariance()} / n. */
    public double ratioVariance() {
        return linearisedVariance() / count;
    }

    /** The moments of this sample and a disjoint {@code other} together (Chan et al. 1979). */
    public RatioMoments plus(RatioMoments other) {
        Arguments.notNull("other", other);
        if (other.count == 0) {
            return this;
        }
        if (count == 0) {
            return other;
        }
        long n = Math.addExact(count, other.count);
        double dx = other.meanX - meanX;
        double dy = other.meanY - meanY;
        double weight = (double) count * other.count / n;
        return new RatioMoments(n, meanX + dx * other.count / n, meanY + dy * other.count / n,
                sumSquaredDeviationsX + other.sumSquaredDeviationsX + dx * dx * weight,
                sumSquaredDeviationsY + other.sumSquaredDeviationsY + dy * dy * weight,
                sumCrossDeviations + other.sumCrossDeviations + dx * dy * weight);
    }

    /** The moments of a list of (x, y) pairs, for tests and small samples. */
    public static RatioMoments of(double[] x, double[] y) {
        if (x.length != y.length) {
            throw new IllegalArgumentException("x and y must have the same length, were " + x.length + " and " + y.length);
        }
        RunningRatioMoments r = new RunningRatioMoments();
        for (int i = 0; i < x.length; i++) {
            r.accept(x[i], y[i]);
        }
        return r.snapshot();
    }
}
