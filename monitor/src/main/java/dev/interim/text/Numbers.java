package dev.interim.text;

import java.math.BigDecimal;
import java.math.MathContext;
import java.math.RoundingMode;
import java.util.Locale;

/**
 * Every number the project writes as text, locale-independent, in two families.
 *
 * <p><b>Machine text</b> (CSV, JSON, labels that are read back): exact decimals as
 * {@link BigDecimal}, never an exponent, trailing zeros dropped — {@link #given}, {@link #plain},
 * {@link #rounded}, {@link #significantDecimal}; a number that is not finite has no decimal, so
 * those throw, and a CSV {@link #cell} is then empty. Scripts parse these; they stay as they are.
 *
 * <p><b>Human text</b> (tables, charts, the dashboard, replay, the report): {@link #fixed},
 * {@link #significant}, {@link #precise}, {@link #signed}, {@link #count}, {@link #probability}.
 * One way to show what is not a number: NaN is {@link #NONE} (an en dash), the infinities are
 * {@code ∞} and {@code -∞}. A magnitude below 10<sup>-4</sup> after rounding is written with an
 * exponent, {@code 2.6e-24} (the threshold of {@code %g} in {@link java.util.Formatter}), never
 * as a row of zeros; larger ones stay plain ({@code 12300}, which reads better in a table than
 * {@code 1.23e4}). Zero never prints with a sign ({@code 0.000}, not {@code -0.000}).
 *
 * <p>Rounding, in both families: the decimal a double stands for is its shortest round-trip text
 * ({@link BigDecimal#valueOf(double)}, as {@link Double#toString(double)} writes it), and ties go to
 * the even digit ({@link RoundingMode#HALF_EVEN}): {@code fixed(0.125, 2)} is {@code 0.12}.
 */
public final class Numbers {
    /** Shown for NaN: no value. */
    public static final String NONE = "–";
    /** Shown for positive infinity ({@code -∞} for negative). */
    public static final String INFINITY = "∞";

    /** Below this magnitude (after rounding) human text uses an exponent, as {@code %g} does. */
    private static final BigDecimal EXPONENT_BELOW = new BigDecimal("1e-4");
    /** Below this a p-value is written with an exponent. */
    private static final double PROBABILITY_EXPONENT_BELOW = 1e-3;
    /** Below this a p-value is only said to be small: doubles this small have lost their digits. */
    private static final double PROBABILITY_FLOOR = 1e-300;
    private static final String BELOW_FLOOR = "< 1e-300";
    private static final int GIVEN_DIGITS = 12;

    private Numbers() {}

    // ---- Machine text: CSV, JSON, labels ----

    /**
     * x as a person would write it, for echoing inputs: its shortest decimal, rounded to 12
     * significant digits so that arithmetic noise ({@code 1 - 0.9 = 0.09999999999999998})
     * disappears. {@code given(0.025)} is {@code 0.025}, {@code given(3.0)} is {@code 3}.
     *
     * @throws IllegalArgumentException if x is NaN or infinite
     */
    public static BigDecimal given(double x) {
        return strip(decimal(x).round(new MathContext(GIVEN_DIGITS, RoundingMode.HALF_EVEN)));
    }

    /**
     * {@link #given} as plain text ({@code 0.025}, {@code 3}); a value that is not finite as
     * {@link Double#toString} writes it ({@code NaN}, {@code Infinity}), for messages that echo a
     * bad input.
     */
    public static String plain(double x) {
        return Double.isFinite(x) ? given(x).toPlainString() : Double.toString(x);
    }

    /**
     * x rounded to {@code places} decimals, trailing zeros dropped.
     *
     * @throws IllegalArgumentException if x is NaN or infinite
     */
    public static BigDecimal rounded(double x, int places) {
        return strip(decimal(x).setScale(places, RoundingMode.HALF_EVEN));
    }

    /**
     * x rounded to {@code digits} significant digits, trailing zeros dropped: error probabilities
     * keep their digits however small ({@code 1.30e-7} stays {@code 0.00000013}, not 0).
     *
     * @throws IllegalArgumentException if x is NaN or infinite
     */
    public static BigDecimal significantDecimal(double x, int digits) {
        return strip(decimal(x).round(new MathContext(digits, RoundingMode.HALF_EVEN)));
    }

    /** A CSV cell: {@link #significantDecimal} in plain notation, or the empty cell for NaN and ±∞. */
    public static String cell(double x, int digits) {
        return Double.isFinite(x) ? significantDecimal(x, digits).toPlainString() : "";
    }

    // ---- Human text: tables, charts, the dashboard, replay, the report ----

    /** x with {@code places} decimals, for aligned columns: {@code fixed(4.87688, 4)} is {@code 4.8769}. */
    public static String fixed(double x, int places) {
        if (!Double.isFinite(x)) {
            return nonFinite(x);
        }
        return BigDecimal.valueOf(x).setScale(places, RoundingMode.HALF_EVEN).toPlainString();
    }

