package dev.interim.sequential;

import java.math.BigDecimal;

/** Short, locale-independent number formatting for labels. */
final class Labels {
    private Labels() {}

    static String number(double x) {
        return BigDecimal.valueOf(x).stripTrailingZeros().toPlainString();
    }
}
