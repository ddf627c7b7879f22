package dev.interim.chart;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import org.junit.jupiter.api.Test;

/** Tick steps and number words. Expected values written by hand ("nice numbers" 1, 2, 2.5, 5: common practice). */
class AxisAndNumbersTest {
    @Test
    void stepsAreOneTwoTwoAndAHalfOrFiveTimesAPowerOfTen() {
        assertThat(Axis.niceStep(0.68)).isCloseTo(1, within(1e-12));
        assertThat(Axis.niceStep(0.204)).isCloseTo(0.25, within(1e-12));
        assertThat(Axis.niceStep(0.0051)).isCloseTo(0.01, within(1e-12));
        assertThat(Axis.niceStep(3.2)).isCloseTo(5, within(1e-12));
        assertThat(Axis.niceStep(1.7)).isCloseTo(2, within(1e-12));
        assertThat(Axis.niceStep(20)).isCloseTo(20, within(1e-12));
    }

    @Test
    void anAxisCoversItsRangeWithRoundTicksAndMapsThemOntoPixels() {
        Axis y = Axis.covering(-1.3, 6.7, 6, 300, 60);
        assertThat(y.ticks()).containsExactly(-2.0, 0.0, 2.0, 4.0, 6.0, 8.0);
        assertThat(y.pixel(-2)).isEqualTo(300);
        assertThat(y.pixel(8)).isEqualTo(60);
        assertThat(y.pixel(3)).isCloseTo(180, within(1e-9));
        Axis x = Axis.covering(0, 0.0256, 5, 50, 530);
        // 0.0256 / 5 = 0.00512: just above 5 × 10^-3, so the step is 0.01.
        assertThat(x.ticks()).hasSize(4);
        assertThat(x.label(x.ticks().get(1))).isEqualTo("0.01");
        assertThat(x.label(x.ticks().get(3))).isEqualTo("0.03");
    }

    @Test
    void numbersAreWrittenForPeople() {
        assertThat(Numbers.fixed(2.0 / 3, 2)).isEqualTo("0.67");
        assertThat(Numbers.fixed(-0.001, 2)).isEqualTo("0.00");
        assertThat(Numbers.fixed(Double.POSITIVE_INFINITY, 2)).isEqualTo("∞");
        assertThat(Numbers.fixed(Double.NEGATIVE_INFINITY, 2)).isEqualTo("-∞");
        assertThat(Numbers.fixed(Double.NaN, 2)).isEqualTo("–");
        assertThat(Numbers.significant(0.000123456, 3)).isEqualTo("0.000123");
        assertThat(Numbers.significant(12345.6, 3)).isEqualTo("12300");
        assertThat(Numbers.signed(0.0142, 3)).isEqualTo("+0.0142");
        assertThat(Numbers.signed(2.0, 3)).as("measured values keep their digits").isEqualTo("+2.00");
        assertThat(Numbers.precise(-0.5, 3)).isEqualTo("-0.500");
        assertThat(Numbers.precise(9.996, 3)).isEqualTo("10.0");
        assertThat(Numbers.precise(12345.6, 3)).isEqualTo("12300");
        assertThat(Numbers.pValue(0.04213)).isEqualTo("p = 0.0421");
        assertThat(Numbers.pValue(0)).isEqualTo("p < 0.000001");
        assertThat(Numbers.count(1234567)).isEqualTo("1,234,567");
    }

    @Test
    void markupIsEscapedForTextAndAttributes() {
        assertThat(Markup.escape("<a href=\"x\">Tom & 'Jo'</a>\u0007"))
                .isEqualTo("&lt;a href=&quot;x&quot;&gt;Tom &amp; &#39;Jo&#39;&lt;/a&gt;\uFFFD");
        assertThat(Markup.escape(null)).isEmpty();
    }
}