    /** x to {@code digits} significant digits, trailing zeros dropped ({@code 0.000123}, {@code 12300}, {@code 2.6e-24}). */
    public static String significant(double x, int digits) {
        if (!Double.isFinite(x)) {
            return nonFinite(x);
        }
        if (x == 0) {
            return "0";
        }
        return human(round(x, digits).stripTrailingZeros());
    }

    /**
     * x to {@code digits} significant digits keeping trailing zeros ({@code 2.00}, not {@code 2}):
     * for measured values, whose precision the digits show. Zero is {@code 0}.
     */
    public static String precise(double x, int digits) {
        if (!Double.isFinite(x)) {
            return nonFinite(x);
        }
        if (x == 0) {
            return "0";
        }
        return human(withDigits(round(x, digits), digits));
    }

    /** x with its sign always shown ({@code +0.0120}, {@code -1.50}), as {@link #precise}. */
    public static String signed(double x, int digits) {
        String s = precise(x, digits);
        return x > 0 && Double.isFinite(x) ? "+" + s : s;
    }

    /**
     * A quantile's probability as a percentile's name: {@code p99} for 0.99, {@code p99.9} for 0.999,
     * {@code p50} for the median, {@code p2.5} for 0.025 (at most 6 significant digits).
     */
    public static String percentile(double p) {
        if (!(p > 0 && p < 1)) {
            throw new IllegalArgumentException("a percentile needs a probability in (0, 1), got " + p);
        }
        return "p" + significant(100 * p, 6);
    }

    /**
     * A quantile metric's name for people: {@code p99 render-ms}, or the name alone when it already
     * says its percentile ({@code latency-p99}, {@code p99_latency}), so that nothing reads twice.
     */
    public static String percentileLabel(double p, String name) {
        String percentile = percentile(p);
        java.util.regex.Matcher m = java.util.regex.Pattern.compile("(?i)(?<![a-z0-9.])" + java.util.regex.Pattern.quote(percentile)
                + "(?![0-9.])").matcher(name);
        return m.find() ? name : percentile + " " + name;
    }

    /** A count with thousands separators ({@code 12,345}). */
    public static String count(long n) {
        return String.format(Locale.ROOT, "%,d", n);
    }

    /**
     * A probability such as a p-value: three significant digits ({@code 0.0421}, {@code 0.5}), two
     * with an exponent below 0.001 ({@code 2.6e-24}), {@code < 1e-300} below that (0 included: a
     * double that small has lost its digits), {@link #NONE} for NaN.
     */
    public static String probability(double p) {
        if (Double.isNaN(p)) {
            return NONE;
        }
        if (p >= 0 && p < PROBABILITY_FLOOR) {
            return BELOW_FLOOR;
        }
        if (p > 0 && p < PROBABILITY_EXPONENT_BELOW) {
            return scientific(withDigits(round(p, 2), 2));
        }
        return significant(p, 3);
    }

    /** A p-value with its name: {@code p = 0.0421}, {@code p = 2.6e-24}, {@code p < 1e-300}. */
    public static String pValue(double p) {
        String s = probability(p);
        return s.startsWith("<") ? "p " + s : "p = " + s;
    }

    private static String nonFinite(double x) {
        return Double.isNaN(x) ? NONE : x > 0 ? INFINITY : "-" + INFINITY;
    }

    private static BigDecimal round(double x, int digits) {
        return BigDecimal.valueOf(x).round(new MathContext(digits, RoundingMode.HALF_EVEN));
    }

    /** r with trailing zeros added up to {@code digits} significant digits ({@code 2.0} to {@code 2.00}). */
    private static BigDecimal withDigits(BigDecimal r, int digits) {
        return r.precision() < digits ? r.setScale(r.scale() + digits - r.precision(), RoundingMode.UNNECESSARY) : r;
    }

    /** Plain, or with an exponent when tiny. */
    private static String human(BigDecimal r) {
        return r.abs().compareTo(EXPONENT_BELOW) < 0 ? scientific(r) : r.toPlainString();
    }

    /** {@code 2.6e-24}: every digit of the unscaled value, the point after the first, no padded exponent. */
    private static String scientific(BigDecimal r) {
        String digits = r.unscaledValue().abs().toString();
        int exponent = r.precision() - r.scale() - 1;
        String mantissa = digits.length() == 1 ? digits : digits.charAt(0) + "." + digits.substring(1);
        return (r.signum() < 0 ? "-" : "") + mantissa + "e" + exponent;
    }

    private static BigDecimal decimal(double x) {
        if (!Double.isFinite(x)) {
            throw new IllegalArgumentException("only a finite number has a decimal form, got " + x);
        }
        return BigDecimal.valueOf(x);
    }

    private static BigDecimal strip(BigDecimal d) {
        return d.signum() == 0 ? BigDecimal.ZERO : d.stripTrailingZeros();
    }
}
