package dev.interim.experiment;

import dev.interim.text.UserText;
import java.util.Locale;

/**
 * How arms were assigned: what the independent observations of an experiment are. A test treats its
 * observations as independent; when arms are assigned per unit (a user, a device, a session), the
 * events of one unit share that unit's propensities and are correlated, and only units are
 * independent. Treating correlated events as independent underestimates the variance by about the
 * design effect 1 + (m − 1)ρ (Kish 1965, Survey Sampling, §5.4), which inflates false stops.
 */
public enum Assignment {
    /** Each unit is assigned once and keeps its arm: event metrics are analysed as ratios of per-unit sums. */
    UNIT,
    /** Each event is assigned on its own (a load balancer sending each request to a canary): events are independent. */
    EVENT;

    /** The name used in configuration files and shown by check, the API, the dashboard and the report. */
    public String label() {
        return name().toLowerCase(Locale.ROOT);
    }

    /** Parses a configuration value; the message lists the accepted ones. */
    public static Assignment parse(String text) {
        for (Assignment a : values()) {
            if (a.label().equals(text)) {
                return a;
            }
        }
        throw new IllegalArgumentException("unknown assignment " + UserText.quoted(text) + ": use unit (each unit keeps its arm) or "
                + "event (each event assigned on its own)");
    }
}
