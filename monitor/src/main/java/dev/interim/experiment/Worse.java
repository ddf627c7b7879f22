package dev.interim.experiment;

import dev.interim.stats.Alternative;
import dev.interim.text.UserText;

/** Which direction of the metric hurts users: higher error rates and latencies, lower revenue. */
public enum Worse {
    HIGHER, LOWER;

    /** The one-sided alternative that means harm, for the effect treatment − control. */
    public Alternative harm() {
        return this == HIGHER ? Alternative.GREATER : Alternative.LESS;
    }

    public static Worse parse(String text) {
        return switch (text == null ? "" : text) {
            case "higher" -> HIGHER;
            case "lower" -> LOWER;
            default -> throw new IllegalArgumentException("unknown direction " + UserText.quoted(text) + ": use higher or lower");
        };
    }
}
