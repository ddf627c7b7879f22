package dev.interim.stats;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import java.util.SplittableRandom;
import java.util.function.Function;
import org.apache.commons.math3.distribution.NormalDistribution;
import org.apache.commons.math3.distribution.RealDistribution;
import org.apache.commons.math3.distribution.TDistribution;
import org.apache.commons.math3.stat.StatUtils;
import org.apache.commons.math3.stat.inference.TTest;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvFileSource;
import org.junit.jupiter.params.provider.ValueSource;

class MeanSignificanceTest {

    /** Statistics and p-values agree with the reference library to 1e-9 (both compute to ~1e-14). */
    private static final double AGREEMENT = 1e-9;
    private static final TTest REFERENCE = new TTest();
    private static final NormalDistribution REFERENCE_NORMAL = new NormalDistribution(0, 1);

    @ParameterizedTest
    @CsvFileSource(resources = "/reference/stats-nist-handbook-two-sample-t.csv")
    void reproducesTheHandbookTwoSampleExample(long n1, double mean1, double sd1, long n2, double mean2, double sd2,
                                               double pooledSd, double pooledSdTolerance, double t, double tTolerance,
                                               double df, double criticalValue, double criticalValueTolerance) {
        TestResult result = MeanSignificance.pooledT(Moments.of(n1, mean1, sd1), Moments.of(n2, mean2, sd2),
                Alternative.TWO_SIDED);
        double seFactor = Math.sqrt(1.0 / n1 + 1.0 / n2);
        // NIST/SEMATECH e-Handbook §1.3.5.3 (from memory); tolerances from the rounding of the inputs
        assertThat(result.standardError() / seFactor).isCloseTo(pooledSd, within(pooledSdTolerance));
        assertThat(result.statistic()).isCloseTo(t, within(tTolerance));
        assertThat(result.degreesOfFreedom()).isEqualTo(df);
        ConfidenceInterval ci = result.confidenceInterval(0.95);
        double halfWidth = (ci.upper() - ci.lower()) / 2;
        assertThat(halfWidth / result.standardError()).isCloseTo(criticalValue, within(criticalValueTolerance));
        assertThat(result.reject(0.05)).isTrue(); // NIST/SEMATECH e-Handbook §1.3.5.3: |T| > 1.9673, reject
        assertThat(result.estimate()).isCloseTo(mean1 - mean2, within(1e-12)); // first minus second (documented)
    }

    @ParameterizedTest
    @ValueSource(longs = {1, 2, 3, 4, 5})
    void oneSampleAndPairedTMatchTheReferenceLibrary(long stream) {
        SplittableRandom random = new SplittableRandom(stream);
        double[] x = sample(random, 5 + random.nextInt(40), 10, 3);
        double[] y = new double[x.length];
        for (int i = 0; i < x.length; i++) {
            y[i] = x[i] - 0.4 + random.nextGaussian();
        }
        double mu0 = 9.5;

        // reference library: Apache Commons Math 3.6.1 TTest
        TestResult one = assertMatches(alt -> MeanSignificance.oneSampleT(Moments.ofValues(x), mu0, alt),
                REFERENCE.t(mu0, x), REFERENCE.tTest(mu0, x), new TDistribution(x.length - 1.0));
        assertThat(one.degreesOfFreedom()).isEqualTo(x.length - 1.0); // common practice: n - 1 degrees of freedom

        double[] differences = new double[x.length];
        for (int i = 0; i < x.length; i++) {
            differences[i] = x[i] - y[i];
        }
        // reference library: Apache Commons Math 3.6.1 TTest
        assertMatches(alt -> MeanSignificance.pairedT(Moments.ofValues(differences), alt),
                REFERENCE.pairedT(x, y), REFERENCE.pairedTTest(x, y), new TDistribution(x.length - 1.0));
    }

