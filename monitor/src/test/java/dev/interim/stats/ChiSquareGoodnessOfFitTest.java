package dev.interim.stats;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import java.util.SplittableRandom;
import org.apache.commons.math3.stat.inference.ChiSquareTest;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

class ChiSquareGoodnessOfFitTest {

    private static final ChiSquareTest REFERENCE = new ChiSquareTest();

    @ParameterizedTest
    @ValueSource(longs = {1, 2, 3, 4, 5, 6, 7, 8})
    void matchesTheReferenceLibrary(long stream) {
        SplittableRandom random = new SplittableRandom(stream);
        int k = 2 + random.nextInt(4);
        long[] observed = new long[k];
        double[] shares = new double[k];
        double[] expected = new double[k];
        long total = 0;
        for (int i = 0; i < k; i++) {
            observed[i] = random.nextLong(5, 20_000);
            shares[i] = 1 + random.nextInt(100); // relative weights, not summing to 1
            total += observed[i];
        }
        double shareSum = 0;
        for (double share : shares) {
            shareSum += share;
        }
        for (int i = 0; i < k; i++) {
            expected[i] = total * shares[i] / shareSum;
        }
        ChiSquareGoodnessOfFit result = ChiSquareGoodnessOfFit.test(observed, shares);
        // reference library: Apache Commons Math 3.6.1 ChiSquareTest; 1e-9 as for the other tests
        double statistic = REFERENCE.chiSquare(expected, observed);
        assertThat(result.statistic()).isCloseTo(statistic, within(1e-9 * Math.max(1, statistic)));
        assertThat(result.pValue()).isCloseTo(REFERENCE.chiSquareTest(expected, observed), within(1e-9));
        assertThat(result.degreesOfFreedom()).isEqualTo(k - 1); // Pearson (1900): k - 1 degrees of freedom
    }

    @Test
    void aPerfectFitHasStatisticZeroAndPValueOne() {
        ChiSquareGoodnessOfFit fit = ChiSquareGoodnessOfFit.test(new long[] {500, 500}, new double[] {0.5, 0.5});
        // common practice: observed equal to expected gives X² = 0, p = 1
        assertThat(fit.statistic()).isZero();
        assertThat(fit.pValue()).isEqualTo(1.0);
        assertThat(fit.reject(0.001)).isFalse();
    }

    @Test
    void aClearSampleRatioMismatchIsRejectedAtAStrictLevel() {
        ChiSquareGoodnessOfFit fit = ChiSquareGoodnessOfFit.test(new long[] {10_500, 9_500}, new double[] {50, 50});
        // common practice: sample-ratio checks run at p < 0.001; X² = 2·500²/10000 = 50 (hand computed)
        assertThat(fit.statistic()).isCloseTo(50.0, within(1e-12));
        assertThat(fit.reject(0.001)).isTrue();
        assertThatThrownBy(() -> fit.reject(0)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("alpha must lie strictly between 0 and 1");
    }

    @Test
    void validatesInput() {
        // common practice: matching categories, at least two, counts >= 0, positive shares, some data
        assertThatThrownBy(() -> ChiSquareGoodnessOfFit.test(new long[] {1, 2}, new double[] {1, 1, 1}))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("same length");
        assertThatThrownBy(() -> ChiSquareGoodnessOfFit.test(new long[] {1}, new double[] {1}))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("at least 2");
        assertThatThrownBy(() -> ChiSquareGoodnessOfFit.test(new long[] {1, -2}, new double[] {1, 1}))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining(">= 0");
        assertThatThrownBy(() -> ChiSquareGoodnessOfFit.test(new long[] {1, 2}, new double[] {1, 0}))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("expectedShares[1]");
        assertThatThrownBy(() -> ChiSquareGoodnessOfFit.test(new long[] {1, 2}, new double[] {1, Double.NaN}))
                .isInstanceOf(IllegalArgumentException.class);
        assertThatThrownBy(() -> ChiSquareGoodnessOfFit.test(new long[] {0, 0}, new double[] {1, 1}))
                .isInstanceOf(InsufficientDataException.class);
        assertThatThrownBy(() -> ChiSquareGoodnessOfFit.test(null, new double[] {1, 1}))
                .isInstanceOf(IllegalArgumentException.class);
    }
}
