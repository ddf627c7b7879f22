package dev.interim.stats;

/**
 * Fixed-horizon tests of means, computed from summary statistics ({@link Moments}) so that a running
 * tally feeds them directly.
 *
 * <p>Two-sample tests estimate {@code mean(a) − mean(b)}, first argument minus second; the daemon
 * passes treatment first and control second, so a positive estimate means "treatment is higher". The
 * null value of that difference is 0.
 *
 * <p>Formulas are the textbook ones (e.g. NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.5.3
 * for two-sample t; Welch 1947, Biometrika 34:28–35, and Satterthwaite 1946 for the approximate
 * degrees of freedom).
 *
 * <p>Zero variance: if the standard error is 0 and the estimate differs from its null value, the
 * statistic is ±∞ and its p-value 0 (or 1 for the opposite one-sided alternative). If the standard
 * error is 0 and the estimate equals the null value the statistic is 0/0; the test is refused with an
 * {@link InsufficientDataException}, as it is when an arm has too few observations.
 */
public final class MeanSignificance {

    private static final double Z = Double.POSITIVE_INFINITY;

    private MeanSignificance() {
    }

    /**
     * One-sample z test of {@code mean = mu0} with known standard deviation {@code sigma}.
     *
     * @throws InsufficientDataException if the sample is empty
     * @throws IllegalArgumentException  if {@code mu0} is not finite or {@code sigma} not finite and positive
     */
    public static TestResult oneSampleZ(Moments sample, double mu0, double sigma, Alternative alternative) {
        String test = "one-sample z";
        Arguments.notNull("sample", sample);
        Arguments.notNull("alternative", alternative);
        Arguments.finite("mu0", mu0);
        Arguments.positive("sigma", sigma);
        Arguments.atLeast(test, "observations", sample.count(), 1);
        double se = sigma / Math.sqrt(sample.count());
        return TestResult.of(test, (sample.mean() - mu0) / se, Z, alternative, sample.mean(), se);
    }

    /**
     * One-sample t test of {@code mean = mu0}, standard deviation estimated; {@code n − 1} degrees of freedom.
     *
     * @throws InsufficientDataException if there are fewer than 2 observations, or no variation and mean = mu0
     */
    public static TestResult oneSampleT(Moments sample, double mu0, Alternative alternative) {
        return oneSampleT("one-sample t", sample, mu0, alternative);
    }

    /**
     * Paired t test: a one-sample t test that the mean of the within-pair differences is 0.
     *
     * @throws InsufficientDataException if there are fewer than 2 pairs, or all differences are 0
     */
    public static TestResult pairedT(Moments differences, Alternative alternative) {
        return oneSampleT("paired t", differences, 0.0, alternative);
    }

    /**
     * Two-sample z test with known standard deviations {@code sigmaA}, {@code sigmaB}.
     *
     * @throws InsufficientDataException if either sample is empty
     */
    public static TestResult twoSampleZ(Moments a, Moments b, double sigmaA, double sigmaB, Alternative alternative) {
        String test = "two-sample z (known variances)";
        checkTwo(test, a, b, alternative, 1);
        Arguments.positive("sigmaA", sigmaA);
        Arguments.positive("sigmaB", sigmaB);
        double se = Math.sqrt(sigmaA * sigmaA / a.count() + sigmaB * sigmaB / b.count());
        double difference = a.mean() - b.mean();
        return TestResult.of(test, difference / se, Z, alternative, difference, se);
    }

    /**
     * Large-sample two-sample z test with variances estimated from the data (unequal variances
     * allowed): the Welch statistic judged against the normal distribution. Sound with more than about
     * 30 observations per arm; below that use {@link #welchT}.
     *
     * @throws InsufficientDataException if either sample has fewer than 2 observations
     */
    public static TestResult twoSampleZEstimated(Moments a, Moments b, Alternative alternative) {
        String test = "two-sample z";
        checkTwo(test, a, b, alternative, 2);
        double se = Math.sqrt(a.variance() / a.count() + b.variance() / b.count());
        double difference = a.mean() - b.mean();
        return TestResult.of(test, Arguments.ratio(test, difference, se), Z, alternative, difference, se);
    }

