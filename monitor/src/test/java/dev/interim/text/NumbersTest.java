package dev.interim.text;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import java.math.BigDecimal;
import org.junit.jupiter.api.Test;

/**
 * The rules of number text, written by hand. Sources: rounding ties to the even digit is
 * {@link java.math.RoundingMode#HALF_EVEN} ("banker's rounding", its Javadoc); the decimal a double
 * stands for is {@link BigDecimal#valueOf(double)} (its Javadoc: the canonical string of
 * {@link Double#toString(double)}); the switch to an exponent below 10^-4 is that of {@code %g} in
 * {@link java.util.Formatter}'s Javadoc; an empty CSV cell for a missing value, the en dash for
 * "no value" in a table, ∞ for infinity, thousands separators and no sign on zero are common
 * practice. No statistical values here.
 */
class NumbersTest {
    private static final double NAN = Double.NaN;
    private static final double INF = Double.POSITIVE_INFINITY;

    @Test
    void humanTextShowsNaNOneWayAndTheInfinitiesOneWay() {
        assertThat(Numbers.fixed(NAN, 2)).isEqualTo("–").isEqualTo(Numbers.NONE);
        assertThat(Numbers.significant(NAN, 3)).isEqualTo("–");
        assertThat(Numbers.precise(NAN, 3)).isEqualTo("–");
        assertThat(Numbers.signed(NAN, 3)).isEqualTo("–");
        assertThat(Numbers.probability(NAN)).isEqualTo("–");
        assertThat(Numbers.fixed(INF, 2)).isEqualTo("∞");
        assertThat(Numbers.fixed(-INF, 2)).isEqualTo("-∞");
        assertThat(Numbers.significant(INF, 3)).isEqualTo("∞");
        assertThat(Numbers.precise(-INF, 3)).isEqualTo("-∞");
        assertThat(Numbers.signed(INF, 3)).as("no plus sign on infinity").isEqualTo("∞");
    }

    @Test
    void zeroNeverPrintsWithASign() {
        assertThat(Numbers.fixed(-0.0, 3)).isEqualTo("0.000");
        assertThat(Numbers.fixed(-0.0004, 3)).as("rounds to zero").isEqualTo("0.000");
        assertThat(Numbers.fixed(-0.001, 2)).isEqualTo("0.00");
        assertThat(Numbers.significant(-0.0, 3)).isEqualTo("0");
        assertThat(Numbers.precise(-0.0, 3)).isEqualTo("0");
        assertThat(Numbers.signed(-0.0, 3)).isEqualTo("0");
        assertThat(Numbers.rounded(-0.0001, 2).toPlainString()).isEqualTo("0");
        assertThat(Numbers.plain(-0.0)).isEqualTo("0");
    }

    @Test
    void tinyNumbersReadWithAnExponentNeverAsARowOfZeros() {
        assertThat(Numbers.significant(2.62e-24, 3)).isEqualTo("2.62e-24");
        assertThat(Numbers.significant(2.62e-24, 2)).isEqualTo("2.6e-24");
        assertThat(Numbers.significant(1e-7, 3)).as("trailing zeros dropped").isEqualTo("1e-7");
        assertThat(Numbers.precise(1.2e-7, 3)).as("trailing zeros kept").isEqualTo("1.20e-7");
        assertThat(Numbers.signed(-3.456e-9, 2)).isEqualTo("-3.5e-9");
        assertThat(Numbers.significant(0.0000123, 3)).isEqualTo("1.23e-5");
        // %g: 10^-4 and above stay plain.
        assertThat(Numbers.significant(0.000123456, 3)).isEqualTo("0.000123");
        assertThat(Numbers.significant(0.0001, 3)).isEqualTo("0.0001");
        assertThat(Numbers.significant(0.000099996, 3)).as("rounded first, then judged").isEqualTo("0.0001");
    }

    @Test
    void probabilitiesHaveThreeDigitsAndTwoWithAnExponentBelowAThousandth() {
        assertThat(Numbers.probability(2.62e-24)).isEqualTo("2.6e-24");
        assertThat(Numbers.probability(0.000421)).isEqualTo("4.2e-4");
        assertThat(Numbers.probability(0.00001)).isEqualTo("1.0e-5");
        assertThat(Numbers.probability(0.04213)).isEqualTo("0.0421");
        assertThat(Numbers.probability(0.001)).isEqualTo("0.001");
        assertThat(Numbers.probability(0.5)).isEqualTo("0.5");
        assertThat(Numbers.probability(1)).isEqualTo("1");
        assertThat(Numbers.probability(0)).as("a double that small has no digits left").isEqualTo("< 1e-300");
        assertThat(Numbers.probability(1e-310)).isEqualTo("< 1e-300");
        assertThat(Numbers.pValue(0.04213)).isEqualTo("p = 0.0421");
        assertThat(Numbers.pValue(2.62e-24)).isEqualTo("p = 2.6e-24");
        assertThat(Numbers.pValue(0)).isEqualTo("p < 1e-300");
        assertThat(Numbers.pValue(NAN)).isEqualTo("p = –");
    }

