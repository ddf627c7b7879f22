package dev.interim.stats;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import java.math.BigDecimal;
import java.math.MathContext;
import java.util.SplittableRandom;
import org.apache.commons.math3.stat.descriptive.SummaryStatistics;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

class RunningMomentsTest {

    private static final double EPS = Math.ulp(1.0);
    private static final MathContext EXACT_ENOUGH = new MathContext(60);

    @ParameterizedTest
    @ValueSource(longs = {11, 12, 13})
    void matchesAnExactBigDecimalComputation(long stream) {
        SplittableRandom random = new SplittableRandom(stream);
        int n = 10_000;
        double[] data = new double[n];
        RunningMoments running = new RunningMoments();
        for (int i = 0; i < n; i++) {
            data[i] = 0.5 + random.nextGaussian();
            running.accept(data[i]);
        }
        BigDecimal sum = BigDecimal.ZERO;
        for (double x : data) {
            sum = sum.add(new BigDecimal(x)); // exact: every double is a finite binary fraction
        }
        BigDecimal exactMean = sum.divide(BigDecimal.valueOf(n), EXACT_ENOUGH);
        BigDecimal exactM2 = BigDecimal.ZERO;
        double sumOfSquares = 0;
        for (double x : data) {
            BigDecimal deviation = new BigDecimal(x).subtract(exactMean);
            exactM2 = exactM2.add(deviation.multiply(deviation));
            sumOfSquares += x * x;
        }
        Moments moments = running.snapshot();
        double m2 = exactM2.doubleValue();

        // Chan, Golub & LeVeque (1983): an updating pass has error of order n·κ·ε relative, with
        // condition number κ = ||x|| / sqrt(M2); that is n·ε·||x||·sqrt(M2) absolute (factor 4 for the
        // constants). The mean's recursive update rounds at most once per step: n·ε·max|x|.
        double m2Tolerance = 4 * n * EPS * Math.sqrt(sumOfSquares) * Math.sqrt(m2);
        assertThat(moments.sumSquaredDeviations()) // exact oracle: BigDecimal, 60 digits
                .isCloseTo(m2, within(m2Tolerance));
        assertThat(moments.mean()) // exact oracle: BigDecimal, 60 digits
                .isCloseTo(exactMean.doubleValue(), within(4 * n * EPS * maxAbs(data)));
        assertThat(moments.count()).isEqualTo(n); // common practice: one count per accepted value
    }

    @Test
    void agreesWithAnIndependentLibraryOnSampleAndPopulationVariance() {
        SplittableRandom random = new SplittableRandom(21);
        SummaryStatistics reference = new SummaryStatistics();
        RunningMoments running = new RunningMoments();
        for (int i = 0; i < 500; i++) {
            double x = 100 + 15 * random.nextGaussian();
            reference.addValue(x);
            running.accept(x);
        }
        Moments m = running.snapshot();
        // reference library: Apache Commons Math 3.6.1 SummaryStatistics; 1e-12 relative is a few
        // hundred roundings, both being accurate updating algorithms
        assertThat(m.mean()).isCloseTo(reference.getMean(), within(1e-12 * reference.getMean()));
        assertThat(m.variance()).isCloseTo(reference.getVariance(), within(1e-12 * reference.getVariance()));
        assertThat(m.populationVariance())
                .isCloseTo(reference.getPopulationVariance(), within(1e-12 * reference.getPopulationVariance()));
        assertThat(m.standardDeviation())
                .isCloseTo(reference.getStandardDeviation(), within(1e-12 * reference.getStandardDeviation()));
        // common practice: the standard error of the mean is s / sqrt(n)
        assertThat(m.standardErrorOfMean())
                .isCloseTo(reference.getStandardDeviation() / Math.sqrt(500), within(1e-12));
    }

    @ParameterizedTest
    @ValueSource(doubles = {Double.NaN, Double.POSITIVE_INFINITY, Double.NEGATIVE_INFINITY})
    void refusesNonFiniteValuesAndKeepsItsState(double bad) {
        RunningMoments running = new RunningMoments();
        running.accept(1.0);
        running.accept(3.0);
        // common practice: one NaN would poison every later result, so it is refused, not absorbed
        assertThatThrownBy(() -> running.accept(bad))
                .isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("finite")
                .hasMessageContaining("filter out or map");
        assertThat(running.snapshot()).isEqualTo(new Moments(2, 2.0, 2.0)); // common practice: state unchanged
    }

    @Test
    void refusesAValueWhoseSquaredDeviationOverflows() {
        RunningMoments running = new RunningMoments();
        running.accept(-1e200);
        // common practice: (1e200 + 1e200)² exceeds the double range; refusing beats returning Infinity
        assertThatThrownBy(() -> running.accept(1e200))
                .isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("overflows");
        assertThat(running.count()).isEqualTo(1); // common practice: state unchanged after a refusal
    }