    /**
     * Student's two-sample t test assuming equal variances, pooled variance
     * {@code (M2_a + M2_b) / (n_a + n_b − 2)} on {@code n_a + n_b − 2} degrees of freedom. One arm may
     * hold a single observation as long as the pooled variance has at least one degree of freedom.
     *
     * @throws InsufficientDataException if either sample is empty or {@code n_a + n_b < 3}
     */
    public static TestResult pooledT(Moments a, Moments b, Alternative alternative) {
        String test = "pooled t";
        checkTwo(test, a, b, alternative, 1);
        Arguments.atLeast(test, "observations in both samples together", a.count() + b.count(), 3);
        double df = (double) a.count() + b.count() - 2;
        double pooledVariance = (a.sumSquaredDeviations() + b.sumSquaredDeviations()) / df;
        double se = Math.sqrt(pooledVariance * (1.0 / a.count() + 1.0 / b.count()));
        double difference = a.mean() - b.mean();
        return TestResult.of(test, Arguments.ratio(test, difference, se), df, alternative, difference, se);
    }

    /**
     * Welch's two-sample t test (unequal variances) with Welch–Satterthwaite degrees of freedom
     * {@code (v_a + v_b)² / (v_a²/(n_a − 1) + v_b²/(n_b − 1))}, where {@code v = s²/n}.
     *
     * <p>If both samples have zero variance the degrees of freedom are 0/0; the statistic is then ±∞
     * (or the test refused), its p-value does not depend on them, and {@code n_a + n_b − 2} is reported.
     *
     * @throws InsufficientDataException if either sample has fewer than 2 observations
     */
    public static TestResult welchT(Moments a, Moments b, Alternative alternative) {
        String test = "Welch t";
        checkTwo(test, a, b, alternative, 2);
        return welchFromVariances(test, a.variance(), a.count(), b.variance(), b.count(), a.mean() - b.mean(), alternative);
    }

    /**
     * Welch's test with each sample's variance taken as at least the pooled one, max(s², s_p²), and
     * Welch–Satterthwaite degrees of freedom on those variances. Its standard error is never below the
     * pooled test's, so an interval built on it never excludes a value the pooled test keeps; and a
     * small sample whose spread is underestimated (a skewed sample that has not met its tail yet)
     * borrows the other's. Conservative when the variances truly differ.
     *
     * @throws InsufficientDataException if either sample has fewer than 2 observations
     */
    public static TestResult welchTAtLeastPooled(Moments a, Moments b, Alternative alternative) {
        String test = "Welch t, variances at least pooled";
        checkTwo(test, a, b, alternative, 2);
        double pooled = (a.sumSquaredDeviations() + b.sumSquaredDeviations()) / ((double) a.count() + b.count() - 2);
        return welchFromVariances(test, Math.max(a.variance(), pooled), a.count(), Math.max(b.variance(), pooled),
                b.count(), a.mean() - b.mean(), alternative);
    }

    /** Welch's t from the two per-observation variances and counts (shared with {@link RatioSignificance}). */
    static TestResult welchFromVariances(String test, double varianceA, long na, double varianceB, long nb,
                                         double difference, Alternative alternative) {
        double va = varianceA / na;
        double vb = varianceB / nb;
        double se = Math.sqrt(va + vb);
        double statistic = Arguments.ratio(test, difference, se);
        double df = se > 0.0 ? (va + vb) * (va + vb) / (va * va / (na - 1) + vb * vb / (nb - 1)) : (double) na + nb - 2;
        return TestResult.of(test, statistic, df, alternative, difference, se);
    }

    private static TestResult oneSampleT(String test, Moments sample, double mu0, Alternative alternative) {
        Arguments.notNull("sample", sample);
        Arguments.notNull("alternative", alternative);
        Arguments.finite("mu0", mu0);
        Arguments.atLeast(test, "observations", sample.count(), 2);
        double se = sample.standardErrorOfMean();
        double statistic = Arguments.ratio(test, sample.mean() - mu0, se);
        return TestResult.of(test, statistic, sample.count() - 1.0, alternative, sample.mean(), se);
    }

    private static void checkTwo(String test, Moments a, Moments b, Alternative alternative, long minimumPerArm) {
        Arguments.notNull("a", a);
        Arguments.notNull("b", b);
        Arguments.notNull("alternative", alternative);
        Arguments.atLeast(test, "observations in the first sample", a.count(), minimumPerArm);
        Arguments.atLeast(test, "observations in the second sample", b.count(), minimumPerArm);
    }
}
