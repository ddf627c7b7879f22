package dev.interim.chart;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import org.junit.jupiter.api.Test;

/**
 * Tick steps and their labels. Expected values written by hand ("nice numbers" 1, 2, 2.5, 5: common
 * practice). The number words themselves are checked in {@code dev.interim.text.NumbersTest}.
 */
// Source: expected tick values are worked out by hand from the rules stated above (common practice for
// chart axes); no published statistical values here.
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
}
