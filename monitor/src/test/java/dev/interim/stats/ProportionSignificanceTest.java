package dev.interim.stats;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import java.util.SplittableRandom;
import org.apache.commons.math3.distribution.NormalDistribution;
import org.apache.commons.math3.stat.inference.ChiSquareTest;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

class ProportionSignificanceTest {

    private static final NormalDistribution REFERENCE_NORMAL = new NormalDistribution(0, 1);
    private static final ChiSquareTest REFERENCE_CHI_SQUARE = new ChiSquareTest();

    @ParameterizedTest
    @ValueSource(longs = {1, 2, 3, 4, 5, 6})
    void twoProportionZMatchesIndependentComputations(long stream) {
        SplittableRandom random = new SplittableRandom(stream);
        long na = 50 + random.nextInt(5000);
        long nb = 50 + random.nextInt(5000);
        long sa = random.nextLong(1, na);
        long sb = random.nextLong(1, nb);
        ProportionCounts a = new ProportionCounts(sa, na);
        ProportionCounts b = new ProportionCounts(sb, nb);
        TestResult r = ProportionSignificance.twoProportionZ(a, b, Alternative.TWO_SIDED);

        double pa = (double) sa / na;
        double pb = (double) sb / nb;
        double pooled = (double) (sa + sb) / (na + nb);
        double z = (pa - pb) / Math.sqrt(pooled * (1 - pooled) * (1.0 / na + 1.0 / nb));
        // common practice (pooled two-proportion z), p from reference library: Apache Commons Math 3.6.1
        // NormalDistribution; 1e-9 agreement as elsewhere
        assertThat(r.statistic()).isCloseTo(z, within(1e-9 * Math.max(1, Math.abs(z))));
        assertThat(r.pValue()).isCloseTo(2 * REFERENCE_NORMAL.cumulativeProbability(-Math.abs(z)), within(1e-9));
        assertThat(ProportionSignificance.twoProportionZ(a, b, Alternative.GREATER).pValue())
                .isCloseTo(REFERENCE_NORMAL.cumulativeProbability(-z), within(1e-9));
        assertThat(ProportionSignificance.twoProportionZ(a, b, Alternative.LESS).pValue())
                .isCloseTo(REFERENCE_NORMAL.cumulativeProbability(z), within(1e-9));

        // reference library: Apache Commons Math 3.6.1 ChiSquareTest on the 2×2 table; the squared
        // pooled z is Pearson's X² without continuity correction (Agresti 2013, §3.1, from memory)
        long[][] table = {{sa, na - sa}, {sb, nb - sb}};
        double chiSquare = REFERENCE_CHI_SQUARE.chiSquare(table);
        assertThat(r.statistic() * r.statistic()).isCloseTo(chiSquare, within(1e-9 * Math.max(1, chiSquare)));
        assertThat(r.pValue()).isCloseTo(REFERENCE_CHI_SQUARE.chiSquareTest(table), within(1e-9));

        // documented: the estimate is first minus second, its standard error unpooled (Wald)
        assertThat(r.estimate()).isCloseTo(pa - pb, within(1e-15));
        assertThat(r.standardError())
                .isCloseTo(Math.sqrt(pa * (1 - pa) / na + pb * (1 - pb) / nb), within(1e-15));
    }

    @ParameterizedTest
    @ValueSource(longs = {1, 2, 3, 4, 5, 6})
    void oneProportionZMatchesIndependentComputations(long stream) {
        SplittableRandom random = new SplittableRandom(stream);
        long n = 20 + random.nextInt(10_000);
        long s = random.nextLong(0, n + 1);
        double p0 = 0.05 + 0.9 * random.nextDouble();
        TestResult r = ProportionSignificance.oneProportionZ(new ProportionCounts(s, n), p0, Alternative.TWO_SIDED);

        double rate = (double) s / n;
        double z = (rate - p0) / Math.sqrt(p0 * (1 - p0) / n);
        // common practice (score z with the null variance), p from reference library: Apache Commons
        // Math 3.6.1 NormalDistribution
        assertThat(r.statistic()).isCloseTo(z, within(1e-9 * Math.max(1, Math.abs(z))));
        assertThat(r.pValue()).isCloseTo(2 * REFERENCE_NORMAL.cumulativeProbability(-Math.abs(z)), within(1e-9));
        // reference library: Apache Commons Math 3.6.1 ChiSquareTest goodness of fit on (successes,
        // failures) against (p0, 1 - p0); z² = X² (algebra of the two statistics)
        double[] expected = {n * p0, n * (1 - p0)};
        long[] observed = {s, n - s};
        assertThat(r.statistic() * r.statistic())
                .isCloseTo(REFERENCE_CHI_SQUARE.chiSquare(expected, observed), within(1e-9 * Math.max(1, z * z)));
        assertThat(r.estimate()).isEqualTo(rate);
    }

