package dev.interim.chart;

import java.math.BigDecimal;
import java.math.MathContext;
import java.math.RoundingMode;
import java.util.Locale;

/**
 * Numbers as people read them on a chart or in a table: a fixed number of decimals or of
 * significant digits, never an exponent for the magnitudes met here, and words for the values that
 * are not numbers (an infinite boundary before any α is spent, a statistic before the first look).
 */
public final class Numbers {
    /** Shown for NaN: no value. */
    public static final String NONE = "–";

    private Numbers() {}

    /** {@code x} with {@code decimals} decimals ({@code "∞"}, {@code "-∞"}, {@link #NONE} otherwise). */
    public static String fixed(double x, int decimals) {
        if (!Double.isFinite(x)) {
            return nonFinite(x);
        }
        String s = String.format(Locale.ROOT, "%." + decimals + "f", x);
        return isNegativeZero(s) ? s.substring(1) : s;
    }

    /** {@code x} rounded to {@code digits} significant digits, in plain notation. */
    public static String significant(double x, int digits) {
        if (!Double.isFinite(x)) {
            return nonFinite(x);
        }
        if (x == 0) {
            return "0";
        }
        BigDecimal rounded = new BigDecimal(x).round(new MathContext(digits, RoundingMode.HALF_EVEN));
        String s = rounded.abs().compareTo(new BigDecimal("1e-6")) < 0
                ? String.format(Locale.ROOT, "%." + (digits - 1) + "e", x)
                : rounded.stripTrailingZeros().toPlainString();
        return s;
    }

    /**
     * {@code x} to {@code digits} significant digits keeping trailing zeros ({@code 2.00}, not
     * {@code 2}): for measured values, whose precision the digits show.
     */
    public static String precise(double x, int digits) {
        if (!Double.isFinite(x) || x == 0 || Math.abs(x) < 1e-6) {
            return significant(x, digits);
        }
        BigDecimal rounded = new BigDecimal(x).round(new MathContext(digits, RoundingMode.HALF_EVEN));
        int scale = digits - 1 - (int) Math.floor(Math.log10(Math.abs(rounded.doubleValue())));
        return scale > 0 ? rounded.setScale(scale, RoundingMode.HALF_EVEN).toPlainString() : rounded.toPlainString();
    }

    /** {@code x} with a sign always shown ({@code +0.0120}, {@code -1.50}), to significant digits with trailing zeros. */
    public static String signed(double x, int digits) {
        String s = precise(x, digits);
        return x > 0 && Double.isFinite(x) ? "+" + s : s;
    }

    /** A p-value as {@code "p = 0.0421"} (three significant digits), or {@code "p < 0.000001"} below that. */
    public static String pValue(double p) {
        if (Double.isFinite(p) && p >= 0 && p < 1e-6) {
            return "p < 0.000001";
        }
        return "p = " + significant(p, 3);
    }

    /** A count with thousands separators ({@code 12,345}). */
    public static String count(long n) {
        return String.format(Locale.ROOT, "%,d", n);
    }

    private static String nonFinite(double x) {
        return Double.isNaN(x) ? NONE : x > 0 ? "∞" : "-∞";
    }

    private static boolean isNegativeZero(String s) {
        return s.startsWith("-") && s.chars().skip(1).allMatch(c -> c == '0' || c == '.');
    }
}