    @ParameterizedTest
    @ValueSource(longs = {1, 2, 3, 4, 5})
    void pooledAndWelchTMatchTheReferenceLibrary(long stream) {
        SplittableRandom random = new SplittableRandom(stream);
        double[] a = sample(random, 3 + random.nextInt(50), 5.2, 1 + random.nextDouble() * 3);
        double[] b = sample(random, 3 + random.nextInt(50), 4.6, 1 + random.nextDouble() * 3);
        Moments ma = Moments.ofValues(a);
        Moments mb = Moments.ofValues(b);

        // reference library: Apache Commons Math 3.6.1 TTest (homoscedastic)
        TestResult pooled = assertMatches(alt -> MeanSignificance.pooledT(ma, mb, alt), REFERENCE.homoscedasticT(a, b),
                REFERENCE.homoscedasticTTest(a, b), new TDistribution(a.length + b.length - 2.0));
        assertThat(pooled.degreesOfFreedom()).isEqualTo(a.length + b.length - 2.0); // common practice: n_a + n_b - 2

        // Welch (1947) / Satterthwaite (1946) degrees of freedom, computed here from the raw data
        double va = StatUtils.variance(a) / a.length;
        double vb = StatUtils.variance(b) / b.length;
        double df = (va + vb) * (va + vb) / (va * va / (a.length - 1) + vb * vb / (b.length - 1));
        // reference library: Apache Commons Math 3.6.1 TTest (Welch)
        TestResult welch = assertMatches(alt -> MeanSignificance.welchT(ma, mb, alt), REFERENCE.t(a, b),
                REFERENCE.tTest(a, b), new TDistribution(df));
        assertClose(welch.degreesOfFreedom(), df); // Welch–Satterthwaite formula, computed above
        // common practice: Welch's df lies between min(n) - 1 and n_a + n_b - 2
        assertThat(welch.degreesOfFreedom()).isBetween(Math.min(a.length, b.length) - 1.0, a.length + b.length - 2.0);
    }

    @ParameterizedTest
    @ValueSource(longs = {1, 2, 3, 4, 5})
    void zTestsMatchTheNormalDistributionOfTheReferenceLibrary(long stream) {
        SplittableRandom random = new SplittableRandom(stream);
        double[] a = sample(random, 30 + random.nextInt(200), 0.3, 2);
        double[] b = sample(random, 30 + random.nextInt(200), 0.0, 1.5);
        double meanA = StatUtils.mean(a);
        double meanB = StatUtils.mean(b);

        // one-sample z, known sigma: z = (mean - mu0) / (sigma / sqrt(n)) (common practice), p from
        // reference library: Apache Commons Math 3.6.1 NormalDistribution
        double z1 = (meanA - 0.1) / (2.0 / Math.sqrt(a.length));
        assertMatches(alt -> MeanSignificance.oneSampleZ(Moments.ofValues(a), 0.1, 2.0, alt), z1,
                2 * REFERENCE_NORMAL.cumulativeProbability(-Math.abs(z1)), REFERENCE_NORMAL);

        // two-sample z, known sigmas (common practice), same reference
        double z2 = (meanA - meanB) / Math.sqrt(4.0 / a.length + 2.25 / b.length);
        assertMatches(alt -> MeanSignificance.twoSampleZ(Moments.ofValues(a), Moments.ofValues(b), 2.0, 1.5, alt), z2,
                2 * REFERENCE_NORMAL.cumulativeProbability(-Math.abs(z2)), REFERENCE_NORMAL);

        // two-sample z, estimated variances: the Welch statistic of the reference library
        // (Apache Commons Math 3.6.1 TTest.t) against its normal distribution
        double z3 = REFERENCE.t(a, b);
        TestResult estimated = assertMatches(
                alt -> MeanSignificance.twoSampleZEstimated(Moments.ofValues(a), Moments.ofValues(b), alt), z3,
                2 * REFERENCE_NORMAL.cumulativeProbability(-Math.abs(z3)), REFERENCE_NORMAL);
        assertThat(estimated.degreesOfFreedom()).isEqualTo(Double.POSITIVE_INFINITY); // documented: z tests
    }

    @Test
    void estimateIsFirstMinusSecond() {
        TestResult r = MeanSignificance.welchT(Moments.of(40, 5.0, 1.0), Moments.of(40, 3.0, 1.0), Alternative.GREATER);
        // documented direction (MeanSignificance javadoc): treatment minus control, positive when the first is higher
        assertThat(r.estimate()).isEqualTo(2.0);
        assertThat(r.statistic()).isPositive();
        assertThat(r.pValue()).isLessThan(0.5);
        assertThat(MeanSignificance.welchT(Moments.of(40, 5.0, 1.0), Moments.of(40, 3.0, 1.0), Alternative.LESS).pValue())
                .isGreaterThan(0.5);
    }