    @Test
    void noSuccessesOrNoFailuresInEitherArmIsRefused() {
        // documented convention (ProportionSignificance javadoc): pooled SE 0 and difference 0, 0/0
        assertThatThrownBy(() -> ProportionSignificance.twoProportionZ(new ProportionCounts(0, 100),
                new ProportionCounts(0, 80), Alternative.GREATER))
                .isInstanceOf(InsufficientDataException.class).hasMessageContaining("0/0");
        assertThatThrownBy(() -> ProportionSignificance.twoProportionZ(new ProportionCounts(100, 100),
                new ProportionCounts(80, 80), Alternative.TWO_SIDED))
                .isInstanceOf(InsufficientDataException.class);
    }

    @Test
    void oneArmAtZeroStillHasAFiniteStatistic() {
        TestResult r = ProportionSignificance.twoProportionZ(new ProportionCounts(0, 100), new ProportionCounts(5, 100),
                Alternative.LESS);
        // common practice: the pooled rate 0.025 gives a positive null SE, z = -0.05 / sqrt(0.025·0.975·0.02)
        assertThat(r.statistic()).isCloseTo(-0.05 / Math.sqrt(0.025 * 0.975 * 0.02), within(1e-12));
        assertThat(r.standardError()).isCloseTo(Math.sqrt(0.05 * 0.95 / 100), within(1e-15));
    }

    @Test
    void refusesBadInput() {
        ProportionCounts some = new ProportionCounts(3, 10);
        // common practice: a rate needs trials; a null rate lies strictly inside (0, 1)
        assertThatThrownBy(() -> ProportionSignificance.twoProportionZ(ProportionCounts.EMPTY, some, Alternative.TWO_SIDED))
                .isInstanceOf(InsufficientDataException.class).hasMessageContaining("first sample");
        assertThatThrownBy(() -> ProportionSignificance.oneProportionZ(ProportionCounts.EMPTY, 0.5, Alternative.TWO_SIDED))
                .isInstanceOf(InsufficientDataException.class);
        assertThatThrownBy(() -> ProportionSignificance.oneProportionZ(some, 0.0, Alternative.TWO_SIDED))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("p0 must lie strictly between 0 and 1");
        assertThatThrownBy(() -> ProportionSignificance.oneProportionZ(some, 1.0, Alternative.TWO_SIDED))
                .isInstanceOf(IllegalArgumentException.class);
        assertThatThrownBy(() -> ProportionSignificance.twoProportionZ(some, some, null))
                .isInstanceOf(IllegalArgumentException.class);
    }

    @Test
    void atLeastPooledTakesEachArmsVarianceAsAtLeastThePooledOne() {
        ProportionCounts a = new ProportionCounts(12, 400);
        ProportionCounts b = new ProportionCounts(4, 380);
        TestResult r = ProportionSignificance.twoProportionZAtLeastPooled(a, b, Alternative.GREATER);
        // By hand: p̄ = 16/780; the second arm's p(1 − p) is below p̄(1 − p̄), so it takes the pooled one.
        double pooled = 16.0 / 780 * (1 - 16.0 / 780);
        double se = Math.sqrt(Math.max(0.03 * 0.97, pooled) / 400 + pooled / 380);
        org.assertj.core.api.Assertions.assertThat(r.standardError()).isCloseTo(se, org.assertj.core.api.Assertions.within(1e-15));
        org.assertj.core.api.Assertions.assertThat(r.statistic()).isCloseTo((0.03 - 4.0 / 380) / se,
                org.assertj.core.api.Assertions.within(1e-12));
        org.assertj.core.api.Assertions.assertThat(r.standardError()).as("never below the score test's")
                .isGreaterThanOrEqualTo(ProportionSignificance.twoProportionZ(a, b, Alternative.GREATER).standardError()
                        * Math.abs(ProportionSignificance.twoProportionZ(a, b, Alternative.GREATER).estimate())
                        / Math.abs(ProportionSignificance.twoProportionZ(a, b, Alternative.GREATER).statistic())
                        - 1e-15);
    }
}
