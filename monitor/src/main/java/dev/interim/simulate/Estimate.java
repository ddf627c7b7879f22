package dev.interim.simulate;

/**
 * A Monte Carlo estimate and its standard error: for a probability p from N runs √(p(1 − p)/N), for
 * a mean s/√N with s the sample standard deviation (common practice). NaN where undefined (a mean
 * from one run).
 */
public record Estimate(double value, double standardError) {

    /** The share {@code count}/{@code runs}, with its binomial standard error. */
    static Estimate proportion(long count, long runs) {
        double p = (double) count / runs;
        return new Estimate(p, Math.sqrt(p * (1 - p) / runs));
    }
}
