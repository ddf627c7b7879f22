package dev.interim.cli;

import dev.interim.sequential.ClassicBoundary;
import dev.interim.sequential.GroupSequentialDesign;
import dev.interim.sequential.SpendingFunction;
import dev.interim.stats.Alternative;
import dev.interim.text.UserText;
import java.util.Locale;

/**
 * How a design rejects: an α-spending function ({@code obf}, {@code pocock}, {@code power:RHO},
 * {@code hsd:GAMMA}) or a classic boundary for the planned looks ({@code fixed-pocock},
 * {@code fixed-obf}). Exactly one of the two components is set.
 */
record EfficacyRule(SpendingFunction spending, ClassicBoundary.Shape classic) {
    static final String FORMS = "obf, pocock, power:RHO, hsd:GAMMA, fixed-pocock or fixed-obf";

    /** Parses the value of {@code --spending}; the message of a failure names the accepted forms. */
    static EfficacyRule parse(String text) {
        String s = text.strip().toLowerCase(Locale.ROOT);
        for (ClassicBoundary.Shape shape : ClassicBoundary.Shape.values()) {
            if (s.equals(shape.label())) {
                return new EfficacyRule(null, shape);
            }
        }
        String head = s.contains(":") ? s.substring(0, s.indexOf(':')) : s;
        if (!head.equals("obf") && !head.equals("pocock") && !head.equals("power") && !head.equals("hsd")) {
            throw new IllegalArgumentException("unknown --spending " + UserText.quoted(text) + ": use " + FORMS);
        }
        try {
            return new EfficacyRule(SpendingFunction.parse(s), null);
        } catch (IllegalArgumentException e) {
            throw new IllegalArgumentException("--spending: " + e.getMessage(), e);
        }
    }

    GroupSequentialDesign design(double alpha, Alternative alternative, double[] fractions) {
        if (classic != null) {
            if (fractions[fractions.length - 1] != 1.0) {
                throw new IllegalArgumentException("--spending " + classic.label()
                        + " is a classic design for planned looks: its last fraction must be 1, got "
                        + fractions[fractions.length - 1]);
            }
            return GroupSequentialDesign.classic(alpha, alternative, classic, fractions);
        }
        return GroupSequentialDesign.spending(alpha, alternative, spending);
    }

    String label() {
        return spending != null ? spending.label() : classic.label();
    }

    /** A phrase for the title of a table. */
    String describe() {
        if (classic != null) {
            return switch (classic) {
                case POCOCK -> "classic Pocock boundary (same value at every look)";
                case OBRIEN_FLEMING -> "classic O'Brien-Fleming boundary (C / sqrt(t))";
            };
        }
        return SpendingNames.describe(spending) + " alpha spending (" + spending.label() + ")";
    }
}