    @Test
    void zeroVarianceWithADifferenceIsInfinitelyStrongEvidence() {
        Moments low = Moments.ofValues(1, 1, 1);
        Moments high = Moments.ofValues(2, 2, 2, 2);
        // documented convention (MeanSignificance javadoc) and the limit of the statistic as the SE tends to 0
        // (common practice): ±∞, p-value 0, or 1 for the opposite one-sided alternative
        for (TestResult r : new TestResult[] {
                MeanSignificance.welchT(low, high, Alternative.TWO_SIDED),
                MeanSignificance.pooledT(low, high, Alternative.TWO_SIDED),
                MeanSignificance.twoSampleZEstimated(low, high, Alternative.TWO_SIDED)}) {
            assertThat(r.statistic()).isEqualTo(Double.NEGATIVE_INFINITY);
            assertThat(r.pValue()).isZero();
            assertThat(r.zEquivalent()).isEqualTo(Double.NEGATIVE_INFINITY);
            assertThat(r.confidenceInterval(0.95)).isEqualTo(new ConfidenceInterval(-1, -1, 0.95));
        }
        assertThat(MeanSignificance.welchT(low, high, Alternative.GREATER).pValue()).isEqualTo(1.0);
        assertThat(MeanSignificance.welchT(low, high, Alternative.LESS).pValue()).isZero();
        // documented: with both variances 0 Welch reports n_a + n_b - 2 degrees of freedom
        assertThat(MeanSignificance.welchT(low, high, Alternative.TWO_SIDED).degreesOfFreedom()).isEqualTo(5.0);
        assertThat(MeanSignificance.oneSampleT(high, 1.5, Alternative.TWO_SIDED).statistic())
                .isEqualTo(Double.POSITIVE_INFINITY);
        assertThat(MeanSignificance.pairedT(high, Alternative.GREATER).pValue()).isZero();
    }

    @Test
    void welchWithOneConstantArmHasTheOtherArmsDegreesOfFreedom() {
        Moments constant = Moments.ofValues(4, 4, 4, 4, 4);
        Moments varying = Moments.ofValues(1, 2, 6, 3, 7, 2, 9);
        TestResult r = MeanSignificance.welchT(varying, constant, Alternative.TWO_SIDED);
        // Welch–Satterthwaite with v_b = 0 reduces to n_a - 1 (algebra of the formula)
        assertThat(r.degreesOfFreedom()).isCloseTo(6.0, within(1e-12));
        // reference library: Apache Commons Math 3.6.1 TTest
        assertClose(r.pValue(), REFERENCE.tTest(new double[] {1, 2, 6, 3, 7, 2, 9}, new double[] {4, 4, 4, 4, 4}));
    }

    @Test
    void welchWithVariancesAtLeastPooledIsWelchOnTheFlooredVariances() {
        double[] a = {12, 15, 11, 30, 14};            // the wider sample
        double[] b = {13, 14, 13, 12, 14, 13, 15, 12}; // the narrower: its variance is floored at the pooled one
        Moments ma = Moments.ofValues(a);
        Moments mb = Moments.ofValues(b);
        double pooled = (ma.sumSquaredDeviations() + mb.sumSquaredDeviations()) / (a.length + b.length - 2);
        TestResult r = MeanSignificance.welchTAtLeastPooled(ma, mb, Alternative.TWO_SIDED);
        // reference library: Apache Commons Math 3.6.1 TTest (Welch's t) on summaries carrying the floored variances
        org.apache.commons.math3.stat.descriptive.StatisticalSummaryValues sa =
                new org.apache.commons.math3.stat.descriptive.StatisticalSummaryValues(ma.mean(),
                        Math.max(ma.variance(), pooled), a.length, 30, 11, StatUtils.sum(a));
        org.apache.commons.math3.stat.descriptive.StatisticalSummaryValues sb =
                new org.apache.commons.math3.stat.descriptive.StatisticalSummaryValues(mb.mean(),
                        Math.max(mb.variance(), pooled), b.length, 15, 12, StatUtils.sum(b));
        assertThat(r.statistic()).isCloseTo(REFERENCE.t(sa, sb), within(1e-12));
        assertClose(r.pValue(), REFERENCE.tTest(sa, sb));
        assertThat(r.standardError()).as("never below the pooled test's")
                .isGreaterThanOrEqualTo(MeanSignificance.pooledT(ma, mb, Alternative.TWO_SIDED).standardError());
    }

    @Test
    void zeroVarianceWithoutADifferenceIsRefused() {
        Moments same = Moments.ofValues(3, 3, 3);
        // documented convention (MeanSignificance javadoc): 0/0 has no p-value; R's t.test also refuses
        // "essentially constant" data (common practice)
        assertThatThrownBy(() -> MeanSignificance.welchT(same, same, Alternative.TWO_SIDED))
                .isInstanceOf(InsufficientDataException.class).hasMessageContaining("0/0");
        assertThatThrownBy(() -> MeanSignificance.pooledT(same, same, Alternative.TWO_SIDED))
                .isInstanceOf(InsufficientDataException.class);
        assertThatThrownBy(() -> MeanSignificance.twoSampleZEstimated(same, same, Alternative.TWO_SIDED))
                .isInstanceOf(InsufficientDataException.class);
        assertThatThrownBy(() -> MeanSignificance.oneSampleT(same, 3.0, Alternative.TWO_SIDED))
                .isInstanceOf(InsufficientDataException.class);
        assertThatThrownBy(() -> MeanSignificance.pairedT(Moments.ofValues(0, 0), Alternative.TWO_SIDED))
                .isInstanceOf(InsufficientDataException.class);
    }