    @Test
    void tiesGoToTheEvenDigitOfTheDecimalTheDoublePrintsAs() {
        assertThat(Numbers.fixed(0.125, 2)).isEqualTo("0.12");
        assertThat(Numbers.fixed(0.375, 2)).isEqualTo("0.38");
        assertThat(Numbers.fixed(2.5, 0)).isEqualTo("2");
        assertThat(Numbers.fixed(3.5, 0)).isEqualTo("4");
        // 2.675 is stored as 2.67499999…; it prints as 2.675, and that decimal is what is rounded.
        assertThat(Numbers.fixed(2.675, 2)).isEqualTo("2.68");
        assertThat(Numbers.significant(0.0125, 2)).isEqualTo("0.012");
        assertThat(Numbers.rounded(0.125, 2)).isEqualByComparingTo("0.12");
        assertThat(Numbers.significantDecimal(1.25, 2)).isEqualByComparingTo("1.2");
    }

    @Test
    void humanNumbersForTablesAndCharts() {
        assertThat(Numbers.fixed(2.0 / 3, 2)).isEqualTo("0.67");
        assertThat(Numbers.fixed(4.87688, 4)).isEqualTo("4.8769");
        assertThat(Numbers.fixed(1.5, 3)).isEqualTo("1.500");
        assertThat(Numbers.significant(12345.6, 3)).isEqualTo("12300");
        assertThat(Numbers.significant(0.5, 4)).isEqualTo("0.5");
        assertThat(Numbers.signed(0.0142, 3)).isEqualTo("+0.0142");
        assertThat(Numbers.signed(2.0, 3)).as("measured values keep their digits").isEqualTo("+2.00");
        assertThat(Numbers.precise(-0.5, 3)).isEqualTo("-0.500");
        assertThat(Numbers.precise(9.996, 3)).isEqualTo("10.0");
        assertThat(Numbers.precise(12345.6, 3)).isEqualTo("12300");
        assertThat(Numbers.count(1234567)).isEqualTo("1,234,567");
        assertThat(Numbers.count(-1234)).isEqualTo("-1,234");
    }

    @Test
    void machineTextIsExactDecimalsAndNeverAnExponent() {
        assertThat(Numbers.given(3.0)).isEqualTo(new BigDecimal("3"));
        assertThat(Numbers.plain(0.025)).isEqualTo("0.025");
        assertThat(Numbers.plain(1 - 0.9)).as("arithmetic noise rounded away at 12 digits").isEqualTo("0.1");
        assertThat(Numbers.plain(1e-20)).isEqualTo("0.00000000000000000001");
        assertThat(Numbers.plain(1e15)).isEqualTo("1000000000000000");
        assertThat(Numbers.rounded(1.9599639845, 6)).isEqualTo(new BigDecimal("1.959964"));
        assertThat(Numbers.rounded(2.0, 6)).isEqualTo(new BigDecimal("2"));
        assertThat(Numbers.significantDecimal(1.3e-7, 6).toPlainString()).isEqualTo("0.00000013");
        assertThat(Numbers.plain(NAN)).as("echoing a bad input").isEqualTo("NaN");
        assertThat(Numbers.plain(-INF)).isEqualTo("-Infinity");
        assertThatThrownBy(() -> Numbers.given(NAN)).isInstanceOf(IllegalArgumentException.class)
                .hasMessage("only a finite number has a decimal form, got NaN");
        assertThatThrownBy(() -> Numbers.rounded(INF, 2)).isInstanceOf(IllegalArgumentException.class);
    }

    @Test
    void aCsvCellIsEmptyWhereThereIsNoNumber() {
        assertThat(Numbers.cell(NAN, 6)).isEmpty();
        assertThat(Numbers.cell(INF, 6)).isEmpty();
        assertThat(Numbers.cell(-INF, 6)).isEmpty();
        assertThat(Numbers.cell(0.0123456789, 6)).isEqualTo("0.0123457");
        assertThat(Numbers.cell(2.62e-24, 3)).isEqualTo("0.00000000000000000000000262");
        assertThat(Numbers.cell(-0.0, 6)).isEqualTo("0");
    }

    /** A quantile's name as percentile: 100·p to at most 6 significant digits, binary noise of 100·0.999 gone. Common practice. */
    @Test
    void aProbabilityIsNamedAsItsPercentile() {
        assertThat(Numbers.percentile(0.99)).isEqualTo("p99");
        assertThat(Numbers.percentile(0.999)).isEqualTo("p99.9");
        assertThat(Numbers.percentile(0.5)).isEqualTo("p50");
        assertThat(Numbers.percentile(0.025)).isEqualTo("p2.5");
        assertThat(Numbers.percentile(0.01)).isEqualTo("p1");
        assertThatThrownBy(() -> Numbers.percentile(99)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("probability in (0, 1)");
    }

    /** A quantile metric's label: the percentile prefixed unless the name says it already. Common practice (no word twice). */
    @Test
    void aQuantileLabelDoesNotRepeatThePercentileTheNameHolds() {
        assertThat(Numbers.percentileLabel(0.99, "render-ms")).isEqualTo("p99 render-ms");
        assertThat(Numbers.percentileLabel(0.99, "payment-latency-p99")).isEqualTo("payment-latency-p99");
        assertThat(Numbers.percentileLabel(0.99, "P99_latency")).isEqualTo("P99_latency");
        assertThat(Numbers.percentileLabel(0.999, "latency-p99.9")).isEqualTo("latency-p99.9");
        // p99 is not p99.9, nor part of p995 or of "sp99".
        assertThat(Numbers.percentileLabel(0.99, "latency-p99.9")).isEqualTo("p99 latency-p99.9");
        assertThat(Numbers.percentileLabel(0.99, "latency-p995")).isEqualTo("p99 latency-p995");
        assertThat(Numbers.percentileLabel(0.99, "sp99")).isEqualTo("p99 sp99");
    }
}