    @Test
    void emptyTallyHasCountZeroAndMeanNaN() {
        RunningMoments running = new RunningMoments();
        // documented convention for empty input (RunningMoments and Moments javadoc)
        assertThat(running.count()).isZero();
        assertThat(running.mean()).isNaN();
        assertThat(running.snapshot()).isEqualTo(Moments.EMPTY);
        assertThat(Moments.EMPTY.variance()).isNaN();
        assertThat(Moments.EMPTY.populationVariance()).isNaN();
        assertThat(Moments.EMPTY.standardErrorOfMean()).isNaN();
        assertThat(Moments.ofValues()).isEqualTo(Moments.EMPTY);
    }

    @Test
    void singleObservationHasZeroDeviationAndUndefinedSampleVariance() {
        RunningMoments running = new RunningMoments();
        running.accept(42.5);
        Moments m = running.snapshot();
        // common practice: the sample variance divides by n - 1 = 0, so it is undefined; the population variance is 0
        assertThat(m).isEqualTo(new Moments(1, 42.5, 0.0));
        assertThat(m.variance()).isNaN();
        assertThat(m.standardDeviation()).isNaN();
        assertThat(m.populationVariance()).isZero();
    }

    @Test
    void combineWithEmptyIsExactAndReturnsThis() {
        RunningMoments x = new RunningMoments();
        x.accept(0.1);
        x.accept(0.7);
        x.accept(0.2);
        Moments before = x.snapshot();
        // common practice: the empty sample is the identity of the merge, bit for bit
        assertThat(x.combine(new RunningMoments())).isSameAs(x);
        assertThat(x.snapshot()).isEqualTo(before);
        RunningMoments empty = new RunningMoments();
        assertThat(empty.combine(x).snapshot()).isEqualTo(before);
        assertThat(Moments.EMPTY.plus(before)).isEqualTo(before);
        assertThat(before.plus(Moments.EMPTY)).isEqualTo(before);
    }

    @Test
    void combineLeavesTheOtherTallyAndEarlierSnapshotsUnchanged() {
        RunningMoments a = new RunningMoments();
        RunningMoments b = new RunningMoments();
        a.accept(1);
        b.accept(5);
        b.accept(7);
        Moments snapshotOfA = a.snapshot();
        Moments snapshotOfB = b.snapshot();
        a.combine(b);
        a.accept(100);
        // common practice: snapshots are values; merging reads the other tally without changing it
        assertThat(snapshotOfA).isEqualTo(new Moments(1, 1.0, 0.0));
        assertThat(b.snapshot()).isEqualTo(snapshotOfB);
        // Chan, Golub & LeVeque (1983) merge of {1} and {5, 7}: mean 13/3, M2 = 2 + 5²·(1·2/3) = 56/3 (hand computed)
        RunningMoments c = new RunningMoments();
        c.accept(1);
        assertThat(c.combine(b).snapshot().mean()).isCloseTo(13.0 / 3, within(4 * EPS * 5));
        assertThat(c.snapshot().sumSquaredDeviations()).isCloseTo(56.0 / 3, within(8 * EPS * 19));
    }

    private static double maxAbs(double[] data) {
        double max = 0;
        for (double x : data) {
            max = Math.max(max, Math.abs(x));
        }
        return max;
    }

    /**
     * Removing what was accepted gives the tally of what remains (checked against a fresh one-pass
     * tally of the remaining values; exact oracle of the same data, common practice).
     */
    @org.junit.jupiter.api.Test
    void removingAValueLeavesTheTallyOfTheRest() {
        java.util.SplittableRandom random = new java.util.SplittableRandom(77);
        double[] values = new double[200];
        RunningMoments running = new RunningMoments();
        for (int i = 0; i < values.length; i++) {
            values[i] = 50 + 10 * random.nextDouble();
            running.accept(values[i]);
        }
        for (int i = 0; i < 150; i++) {
            running.remove(values[i]);
        }
        Moments rest = Moments.ofValues(java.util.Arrays.copyOfRange(values, 150, 200));
        org.assertj.core.api.Assertions.assertThat(running.count()).isEqualTo(50);
        org.assertj.core.api.Assertions.assertThat(running.mean()).isCloseTo(rest.mean(), org.assertj.core.api.Assertions.within(1e-12));
        org.assertj.core.api.Assertions.assertThat(running.snapshot().variance())
                .isCloseTo(rest.variance(), org.assertj.core.api.Assertions.within(1e-9 * rest.variance()));
        org.assertj.core.api.Assertions.assertThatThrownBy(() -> new RunningMoments().remove(1))
                .hasMessageContaining("empty");
    }
}
