package dev.interim.experiment;

import dev.interim.text.UserText;

/**
 * Why a metric is watched. A guardrail only watches for harm (a one-sided test in the harmful
 * direction); the primary metric may stop for harm or for benefit (two-sided by default).
 */
public enum Role {
    PRIMARY, GUARDRAIL;

    public static Role parse(String text) {
        return switch (text == null ? "" : text) {
            case "primary" -> PRIMARY;
            case "guardrail" -> GUARDRAIL;
            default -> throw new IllegalArgumentException("unknown role " + UserText.quoted(text) + ": use primary or guardrail");
        };
    }
}
