package dev.interim.sequential;

import org.apache.commons.statistics.distribution.NormalDistribution;

/**
 * The standard normal distribution functions used by the boundary recursion, delegated to Apache
 * Commons Statistics so that no tail probability or quantile is hand-written here.
 */
final class StandardNormal {
    private static final NormalDistribution N = NormalDistribution.of(0, 1);
    private static final double INV_SQRT_2PI = 0.3989422804014327;

    private StandardNormal() {}

    static double cdf(double x) {
        return N.cumulativeProbability(x);
    }

    /** Upper tail 1 − Φ(x), accurate far into the tail. */
    static double sf(double x) {
        return N.survivalProbability(x);
    }

    /**
     * Density φ(x). The recursion evaluates it tens of thousands of times per look, so it is the
     * closed form 𝑒^(−x²/2)/√(2π) rather than a virtual call; this is the definition, not an
     * approximation.
     */
    static double pdf(double x) {
        return INV_SQRT_2PI * Math.exp(-0.5 * x * x);
    }

    /** Φ⁻¹(p). */
    static double quantile(double p) {
        return N.inverseCumulativeProbability(p);
    }

    /** The x with 1 − Φ(x) = p, accurate for tiny p. */
    static double upperQuantile(double p) {
        return N.inverseSurvivalProbability(p);
    }
}
