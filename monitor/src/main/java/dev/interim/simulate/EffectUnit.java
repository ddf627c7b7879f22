package dev.interim.simulate;

import dev.interim.text.UserText;
import java.util.Locale;

/** The units of the effects given on the command line; every effect is treatment − control. */
public enum EffectUnit {
    /**
     * The drift η: the effect over its standard error at the planned maximum information, i.e. the
     * mean of Z at the final look. Works for every metric.
     */
    DRIFT("drift"),
    /**
     * The metric's own units (a difference of rates or of means), turned into a drift by the planned
     * maximum information of a horizon with power and effect: η = δ·√I_max.
     */
    METRIC("metric");

    private final String label;

    EffectUnit(String label) {
        this.label = label;
    }

    public String label() {
        return label;
    }

    public static EffectUnit parse(String text) {
        String s = text == null ? "" : text.strip().toLowerCase(Locale.ROOT);
        for (EffectUnit u : values()) {
            if (u.label.equals(s)) {
                return u;
            }
        }
        throw new IllegalArgumentException("unknown effect unit " + UserText.quoted(text) + ": use drift or metric");
    }
}
