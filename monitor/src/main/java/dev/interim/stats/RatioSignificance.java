package dev.interim.stats;

/**
 * Tests of a ratio of means over independent units (a metric whose events are clustered in the
 * units that were randomised: errors per request, latency per request, revenue per session), with
 * the delta-method variance of {@link RatioMoments}.
 *
 * <p>The two-sample test is Welch's t on the linearised unit values (X − R·Y)/ȳ of each arm: the
 * estimate is R_a − R_b, its standard error √(Var(R_a) + Var(R_b)) by the delta method (Deng,
 * Knoblich &amp; Lu 2018, KDD), and the degrees of freedom Welch–Satterthwaite's on those variances,
 * so that small samples are judged on t as the event-level means are. The monitor uses
 * {@link #twoSampleAtLeastPooled}: the same with each arm's variance at least the one pooled under no
 * change ({@link #twoSampleUnderNull}).
 */
public final class RatioSignificance {
    private RatioSignificance() {
    }

    /**
     * R_a − R_b by Welch's t on linearised unit values.
     *
     * @throws InsufficientDataException with fewer than 2 units in an arm, a zero mean denominator,
     *                                   or no spread in either arm
     */
    public static TestResult twoSample(RatioMoments a, RatioMoments b, Alternative alternative) {
        String test = "delta-method Welch t";
        checkTwo(test, a, b, alternative);
        double sa = a.linearisedVariance();
        double sb = b.linearisedVariance();
        if (sa == 0 && sb == 0) {
            throw new InsufficientDataException(test + ": no unit differs from another in either arm yet, so the"
                    + " ratio has no variance; wait for data that vary");
        }
        return MeanSignificance.welchFromVariances(test, sa, a.count(), sb, b.count(), a.ratio() - b.ratio(), alternative);
    }

    /**
     * R_a − R_b judged with the variance it has when the arms do not differ: the statistic of
     * {@link #twoSample}'s estimate over the pooled standard error under that null. The common ratio
     * R₀ = Σx/Σy over both arms linearises every unit, d = x − R₀·y; the within-arm sums of squares of
     * d are pooled on n_a + n_b − 2 degrees of freedom and scaled by the pooled mean denominator ȳ₀:
     * se₀² = s_d² / ȳ₀² · (1/n_a + 1/n_b). As the pooled t statistic approximates the permutation test
     * (exact when the arms' distributions are the same), it holds its level under an uneven split
     * with skewed unit sums, where Welch's statistic, whose variance comes mostly from the smaller arm,
     * rejects too often on the side where that arm's sample missed its tail.
     *
     * @throws InsufficientDataException as {@link #twoSample}, or when the pooled residuals have no spread
     */
    public static TestResult twoSampleUnderNull(RatioMoments a, RatioMoments b, Alternative alternative) {
        String test = "delta-method pooled t";
        checkTwo(test, a, b, alternative);
        double na = a.count();
        double nb = b.count();
        double sumY = na * a.meanY() + nb * b.meanY();
        if (sumY == 0) {
            throw new InsufficientDataException(test + ": the denominators sum to 0; wait for events that carry them");
        }
        double r0 = (na * a.meanX() + nb * b.meanX()) / sumY;
        double ss = residual(a, r0) + residual(b, r0);
        double df = na + nb - 2;
        double meanY = sumY / (na + nb);
        double se = Math.sqrt(ss / df / (meanY * meanY) * (1 / na + 1 / nb));
        double difference = a.ratio() - b.ratio();
        return TestResult.of(test, Arguments.ratio(test, difference, se), df, alternative, difference, se);
    }

    /** Σ(d − d̄)² of d = x − r·y within one arm, from its moments. */
    private static double residual(RatioMoments m, double r) {
        return Math.max(0, m.sumSquaredDeviationsX() - 2 * r * m.sumCrossDeviations() + r * r * m.sumSquaredDeviationsY());
    }

    /**
     * {@link #twoSample} with each arm's linearised variance taken as at least the pooled one of
     * {@link #twoSampleUnderNull} (as {@link MeanSignificance#welchTAtLeastPooled} does for means): the
     * standard error of the repeated confidence interval, never narrower than the statistic's.
     */
    public static TestResult twoSampleAtLeastPooled(RatioMoments a, RatioMoments b, Alternative alternative) {
        String test = "delta-method Welch t, variances at least pooled";
        TestResult pooled = twoSampleUnderNull(a, b, alternative);
        double na = a.count();
        double nb = b.count();
        // The pooled per-unit variance of the ratio: se₀² / (1/n_a + 1/n_b).
        double perUnit = pooled.standardError() * pooled.standardError() / (1 / na + 1 / nb);
        double sa = Math.max(a.linearisedVariance(), perUnit);
        double sb = Math.max(b.linearisedVariance(), perUnit);
        return MeanSignificance.welchFromVariances(test, sa, a.count(), sb, b.count(), a.ratio() - b.ratio(), alternative);
    }

    /**
     * R against a fixed value: t on n − 1 degrees of freedom with the delta-method standard error.
     *
     * @throws InsufficientDataException with fewer than 2 units, a zero mean denominator or no spread
     */
    public static TestResult oneSample(RatioMoments sample, double value, Alternative alternative) {
        String test = "delta-method t";
        Arguments.notNull("sample", sample);
        Arguments.notNull("alternative", alternative);
        Arguments.finite("value", value);
        Arguments.atLeast(test, "units", sample.count(), 2);
        requireDenominator(test, sample);
        double se = Math.sqrt(sample.ratioVariance());
        double difference = sample.ratio() - value;
        return TestResult.of(test, Arguments.ratio(test, difference, se), sample.count() - 1.0, alternative,
                sample.ratio(), se);
    }

    private static void checkTwo(String test, RatioMoments a, RatioMoments b, Alternative alternative) {
        Arguments.notNull("a", a);
        Arguments.notNull("b", b);
        Arguments.notNull("alternative", alternative);
        Arguments.atLeast(test, "units in the first sample", a.count(), 2);
        Arguments.atLeast(test, "units in the second sample", b.count(), 2);
        requireDenominator(test, a);
        requireDenominator(test, b);
    }

    private static void requireDenominator(String test, RatioMoments m) {
        if (m.meanY() == 0) {
            throw new InsufficientDataException(test + ": the denominator sums to 0 in an arm, so its ratio is undefined;"
                    + " wait for events that carry the denominator");
        }
    }
}
