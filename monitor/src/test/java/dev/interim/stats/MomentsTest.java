package dev.interim.stats;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import org.apache.commons.math3.stat.descriptive.SummaryStatistics;
import org.junit.jupiter.api.Test;

class MomentsTest {

    @Test
    void ofSummaryStatisticsRoundTripsTheStandardDeviation() {
        Moments m = Moments.of(249, 20.14458, 6.41470);
        // common practice: M2 = s²·(n − 1), so the sample sd comes back; 1e-15 relative is a few roundings
        assertThat(m.count()).isEqualTo(249);
        assertThat(m.mean()).isEqualTo(20.14458);
        assertThat(m.standardDeviation()).isCloseTo(6.41470, within(6.41470 * 1e-15));
        assertThat(m.sumSquaredDeviations()).isCloseTo(6.41470 * 6.41470 * 248, within(1e-9));
    }

    @Test
    void ofSummaryStatisticsAgreesWithAnIndependentLibraryOnTheSameData() {
        double[] values = {3.1, 4.1, 5.9, 2.6, 5.3, 5.8, 9.7, 9.3};
        SummaryStatistics reference = new SummaryStatistics();
        for (double v : values) {
            reference.addValue(v);
        }
        Moments fromSummary = Moments.of(values.length, reference.getMean(), reference.getStandardDeviation());
        Moments fromValues = Moments.ofValues(values);
        // reference library: Apache Commons Math 3.6.1 SummaryStatistics; 1e-13 relative, a handful of roundings
        assertThat(fromSummary.variance()).isCloseTo(fromValues.variance(), within(1e-13 * fromValues.variance()));
        assertThat(fromSummary.variance()).isCloseTo(reference.getVariance(), within(1e-13 * reference.getVariance()));
    }

    @Test
    void ofWithCountZeroOrOneIgnoresTheStandardDeviation() {
        // documented convention (Moments.of javadoc): the sd of at most one value carries no information
        assertThat(Moments.of(0, 5.0, 2.0)).isEqualTo(Moments.EMPTY);
        assertThat(Moments.of(1, 5.0, 2.0)).isEqualTo(new Moments(1, 5.0, 0.0));
    }

    @Test
    void ofValidatesItsArguments() {
        // common practice: reject impossible summaries with a message naming the rule
        assertThatThrownBy(() -> Moments.of(-1, 0, 1)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("count must be >= 0");
        assertThatThrownBy(() -> Moments.of(10, Double.NaN, 1)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("mean must be a finite number");
        assertThatThrownBy(() -> Moments.of(10, Double.POSITIVE_INFINITY, 1))
                .isInstanceOf(IllegalArgumentException.class);
        assertThatThrownBy(() -> Moments.of(10, 0, -0.5)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("standard deviation must be finite and >= 0");
        assertThatThrownBy(() -> Moments.of(10, 0, Double.NaN)).isInstanceOf(IllegalArgumentException.class);
        assertThatThrownBy(() -> Moments.of(10, 0, Double.POSITIVE_INFINITY))
                .isInstanceOf(IllegalArgumentException.class);
    }

    @Test
    void constructorRejectsInconsistentStates() {
        // common practice: a snapshot that no sample could produce is refused
        assertThatThrownBy(() -> new Moments(0, 0.0, 0.0)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("Moments.EMPTY");
        assertThatThrownBy(() -> new Moments(3, 1.0, -1.0)).isInstanceOf(IllegalArgumentException.class);
        assertThatThrownBy(() -> new Moments(1, 1.0, 0.5)).isInstanceOf(IllegalArgumentException.class);
        assertThatThrownBy(() -> new Moments(2, Double.NaN, 0.5)).isInstanceOf(IllegalArgumentException.class);
        assertThatThrownBy(() -> Moments.ofValues(1.0, Double.NaN)).isInstanceOf(IllegalArgumentException.class);
    }

    @Test
    void plusIsTheMomentsOfTheUnion() {
        double[] left = {2, 4, 4, 4};
        double[] right = {5, 5, 7, 9};
        Moments union = Moments.ofValues(2, 4, 4, 4, 5, 5, 7, 9);
        Moments merged = Moments.ofValues(left).plus(Moments.ofValues(right));
        // common practice (textbook data): {2,4,4,4,5,5,7,9} has mean 5 and population variance 4
        assertThat(merged.count()).isEqualTo(8);
        assertThat(merged.mean()).isCloseTo(5.0, within(1e-15 * 5));
        assertThat(merged.populationVariance()).isCloseTo(4.0, within(1e-14));
        assertThat(merged.sumSquaredDeviations()).isCloseTo(union.sumSquaredDeviations(), within(1e-13));
        // Chan, Golub & LeVeque (1983): merging in either order gives the same union
        Moments reversed = Moments.ofValues(right).plus(Moments.ofValues(left));
        assertThat(reversed.mean()).isCloseTo(merged.mean(), within(1e-14));
        assertThat(reversed.sumSquaredDeviations()).isCloseTo(merged.sumSquaredDeviations(), within(1e-13));
    }

    @Test
    void plusRefusesCountOverflow() {
        Moments huge = new Moments(Long.MAX_VALUE, 1.0, 0.0);
        // common practice: a silent wrap-around to a negative count would corrupt every later look
        assertThatThrownBy(() -> huge.plus(new Moments(1, 1.0, 0.0))).isInstanceOf(ArithmeticException.class);
    }
}