    @Test
    void refusesTooFewObservations() {
        Moments one = Moments.ofValues(1.0);
        Moments two = Moments.ofValues(1.0, 2.0);
        // common practice: a sample variance needs two observations; a mean needs one
        assertThatThrownBy(() -> MeanSignificance.oneSampleT(one, 0, Alternative.TWO_SIDED))
                .isInstanceOf(InsufficientDataException.class).hasMessageContaining("at least 2");
        assertThatThrownBy(() -> MeanSignificance.welchT(one, two, Alternative.TWO_SIDED))
                .isInstanceOf(InsufficientDataException.class).hasMessageContaining("first sample");
        assertThatThrownBy(() -> MeanSignificance.twoSampleZEstimated(two, one, Alternative.TWO_SIDED))
                .isInstanceOf(InsufficientDataException.class).hasMessageContaining("second sample");
        assertThatThrownBy(() -> MeanSignificance.pooledT(one, one, Alternative.TWO_SIDED))
                .isInstanceOf(InsufficientDataException.class).hasMessageContaining("at least 3");
        assertThatThrownBy(() -> MeanSignificance.oneSampleZ(Moments.EMPTY, 0, 1, Alternative.TWO_SIDED))
                .isInstanceOf(InsufficientDataException.class);
        assertThatThrownBy(() -> MeanSignificance.twoSampleZ(one, Moments.EMPTY, 1, 1, Alternative.TWO_SIDED))
                .isInstanceOf(InsufficientDataException.class);
        // common practice: pooled t with one observation in an arm still has n_a + n_b - 2 = 1 degree of freedom
        assertThat(MeanSignificance.pooledT(one, Moments.ofValues(2.0, 4.0), Alternative.TWO_SIDED).degreesOfFreedom())
                .isEqualTo(1.0);
    }

    @Test
    void refusesBadParameters() {
        Moments m = Moments.ofValues(1, 2, 3);
        // common practice: a known sigma is finite and positive, the null value finite
        assertThatThrownBy(() -> MeanSignificance.oneSampleZ(m, 0, 0, Alternative.TWO_SIDED))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("sigma must be finite and > 0");
        assertThatThrownBy(() -> MeanSignificance.twoSampleZ(m, m, 1, -1, Alternative.TWO_SIDED))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("sigmaB");
        assertThatThrownBy(() -> MeanSignificance.oneSampleT(m, Double.NaN, Alternative.TWO_SIDED))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("mu0");
        assertThatThrownBy(() -> MeanSignificance.welchT(m, m, null))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("alternative");
        assertThatThrownBy(() -> MeanSignificance.welchT(null, m, Alternative.LESS))
                .isInstanceOf(IllegalArgumentException.class);
        // and these are bad arguments, not "wait for data"
        assertThatThrownBy(() -> MeanSignificance.oneSampleZ(m, 0, Double.NaN, Alternative.TWO_SIDED))
                .isNotInstanceOf(InsufficientDataException.class);
    }

    /**
     * Runs the test for every alternative: the statistic and the two-sided p-value must match the
     * reference values, and the one-sided p-values the tails of the reference distribution (read as
     * F(-t) for the upper tail, the distribution being symmetric, to keep precision).
     *
     * @return the two-sided result
     */
    private static TestResult assertMatches(Function<Alternative, TestResult> test, double statistic,
                                            double twoSidedP, RealDistribution reference) {
        TestResult twoSided = test.apply(Alternative.TWO_SIDED);
        assertClose(twoSided.statistic(), statistic);
        assertClose(twoSided.pValue(), twoSidedP);
        assertClose(test.apply(Alternative.GREATER).pValue(), reference.cumulativeProbability(-statistic));
        assertClose(test.apply(Alternative.LESS).pValue(), reference.cumulativeProbability(statistic));
        assertThat(test.apply(Alternative.GREATER).statistic()).isEqualTo(twoSided.statistic());
        return twoSided;
    }

    private static void assertClose(double actual, double expected) {
        assertThat(actual).isCloseTo(expected, within(AGREEMENT * Math.max(1.0, Math.abs(expected))));
    }

    private static double[] sample(SplittableRandom random, int n, double mean, double sd) {
        double[] x = new double[n];
        for (int i = 0; i < n; i++) {
            x[i] = mean + sd * random.nextGaussian();
        }
        return x;
    }
}
