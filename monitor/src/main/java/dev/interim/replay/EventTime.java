package dev.interim.replay;

import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.core.filter.FilteringParserDelegate;
import com.fasterxml.jackson.core.filter.JsonPointerBasedFilter;
import com.fasterxml.jackson.core.filter.TokenFilter;
import dev.interim.stream.BadEventException;
import dev.interim.stream.BadEventException.Reason;
import dev.interim.text.UserText;
import java.io.IOException;
import java.time.DateTimeException;
import java.time.Instant;
import java.time.format.DateTimeFormatter;

/**
 * Reads an event's time at the configured JSON Pointer ({@code events.time}): a whole number of
 * milliseconds since 1970-01-01T00:00Z, or ISO-8601 text with an offset such as
 * {@code 2031-05-02T10:15:04.120Z} or {@code 2031-05-02T12:15:04+02:00} (docs/configuration.md).
 * Text without an offset is refused: it names no instant.
 *
 * <p>Speed, as replay reads millions of events: it streams the event up to the field instead of
 * building a tree (the event reader has already parsed and accepted it, so only the time is left to
 * find), and it remembers the date and time to the second of the last UTC text it parsed
 * ({@code 2031-05-02T10:15:04}), so that the next events of the same second — most of them, in a
 * file in time order — only add their fraction. Full parsing costs about 1.5 µs an event here,
 * several times the rest of reading the time. Mutable (that one-entry memory): one owner.
 */
final class EventTime {
    private static final JsonFactory JSON = new JsonFactory();
    /** 2^63 as a double: the first whole double above every long. */
    private static final double LONG_LIMIT = 0x1p63;
    /** Times outside the years 0000 to 9999 are refused: no real event has one, and they would overflow the schedule. */
    static final long EARLIEST = Instant.parse("0000-01-01T00:00:00Z").toEpochMilli();
    static final long LATEST = Instant.parse("9999-12-31T23:59:59.999Z").toEpochMilli();

    /** Length of {@code yyyy-MM-ddTHH:mm:ss}. */
    private static final int TO_SECONDS = 19;

    private final JsonPointer pointer;
    /** The first 19 characters of the last UTC text parsed in full, and its epoch second. */
    private String lastSecondText;
    private long lastSecond;

    EventTime(JsonPointer pointer) {
        this.pointer = pointer;
    }

    JsonPointer pointer() {
        return pointer;
    }

    /** The event's time in epoch milliseconds; a missing or unreadable time refuses the event. */
    long millis(byte[] event) throws BadEventException {
        long ms = read(event);
        if (ms < EARLIEST || ms > LATEST) {
            throw new BadEventException(Reason.FORBIDDEN_VALUE, "time at " + pointer + " is " + ms
                    + " ms, outside the years 0000 to 9999");
        }
        return ms;
    }

    private long read(byte[] event) throws BadEventException {
        try (JsonParser p = new FilteringParserDelegate(JSON.createParser(event), new JsonPointerBasedFilter(pointer),
                TokenFilter.Inclusion.ONLY_INCLUDE_ALL, false)) {
            JsonToken token = p.nextToken();
            if (token == null || token == JsonToken.VALUE_NULL) {
                throw new BadEventException(Reason.MISSING_FIELD, "no time at " + pointer);
            }
            switch (token) {
                case VALUE_NUMBER_INT:
                    if (p.getNumberType() == JsonParser.NumberType.BIG_INTEGER) {
                        throw wrong("is a number beyond epoch milliseconds");
                    }
                    return p.getLongValue();
                case VALUE_NUMBER_FLOAT:
                    return wholeMillis(p.getDoubleValue());
                case VALUE_STRING:
                    return iso(p.getText());
                default:
                    throw wrong("must be epoch milliseconds or ISO-8601 text, got " + kind(token));
            }
        } catch (IOException e) {
            // The event reader accepted the bytes as JSON, so this is a number Jackson cannot hold.
            throw wrong("cannot be read: " + e.getClass().getSimpleName());
        }
    }

    private long wholeMillis(double ms) throws BadEventException {
        if (!Double.isFinite(ms) || ms != Math.rint(ms) || Math.abs(ms) >= LONG_LIMIT) {
            throw wrong("must be a whole number of milliseconds, got " + ms);
        }
        return (long) ms;
    }

    private long iso(String text) throws BadEventException {
        long sameSecond = sameSecond(text);
        if (sameSecond != Long.MIN_VALUE) {
            return sameSecond;
        }
        try {
            Instant at = DateTimeFormatter.ISO_OFFSET_DATE_TIME.parse(text, Instant::from);
            if (utcFraction(text) >= 0) {
                lastSecondText = text.substring(0, TO_SECONDS);
                lastSecond = at.getEpochSecond();
            }
            return at.toEpochMilli();
        } catch (DateTimeException | ArithmeticException e) {
            throw wrong(UserText.quoted(text) + " is not an ISO-8601 time with an offset, such as 2031-05-02T10:15:04.120Z");
        }
    }

    /**
     * The time of {@code text} when it is the second remembered, in UTC, with a fraction of 1 to 9
     * digits or none (a subset of what full parsing accepts, with the same result); else
     * {@code Long.MIN_VALUE}.
     */
    private long sameSecond(String text) {
        if (lastSecondText == null || !text.startsWith(lastSecondText)) {
            return Long.MIN_VALUE;
        }
        long millis = utcFraction(text);
        return millis < 0 ? Long.MIN_VALUE : lastSecond * 1000 + millis;
    }

    /**
     * The milliseconds of the fraction of {@code yyyy-MM-ddTHH:mm:ss[.f…]Z} (1 to 9 digits, truncated
     * as {@link Instant#toEpochMilli()} does for positive fractions), or -1 when the text after the
     * seconds is not of that form. The first 19 characters are not checked here.
     */
    private static long utcFraction(String text) {
        int n = text.length();
        if (n < TO_SECONDS + 1 || text.charAt(n - 1) != 'Z') {
            return -1;
        }
        if (n == TO_SECONDS + 1) {
            return 0;
        }
        int digits = n - TO_SECONDS - 2;
        if (text.charAt(TO_SECONDS) != '.' || digits < 1 || digits > 9) {
            return -1;
        }
        long millis = 0;
        for (int i = 0; i < 3; i++) {
            int d = i < digits ? text.charAt(TO_SECONDS + 1 + i) - '0' : 0;
            if (d < 0 || d > 9) {
                return -1;
            }
            millis = 10 * millis + d;
        }
        for (int i = 3; i < digits; i++) {
            char c = text.charAt(TO_SECONDS + 1 + i);
            if (c < '0' || c > '9') {
                return -1;
            }
        }
        return millis;
    }

    private BadEventException wrong(String what) {
        return new BadEventException(Reason.WRONG_TYPE, "time at " + pointer + " " + what);
    }

    private static String kind(JsonToken token) {
        return switch (token) {
            case START_OBJECT -> "an object";
            case START_ARRAY -> "an array";
            case VALUE_TRUE, VALUE_FALSE -> "a boolean";
            default -> token.name().toLowerCase();
        };
    }
}
