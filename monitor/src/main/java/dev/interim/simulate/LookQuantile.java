package dev.interim.simulate;

/**
 * A quantile of the stopping look, with a Monte Carlo interval.
 *
 * <p>The q-quantile is the smallest look by which at least a share q of the runs had stopped. Its
 * interval is the distribution-free one from order statistics: the looks of the runs ranked
 * N·q ∓ 1.96·√(N·q·(1 − q)) cover the true quantile with about 95% probability (the binomial
 * distribution of the rank, in its normal approximation; common practice, e.g. Conover 1999,
 * Practical Nonparametric Statistics, §3.2). Looks are 1-based.
 *
 * @param probability q
 * @param look the estimated quantile
 * @param low lower end of the 95% Monte Carlo interval
 * @param high upper end of the 95% Monte Carlo interval
 */
public record LookQuantile(double probability, int look, int low, int high) {
}
