package dev.interim.chart;

import dev.interim.text.Numbers;
import java.util.ArrayList;
import java.util.List;

/**
 * A linear axis: a value range widened to round tick values (steps of 1, 2, 2.5 or 5 times a power
 * of ten, the usual "nice numbers" of chart axes; common practice) and mapped onto a pixel range.
 * Immutable.
 */
final class Axis {
    private final double low;
    private final double high;
    private final double step;
    private final double pixelLow;
    private final double pixelHigh;

    private Axis(double low, double high, double step, double pixelLow, double pixelHigh) {
        this.low = low;
        this.high = high;
        this.step = step;
        this.pixelLow = pixelLow;
        this.pixelHigh = pixelHigh;
    }

    /**
     * An axis covering at least [{@code from}, {@code to}] with about {@code ticks} intervals, drawn
     * from {@code pixelLow} (where the low end sits) to {@code pixelHigh}; for a vertical axis the low
     * end is the larger pixel coordinate.
     */
    static Axis covering(double from, double to, int ticks, double pixelLow, double pixelHigh) {
        if (!(Double.isFinite(from) && Double.isFinite(to) && to > from)) {
            throw new IllegalArgumentException("an axis needs a finite range with to > from, got [" + from + ", " + to + "]");
        }
        double step = niceStep((to - from) / ticks);
        double low = Math.floor(from / step + 1e-9) * step;
        double high = Math.ceil(to / step - 1e-9) * step;
        return new Axis(low, high, step, pixelLow, pixelHigh);
    }

    /** 1, 2, 2.5 or 5 times a power of ten, the smallest not below {@code raw}. */
    static double niceStep(double raw) {
        double power = Math.pow(10, Math.floor(Math.log10(raw)));
        double f = raw / power;
        double nice = f <= 1 + 1e-9 ? 1 : f <= 2 + 1e-9 ? 2 : f <= 2.5 + 1e-9 ? 2.5 : f <= 5 + 1e-9 ? 5 : 10;
        return nice * power;
    }

    double low() {
        return low;
    }

    double high() {
        return high;
    }

    /** The pixel coordinate of {@code value} (values outside the axis map outside the pixel range). */
    double pixel(double value) {
        return pixelLow + (value - low) / (high - low) * (pixelHigh - pixelLow);
    }

    /** The tick values from low to high, inclusive. */
    List<Double> ticks() {
        List<Double> out = new ArrayList<>();
        long n = Math.round((high - low) / step);
        for (long i = 0; i <= n; i++) {
            double v = low + i * step;
            out.add(Math.abs(v) < step * 1e-9 ? 0.0 : v);
        }
        return out;
    }

    /** A tick value as text, with as many decimals as the step needs. */
    String label(double value) {
        int decimals = 0;
        while (decimals < 8 && Math.abs(step * Math.pow(10, decimals) - Math.rint(step * Math.pow(10, decimals))) > 1e-6) {
            decimals++;
        }
        return Numbers.fixed(value, decimals);
    }
}
