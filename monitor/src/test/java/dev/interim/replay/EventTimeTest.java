package dev.interim.replay;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import com.fasterxml.jackson.core.JsonPointer;
import dev.interim.stream.BadEventException;
import dev.interim.stream.BadEventException.Reason;
import java.nio.charset.StandardCharsets;
import java.time.Instant;
import org.assertj.core.api.ThrowableAssert;
import org.junit.jupiter.api.Test;

/**
 * Event times as docs/configuration.md defines them (events.time): epoch milliseconds, or ISO-8601
 * text with an offset. Expected instants are written out by hand (1930381210000 ms is
 * 2031-03-04T09:00:10Z: 22,342 days of 86,400,000 ms, plus 9 h 10 s).
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class EventTimeTest {
    private static final EventTime AT = new EventTime(JsonPointer.compile("/meta/at"));

    private static long read(String json) throws BadEventException {
        return AT.millis(json.getBytes(StandardCharsets.UTF_8));
    }

    private static long iso(String text) {
        return Instant.parse(text).toEpochMilli();
    }

    @Test
    void epochMillisecondsAsAnIntegerOrAWholeDouble() throws BadEventException {
        assertThat(read("{\"meta\":{\"at\":1930381210000}}")).isEqualTo(iso("2031-03-04T09:00:10Z"));
        assertThat(read("{\"meta\":{\"at\":1930381210000.0}}")).isEqualTo(iso("2031-03-04T09:00:10Z"));
        assertThat(read("{\"x\":[1,{\"at\":5}],\"meta\":{\"other\":{\"at\":7},\"at\":-86400000}}"))
                .as("only the field at the pointer counts").isEqualTo(iso("1969-12-31T00:00:00Z"));
    }

    @Test
    void isoTextWithAnOffset() throws BadEventException {
        assertThat(read("{\"meta\":{\"at\":\"2031-03-04T09:00:10.125Z\"}}")).isEqualTo(iso("2031-03-04T09:00:10.125Z"));
        assertThat(read("{\"meta\":{\"at\":\"2031-03-04T11:00:10+02:00\"}}")).isEqualTo(iso("2031-03-04T09:00:10Z"));
        assertThat(read("{\"meta\":{\"at\":\"2031-03-04T04:30:10-04:30\"}}")).isEqualTo(iso("2031-03-04T09:00:10Z"));
    }

    @Test
    void aMissingOrNullTimeIsAMissingField() {
        refused(() -> read("{\"meta\":{}}"), Reason.MISSING_FIELD, "no time at /meta/at");
        refused(() -> read("{\"meta\":{\"at\":null}}"), Reason.MISSING_FIELD, "no time at /meta/at");
        refused(() -> read("{\"at\":1930381210000}"), Reason.MISSING_FIELD, "no time at /meta/at");
    }

    @Test
    void anythingElseIsOfTheWrongType() {
        refused(() -> read("{\"meta\":{\"at\":\"2031-03-04T09:00:10\"}}"), Reason.WRONG_TYPE, "with an offset");
        refused(() -> read("{\"meta\":{\"at\":\"2031-03-04 09:00:10Z\"}}"), Reason.WRONG_TYPE, "not an ISO-8601 time");
        refused(() -> read("{\"meta\":{\"at\":\"1930381210000\"}}"), Reason.WRONG_TYPE, "not an ISO-8601 time");
        refused(() -> read("{\"meta\":{\"at\":1930381210000.5}}"), Reason.WRONG_TYPE, "whole number of milliseconds");
        refused(() -> read("{\"meta\":{\"at\":true}}"), Reason.WRONG_TYPE, "got a boolean");
        refused(() -> read("{\"meta\":{\"at\":{\"ms\":5}}}"), Reason.WRONG_TYPE, "got an object");
        refused(() -> read("{\"meta\":{\"at\":[5]}}"), Reason.WRONG_TYPE, "got an array");
        refused(() -> read("{\"meta\":{\"at\":123456789012345678901234567890}}"), Reason.WRONG_TYPE, "beyond");
    }

    @Test
    void timesOutsideTheYearsZeroTo9999AreForbidden() throws BadEventException {
        assertThat(read("{\"meta\":{\"at\":\"9999-12-31T23:59:59.999Z\"}}")).isEqualTo(EventTime.LATEST);
        refused(() -> read("{\"meta\":{\"at\":" + (EventTime.LATEST + 1) + "}}"), Reason.FORBIDDEN_VALUE, "years 0000 to 9999");
        refused(() -> read("{\"meta\":{\"at\":" + Long.MIN_VALUE + "}}"), Reason.FORBIDDEN_VALUE, "years 0000 to 9999");
    }

    @Test
    void theRememberedSecondGivesWhatFullParsingGives() throws BadEventException {
        // One reader sees the texts in order, remembering the second; each is also read by a fresh one.
        String[] texts = {"2031-03-04T09:00:07Z", "2031-03-04T09:00:07.315Z", "2031-03-04T09:00:07.3159999Z",
            "2031-03-04T09:00:07.9Z", "2031-03-04T09:00:07+02:00", "2031-03-04T09:00:07.5-01:00",
            "2031-03-04T09:00:07.Z", "2031-03-04T09:00:07.1234567890Z", "2031-03-04T09:00:07.31xZ",
            "2031-03-04T09:00:07.315z", "2031-03-04T09:00:08.001Z", "1969-12-31T23:59:59.999Z",
            "1969-12-31T23:59:59.5Z"};
        EventTime remembering = new EventTime(JsonPointer.compile("/t"));
        for (String text : texts) {
            byte[] event = ("{\"t\":\"" + text + "\"}").getBytes(StandardCharsets.UTF_8);
            String fresh;
            try {
                fresh = String.valueOf(new EventTime(JsonPointer.compile("/t")).millis(event));
            } catch (BadEventException e) {
                fresh = e.reason().label();
            }
            String again;
            try {
                again = String.valueOf(remembering.millis(event));
            } catch (BadEventException e) {
                again = e.reason().label();
            }
            assertThat(again).as(text).isEqualTo(fresh);
        }
        EventTime t = new EventTime(JsonPointer.compile("/t"));
        t.millis("{\"t\":\"2031-03-04T09:00:07Z\"}".getBytes(StandardCharsets.UTF_8));
        assertThat(t.millis("{\"t\":\"2031-03-04T09:00:07.3159999Z\"}".getBytes(StandardCharsets.UTF_8)))
                .isEqualTo(iso("2031-03-04T09:00:07.315Z"));
        assertThat(t.millis("{\"t\":\"2031-03-04T09:00:07+02:00\"}".getBytes(StandardCharsets.UTF_8)))
                .isEqualTo(iso("2031-03-04T07:00:07Z"));
    }

    private static void refused(ThrowableAssert.ThrowingCallable read, Reason reason, String message) {
        assertThatThrownBy(read).isInstanceOfSatisfying(BadEventException.class,
                e -> assertThat(e.reason()).isEqualTo(reason)).hasMessageContaining(message);
    }
}
