package dev.interim.stats;

/**
 * Large-sample z tests of proportions from success counts.
 *
 * <p>The test statistic uses the standard error under the null hypothesis (pooled rate for two
 * samples, {@code p0} for one), the usual score form (e.g. Agresti 2013, Categorical Data Analysis,
 * §3.1; Fleiss, Levin &amp; Paik 2003, ch. 2). The reported {@link TestResult#standardError()}, which
 * drives the confidence interval and the information of the estimate, is the unpooled (Wald) one,
 * since it estimates the variance of the difference whether or not the null holds. The Wald interval is
 * poor for rates near 0 or 1 and collapses to a point when an arm has none or all successes.
 */
public final class ProportionSignificance {

    private static final double Z = Double.POSITIVE_INFINITY;

    private ProportionSignificance() {
    }

    /**
     * Two-proportion z test of {@code rate(a) = rate(b)}; the estimate is {@code rate(a) − rate(b)}
     * (first minus second: treatment minus control).
     *
     * @throws InsufficientDataException if an arm has no trials, or neither arm has any success (or any
     *                                   failure): the pooled standard error is then 0 and so is the difference
     */
    public static TestResult twoProportionZ(ProportionCounts a, ProportionCounts b, Alternative alternative) {
        String test = "two-proportion z";
        checkTwo(test, a, b, alternative);
        double pa = a.rate();
        double pb = b.rate();
        double pooled = pooledRate(a, b);
        double pooledSe = Math.sqrt(pooled * (1 - pooled) * (1.0 / a.trials() + 1.0 / b.trials()));
        double difference = pa - pb;
        double statistic = Arguments.ratio(test, difference, pooledSe);
        double se = Math.sqrt(pa * (1 - pa) / a.trials() + pb * (1 - pb) / b.trials());
        return TestResult.of(test, statistic, Z, alternative, difference, se);
    }

    /**
     * The two-proportion z test with one standard error for the statistic and the interval: each
     * arm's Bernoulli variance taken as at least the pooled one, max(p(1 − p), p̄(1 − p̄)). It is
     * never below the pooled (score) standard error, so the test is at most as ready to reject as the
     * score test, and an interval built on it excludes no difference exactly when the test rejects;
     * an arm whose few events happen to show no failures (or no successes) borrows the pooled spread
     * instead of collapsing to a point.
     *
     * @throws InsufficientDataException as {@link #twoProportionZ}
     */
    public static TestResult twoProportionZAtLeastPooled(ProportionCounts a, ProportionCounts b, Alternative alternative) {
        String test = "two-proportion z, variances at least pooled";
        checkTwo(test, a, b, alternative);
        double pa = a.rate();
        double pb = b.rate();
        double pooled = pooledRate(a, b);
        double vp = pooled * (1 - pooled);
        double se = Math.sqrt(Math.max(pa * (1 - pa), vp) / a.trials() + Math.max(pb * (1 - pb), vp) / b.trials());
        double difference = pa - pb;
        return TestResult.of(test, Arguments.ratio(test, difference, se), Z, alternative, difference, se);
    }

    /**
     * One-proportion z test of {@code rate = p0} (e.g. an error rate against a service-level
     * objective); the estimate is the observed rate.
     *
     * @throws InsufficientDataException if there are no trials
     * @throws IllegalArgumentException  unless {@code 0 < p0 < 1}
     */
    public static TestResult oneProportionZ(ProportionCounts sample, double p0, Alternative alternative) {
        String test = "one-proportion z";
        Arguments.notNull("sample", sample);
        Arguments.notNull("alternative", alternative);
        Probabilities.requireOpen(p0, "p0");
        Arguments.atLeast(test, "trials", sample.trials(), 1);
        double rate = sample.rate();
        double nullSe = Math.sqrt(p0 * (1 - p0) / sample.trials());
        double se = Math.sqrt(rate * (1 - rate) / sample.trials());
        return TestResult.of(test, (rate - p0) / nullSe, Z, alternative, rate, se);
    }

    private static void checkTwo(String test, ProportionCounts a, ProportionCounts b, Alternative alternative) {
        Arguments.notNull("a", a);
        Arguments.notNull("b", b);
        Arguments.notNull("alternative", alternative);
        Arguments.atLeast(test, "trials in the first sample", a.trials(), 1);
        Arguments.atLeast(test, "trials in the second sample", b.trials(), 1);
    }

    private static double pooledRate(ProportionCounts a, ProportionCounts b) {
        return ((double) a.successes() + b.successes()) / ((double) a.trials() + b.trials());
    }
}
