package dev.interim.stream;

import dev.interim.events.Catalog;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatCode;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import dev.interim.events.MappedExperiment;
import dev.interim.stream.BadEventException.Reason;
import java.io.ByteArrayOutputStream;
import java.nio.charset.StandardCharsets;
import java.util.HashSet;
import java.util.Set;
import org.junit.jupiter.api.Test;

/**
 * What the fuzzing of {@link JsonEventReader} (JsonEventReaderFuzzTest) found, one test per bug,
 * each saying what went wrong before the fix. The configuration is the invented
 * {@code tile-events.yaml}.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class JsonEventReaderRegressionTest {
    private final JsonEventReader reader = new JsonEventReader(TileEvents.config().catalog());
    private final Catalog catalog = new Catalog(TileEvents.config().experiments().stream()
            .map(MappedExperiment::definition).toList());

    private BadEventException refusal(byte[] event) {
        RecordingSink sink = new RecordingSink();
        try {
            reader.read(event, sink);
        } catch (BadEventException e) {
            assertThat(sink.calls).isEmpty();
            return e;
        }
        throw new AssertionError("accepted " + TileEvents.show(event) + " as " + sink.calls);
    }

    private BadEventException refusal(String event) {
        return refusal(event.getBytes(StandardCharsets.UTF_8));
    }

    private static byte[] concat(String before, int[] raw, String after) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        out.writeBytes(before.getBytes(StandardCharsets.UTF_8));
        for (int b : raw) {
            out.write(b);
        }
        out.writeBytes(after.getBytes(StandardCharsets.UTF_8));
        return out.toByteArray();
    }

    /** Was: Jackson read the first object and ignored the rest, so "{...}xyz" counted as the event. */
    @Test
    void trailingGarbageAfterTheEventWasIgnored() {
        assertThat(refusal("{\"exp\":\"tile-format\",\"arm\":\"png\"}xyz").reason()).isEqualTo(Reason.NOT_JSON);
        assertThat(refusal("{\"exp\":\"tile-format\",\"arm\":\"png\"}{\"exp\":\"tile-format\",\"arm\":\"webp\"}").reason())
                .isEqualTo(Reason.NOT_JSON);
    }

    /** Was: the last of two equal keys won, so an event naming two arms was counted for the second. */
    @Test
    void aDuplicateKeyLetTheLastValueWin() {
        assertThat(refusal("{\"exp\":\"tile-format\",\"arm\":\"png\",\"arm\":\"webp\"}").reason()).isEqualTo(Reason.NOT_JSON);
        assertThat(refusal("{\"exp\":\"tile-format\",\"arm\":\"png\",\"\\u0061rm\":\"png\"}").reason()).isEqualTo(Reason.NOT_JSON);
    }

    /**
     * Was: Jackson decoded ill-formed UTF-8 without complaint: the overlong C0 80 as U+0000 (so the
     * bytes 73 C0 80 and the text "s" + U+0000 were the same unit), F4 90 80 80 (above U+10FFFF) and
     * F5.. leads into unpaired surrogates. Encoded surrogates (ED A0 80) and lone continuation bytes it
     * did refuse.
     */
    @Test
    void illFormedUtf8WasDecodedSilently() {
        String before = "{\"exp\":\"tile-cache\",\"arm\":\"lru\",\"session\":\"s";
        for (int[] bad : new int[][] {{0xC0, 0x80}, {0xC1, 0xBF}, {0xE0, 0x80, 0x80}, {0xF0, 0x80, 0x80, 0x80},
                {0xF4, 0x90, 0x80, 0x80}, {0xF5, 0x80, 0x80, 0x80}}) {
            BadEventException e = refusal(concat(before, bad, "\"}"));
            assertThat(e.reason()).isEqualTo(Reason.NOT_JSON);
            assertThat(e.getMessage()).contains("not UTF-8");
        }
    }

    /**
     * Was: an unpaired surrogate written as a JSON escape (U+D800 alone) was a unit like any other,
     * but the units topic keys are UTF-8, which writes every unpaired surrogate as '?': after a
     * restart, units "s" + U+D800, "s" + U+DBFF and "s?" were one unit, and later events of the others
     * counted as new units.
     */
    @Test
    void anUnpairedSurrogateMadeUnitsCollideInTheStateTopic() {
        assertThat(StateCodec.key("s\ud800")).isEqualTo(StateCodec.key("s\udbff")).isEqualTo(StateCodec.key("s?"));
        BadEventException e = refusal("{\"exp\":\"tile-cache\",\"arm\":\"lru\",\"session\":\"s\\ud800\"}");
        assertThat(e.reason()).isEqualTo(Reason.WRONG_TYPE);
        assertThat(e.getMessage()).contains("unpaired surrogate");
        assertThatCode(() -> reader.read("{\"exp\":\"tile-cache\",\"arm\":\"lru\",\"session\":\"s\\ud83d\\ude00\"}"
                .getBytes(StandardCharsets.UTF_8), new RecordingSink())).as("a surrogate pair is fine").doesNotThrowAnyException();
    }

    /** Was: a list or an object in a rate's field compared unequal to the text, and was counted (as a success for not_equals). */
    @Test
    void aListOrAnObjectInARateFieldWasCounted() {
        assertThat(refusal("{\"exp\":\"tile-format\",\"arm\":\"png\",\"result\":{}}").reason()).isEqualTo(Reason.WRONG_TYPE);
        assertThat(refusal("{\"exp\":\"tile-cache\",\"arm\":\"lru\",\"session\":\"s1\",\"cache\":[\"hit\"]}").reason())
                .isEqualTo(Reason.WRONG_TYPE);
    }

    /**
     * Was: a finite but huge value (1e200) passed the reader, and the second one in a tally made
     * RunningMoments throw IllegalArgumentException (its sum of squares overflows) from inside the
     * sink: after the exposure was already counted, and out of the tally stage's loop, which stopped.
     */
    @Test
    void aHugeFiniteValueStoppedTheTallyStage() throws BadEventException {
        PartitionState state = new PartitionState("tiles.events-0", catalog);
        byte[] fine = "{\"exp\":\"tile-format\",\"arm\":\"png\",\"kb\":1e100}".getBytes(StandardCharsets.UTF_8);
        reader.read(fine, state);
        reader.read(fine, state);   // ±1e100 is the largest magnitude taken, twice without overflow
        Set<PartitionState.Partial> before = new HashSet<>(state.partials());
        for (String huge : new String[] {"1e200", "-1e200", "1.7976931348623157e308", "1.0000000000000002e100"}) {
            byte[] event = ("{\"exp\":\"tile-format\",\"arm\":\"png\",\"kb\":" + huge + "}").getBytes(StandardCharsets.UTF_8);
            assertThatThrownBy(() -> reader.read(event, state)).isInstanceOfSatisfying(BadEventException.class,
                    e -> assertThat(e.reason()).isEqualTo(Reason.FORBIDDEN_VALUE));
        }
        assertThat(new HashSet<>(state.partials())).isEqualTo(before);
    }

    /**
     * Was: a unit id of any length up to the record's was kept in memory and written as a key of the
     * units topic; near a megabyte that write fails and the tally stage's transaction with it.
     */
    @Test
    void aHugeUnitIdWasKeptAndWrittenToTheUnitsTopic() {
        String unit = "u".repeat(JsonEventReader.MAX_UNIT_LENGTH);
        assertThatCode(() -> reader.read(("{\"exp\":\"tile-cache\",\"arm\":\"lru\",\"session\":\"" + unit + "\"}")
                .getBytes(StandardCharsets.UTF_8), new RecordingSink())).doesNotThrowAnyException();
        BadEventException e = refusal("{\"exp\":\"tile-cache\",\"arm\":\"lru\",\"session\":\"" + unit + "u\"}");
        assertThat(e.reason()).isEqualTo(Reason.TOO_LARGE);
        assertThat(e.getMessage()).contains("1025 characters, above 1024");
    }
}
