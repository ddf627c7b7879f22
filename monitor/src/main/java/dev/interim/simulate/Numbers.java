package dev.interim.simulate;

import java.math.BigDecimal;
import java.math.MathContext;
import java.math.RoundingMode;
import java.util.Locale;

/** Locale-independent number text for the reports. */
final class Numbers {
    private Numbers() {}

    /** Fixed decimals, for aligned tables. */
    static String fixed(double x, int places) {
        if (Double.isNaN(x)) {
            return "-";
        }
        String s = String.format(Locale.ROOT, "%." + places + "f", x);
        return s.matches("-0\\.?0*") ? s.substring(1) : s;
    }

    /** x rounded to {@code digits} significant digits, plain, trailing zeros dropped; "" for NaN. */
    static String significant(double x, int digits) {
        if (Double.isNaN(x) || Double.isInfinite(x)) {
            return "";
        }
        return strip(new BigDecimal(x).round(new MathContext(digits, RoundingMode.HALF_EVEN))).toPlainString();
    }

    /** x as a person would write it (shortest decimal, 12 significant digits at most). */
    static String given(double x) {
        return strip(BigDecimal.valueOf(x).round(new MathContext(12, RoundingMode.HALF_EVEN))).toPlainString();
    }

    /** x rounded to {@code places} decimals, trailing zeros dropped. */
    static BigDecimal rounded(double x, int places) {
        return strip(BigDecimal.valueOf(x).setScale(places, RoundingMode.HALF_EVEN));
    }

    private static BigDecimal strip(BigDecimal d) {
        return d.signum() == 0 ? BigDecimal.ZERO : d.stripTrailingZeros();
    }
}
