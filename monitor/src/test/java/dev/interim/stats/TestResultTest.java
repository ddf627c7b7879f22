package dev.interim.stats;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import org.apache.commons.math3.distribution.NormalDistribution;
import org.apache.commons.math3.distribution.TDistribution;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.junit.jupiter.params.provider.ValueSource;

class TestResultTest {

    private static final NormalDistribution REFERENCE_NORMAL = new NormalDistribution(0, 1);

    private static TestResult t(double statistic, double df, Alternative alternative) {
        return TestResult.of("t", statistic, df, alternative, 1.5, 0.5);
    }

    @ParameterizedTest
    @ValueSource(doubles = {0.0, 1.0, -0.1, 1.5, Double.NaN})
    void rejectRefusesAlphaOutsideTheOpenUnitInterval(double alpha) {
        TestResult r = t(2, 10, Alternative.TWO_SIDED);
        // common practice: a significance level lies strictly between 0 and 1
        assertThatThrownBy(() -> r.reject(alpha)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("alpha must lie strictly between 0 and 1");
    }

    @Test
    void rejectsWhenThePValueIsAtMostAlpha() {
        TestResult atFivePercent = new TestResult("z", 1.96, Double.POSITIVE_INFINITY, 0.05,
                Alternative.TWO_SIDED, 0, 1);
        // Lehmann & Romano, Testing Statistical Hypotheses (2005), §3.3 (from memory): the p-value is the
        // smallest level at which the test rejects, so p = alpha rejects
        assertThat(atFivePercent.reject(0.05)).isTrue();
        assertThat(atFivePercent.reject(0.049)).isFalse();
        assertThat(atFivePercent.reject(0.01)).isFalse();
    }

    @ParameterizedTest
    @CsvSource({"0.95, 7", "0.90, 7", "0.99, 30.5", "0.95, 2.2"})
    void intervalsUseTheTQuantileAtTheTestsDegreesOfFreedom(double level, double df) {
        TDistribution reference = new TDistribution(df);
        // reference library: Apache Commons Math 3.6.1 TDistribution quantiles; 1e-9 covers both
        // libraries' quantile iterations
        double twoSidedQ = reference.inverseCumulativeProbability(1 - (1 - level) / 2);
        double oneSidedQ = reference.inverseCumulativeProbability(level);
        ConfidenceInterval two = t(3, df, Alternative.TWO_SIDED).confidenceInterval(level);
        assertThat(two.lower()).isCloseTo(1.5 - twoSidedQ * 0.5, within(1e-9));
        assertThat(two.upper()).isCloseTo(1.5 + twoSidedQ * 0.5, within(1e-9));
        assertThat(two.level()).isEqualTo(level);
        // common practice: a one-sided test pairs with a one-sided interval, open on the other end
        ConfidenceInterval greater = t(3, df, Alternative.GREATER).confidenceInterval(level);
        assertThat(greater.lower()).isCloseTo(1.5 - oneSidedQ * 0.5, within(1e-9));
        assertThat(greater.upper()).isEqualTo(Double.POSITIVE_INFINITY);
        ConfidenceInterval less = t(3, df, Alternative.LESS).confidenceInterval(level);
        assertThat(less.lower()).isEqualTo(Double.NEGATIVE_INFINITY);
        assertThat(less.upper()).isCloseTo(1.5 + oneSidedQ * 0.5, within(1e-9));
    }

    @Test
    void zIntervalsUseTheNormalQuantile() {
        TestResult z = TestResult.of("z", 1, Double.POSITIVE_INFINITY, Alternative.TWO_SIDED, 10, 2);
        ConfidenceInterval ci = z.confidenceInterval(0.95);
        // reference library: Apache Commons Math 3.6.1 NormalDistribution (the familiar 1.959964)
        double q = REFERENCE_NORMAL.inverseCumulativeProbability(0.975);
        assertThat(ci.lower()).isCloseTo(10 - 2 * q, within(1e-9));
        assertThat(ci.upper()).isCloseTo(10 + 2 * q, within(1e-9));
        assertThat(ci.contains(10)).isTrue(); // common practice: the interval holds its estimate
        assertThatThrownBy(() -> z.confidenceInterval(1.0)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("level must lie strictly between 0 and 1");
    }

    @ParameterizedTest
    @CsvSource({"2.5, 3", "-2.5, 3", "0.7, 12", "-4, 1", "3, 250", "0, 5"})
    void zEquivalentPreservesThePValue(double statistic, double df) {
        TDistribution reference = new TDistribution(df);
        for (Alternative alternative : Alternative.values()) {
            double z = t(statistic, df, alternative).zEquivalent();
            TestResult asZ = TestResult.of("z", z, Double.POSITIVE_INFINITY, alternative, 1.5, 0.5);
            // the defining property (TestResult.zEquivalent: t mapped to the z scale through its p-value), against
            // reference library: Apache Commons Math 3.6.1 TDistribution
            double expected = switch (alternative) {
                case GREATER -> reference.cumulativeProbability(-statistic);
                case LESS -> reference.cumulativeProbability(statistic);
                case TWO_SIDED -> 2 * reference.cumulativeProbability(-Math.abs(statistic));
            };
            assertThat(asZ.pValue()).isCloseTo(expected, within(1e-9));
        }
    }

    @ParameterizedTest
    @CsvSource({"10, Infinity", "-10, Infinity", "40, 5", "-40, 5", "8, 1"})
    void pValuesKeepTheirRelativePrecisionInTheFarTails(double statistic, double df) {
        org.apache.commons.math3.distribution.RealDistribution reference = Double.isInfinite(df)
                ? REFERENCE_NORMAL : new TDistribution(df);
        double upper = reference.cumulativeProbability(-statistic);
        double lower = reference.cumulativeProbability(statistic);
        // reference library: Apache Commons Math 3.6.1 NormalDistribution / TDistribution, each tail read
        // as a lower tail (symmetry); 1e-9 relative, which 1 - F(t) would miss by orders of magnitude
        assertThat(t(statistic, df, Alternative.GREATER).pValue()).isCloseTo(upper, within(1e-9 * upper));
        assertThat(t(statistic, df, Alternative.LESS).pValue()).isCloseTo(lower, within(1e-9 * lower));
        double smaller = Math.min(upper, lower);
        assertThat(t(statistic, df, Alternative.TWO_SIDED).pValue()).isCloseTo(2 * smaller, within(2e-9 * smaller));
    }

    @Test
    void zEquivalentIsMonotoneAndShrinksTowardZero() {
        double previous = Double.NEGATIVE_INFINITY;
        for (double s = -30; s <= 30; s += 0.25) {
            double z = t(s, 4, Alternative.TWO_SIDED).zEquivalent();
            // common practice: a t tail is heavier than the normal one, so |z| <= |t|, same sign, increasing in t
            assertThat(z).isGreaterThan(previous);
            assertThat(Math.abs(z)).isLessThanOrEqualTo(Math.abs(s));
            assertThat(Math.signum(z)).isEqualTo(Math.signum(s));
            previous = z;
        }
    }

    @Test
    void zEquivalentIsFiniteInTheFarTails() {
        TDistribution reference = new TDistribution(3);
        double up = t(50, 3, Alternative.TWO_SIDED).zEquivalent();
        double down = t(-50, 3, Alternative.TWO_SIDED).zEquivalent();
        // reference library: Apache Commons Math 3.6.1 TDistribution (upper tail read as F(-t)) and
        // NormalDistribution; relative 1e-9 as both tails are computed without cancellation
        assertThat(up).isFinite().isPositive();
        assertThat(down).isEqualTo(-up); // symmetric reference distributions (common practice)
        double tail = reference.cumulativeProbability(-50);
        assertThat(REFERENCE_NORMAL.cumulativeProbability(-up)).isCloseTo(tail, within(1e-9 * tail));
        assertThat(t(1e6, 3, Alternative.TWO_SIDED).zEquivalent()).isFinite().isGreaterThan(up);
    }

    @Test
    void zEquivalentStaysFiniteAndIncreasingWhereTheTailUnderflows() {
        // Large samples: Welch's t of 39 on 30,000 degrees of freedom has a tail below the smallest
        // double, where inverting it gave an infinite z (which then crossed even infinite boundaries).
        // Expected: common practice (|z| <= |t|, same sign, non-decreasing in t), and beyond the
        // represented tail Wallace's (1959) map sqrt(df·ln(1 + t²/df)) — formula recalled from memory.
        double previous = 0;
        for (double s = 30; s <= 90; s += 0.25) {
            double z = t(s, 30_000, Alternative.TWO_SIDED).zEquivalent();
            assertThat(z).isFinite().isLessThanOrEqualTo(s).isGreaterThanOrEqualTo(previous - 1e-9);
            assertThat(t(-s, 30_000, Alternative.TWO_SIDED).zEquivalent()).isEqualTo(-z);
            previous = z;
        }
        double far = t(80, 30_000, Alternative.TWO_SIDED).zEquivalent();
        assertThat(far).isCloseTo(Math.sqrt(30_000 * Math.log1p(80.0 * 80 / 30_000)), within(1e-12));
    }

    @Test
    void zEquivalentOfAZTestIsTheStatistic() {
        // definition: the normal scale is the z scale already
        assertThat(TestResult.of("z", 2.34, Double.POSITIVE_INFINITY, Alternative.LESS, 0, 1).zEquivalent())
                .isEqualTo(2.34);
    }

    @Test
    void constructorRejectsImpossibleResults() {
        // common practice: a result that no test could produce is refused
        assertThatThrownBy(() -> new TestResult("t", 1, 0, 0.5, Alternative.TWO_SIDED, 0, 1))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("degreesOfFreedom");
        assertThatThrownBy(() -> new TestResult("t", 1, 3, 1.5, Alternative.TWO_SIDED, 0, 1))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("pValue");
        assertThatThrownBy(() -> new TestResult("t", Double.NaN, 3, 0.5, Alternative.TWO_SIDED, 0, 1))
                .isInstanceOf(IllegalArgumentException.class);
        assertThatThrownBy(() -> new TestResult(" ", 1, 3, 0.5, Alternative.TWO_SIDED, 0, 1))
                .isInstanceOf(IllegalArgumentException.class);
        assertThatThrownBy(() -> new TestResult("t", 1, 3, 0.5, null, 0, 1))
                .isInstanceOf(IllegalArgumentException.class);
        assertThatThrownBy(() -> new TestResult("t", 1, 3, 0.5, Alternative.TWO_SIDED, 0, -1))
                .isInstanceOf(IllegalArgumentException.class);
        assertThatThrownBy(() -> new ConfidenceInterval(2, 1, 0.95)).isInstanceOf(IllegalArgumentException.class);
    }
}
