package dev.interim.text;

import dev.interim.text.UserText;
import java.time.Duration;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * Durations as configuration files write them: a whole number and one unit, {@code ms}, {@code s},
 * {@code m} or {@code h} ({@code 500ms}, {@code 30s}, {@code 5m}, {@code 1h}). One unit only, so a
 * value reads one way; write {@code 90s} rather than one minute and a half.
 */
public final class Durations {
    private static final Pattern FORM = Pattern.compile("(\\d{1,9})(ms|s|m|h)");

    private Durations() {}

    /** Parses {@code 500ms}, {@code 30s}, {@code 5m}, {@code 1h}; the message of a bad one shows the forms. */
    public static Duration parse(String text) {
        Matcher m = FORM.matcher(text == null ? "" : text.strip());
        if (!m.matches()) {
            throw new IllegalArgumentException(UserText.quoted(text) + " is not a duration: write a whole number and a unit "
                    + "(ms, s, m or h), such as 500ms, 30s, 5m or 1h");
        }
        long amount = Long.parseLong(m.group(1));
        return switch (m.group(2)) {
            case "ms" -> Duration.ofMillis(amount);
            case "s" -> Duration.ofSeconds(amount);
            case "m" -> Duration.ofMinutes(amount);
            default -> Duration.ofHours(amount);
        };
    }

    /** The shortest text that {@link #parse} reads back as {@code d}: {@code 90s}, {@code 5m}, {@code 250ms}. */
    public static String format(Duration d) {
        long ms = d.toMillis();
        if (ms % 3_600_000 == 0 && ms > 0) {
            return ms / 3_600_000 + "h";
        }
        if (ms % 60_000 == 0 && ms > 0) {
            return ms / 60_000 + "m";
        }
        if (ms % 1000 == 0) {
            return ms / 1000 + "s";
        }
        return ms + "ms";
    }
}
