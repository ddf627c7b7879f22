package dev.interim.cli;

import java.math.BigDecimal;
import java.math.MathContext;
import java.math.RoundingMode;
import java.util.Locale;

/**
 * Locale-independent number text. Machine formats (CSV, JSON) carry boundaries and fractions to 6
 * decimals and error probabilities to 6 significant digits, so that the tiny α an
 * O'Brien-Fleming-type design spends at its first look (about 1e-6) does not print as 0.
 */
final class Decimals {
    private Decimals() {}

    /** Shortest plain text of x, as given ({@code 0.025}, {@code 3}). */
    static String plain(double x) {
        return given(x).toPlainString();
    }

    /**
     * x as a person would write it, for echoing inputs: its shortest decimal, rounded to 12
     * significant digits so that arithmetic noise ({@code 1 - 0.9 = 0.09999999999999998}) disappears.
     */
    static BigDecimal given(double x) {
        return strip(BigDecimal.valueOf(x).round(new MathContext(12, RoundingMode.HALF_EVEN)));
    }

    /** x rounded to {@code places} decimals, trailing zeros dropped. */
    static BigDecimal rounded(double x, int places) {
        return strip(BigDecimal.valueOf(x).setScale(places, RoundingMode.HALF_EVEN));
    }

    /** x rounded to {@code digits} significant digits, trailing zeros dropped. */
    static BigDecimal significant(double x, int digits) {
        return strip(new BigDecimal(x).round(new MathContext(digits, RoundingMode.HALF_EVEN)));
    }

    /** Fixed decimals for aligned tables: {@code fixed(4.87688, 4)} is {@code 4.8769}. */
    static String fixed(double x, int places) {
        return String.format(Locale.ROOT, "%." + places + "f", x);
    }

    private static BigDecimal strip(BigDecimal d) {
        return d.signum() == 0 ? BigDecimal.ZERO : d.stripTrailingZeros();
    }
}
