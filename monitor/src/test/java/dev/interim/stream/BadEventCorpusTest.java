package dev.interim.stream;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.fail;

import dev.interim.stream.BadEventException.Reason;
import java.nio.charset.StandardCharsets;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import java.util.stream.Collectors;
import org.junit.jupiter.api.Test;

/**
 * Every line of the curated corpus {@code bad-events.txt} is refused with the reason the line names,
 * and reaches the sink not at all. The corpus covers every reason; its header says how it is written.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class BadEventCorpusTest {
    private final JsonEventReader reader = new JsonEventReader(TileEvents.config().catalog());

    @Test
    void everyBadEventIsRefusedWithItsReasonAndLeavesNothingBehind() {
        List<BadEventCorpus.Entry> entries = BadEventCorpus.entries();
        assertThat(entries).hasSizeGreaterThan(100);
        for (BadEventCorpus.Entry e : entries) {
            RecordingSink sink = new RecordingSink();
            try {
                reader.read(e.bytes(), sink);
                fail("accepted %s as %s", e, sink.calls);
            } catch (BadEventException refused) {
                assertThat(refused.reason().label()).as("%s: %s", e, refused.getMessage()).isEqualTo(e.reason());
                assertThat(sink.calls).as("%s", e).isEmpty();
            } catch (RuntimeException other) {
                throw new AssertionError(e + " threw " + other, other);
            }
        }
    }

    @Test
    void theCorpusHasEveryReason() {
        Map<String, Long> byReason = BadEventCorpus.entries().stream()
                .collect(Collectors.groupingBy(BadEventCorpus.Entry::reason, TreeMap::new, Collectors.counting()));
        assertThat(byReason.keySet()).containsExactlyInAnyOrderElementsOf(
                Arrays.stream(Reason.values()).map(Reason::label).toList());
    }

    @Test
    void theCorpusNotationWritesBytesAndRepetitions() {
        assertThat(BadEventCorpus.bytes("a\\xC0\\x80b")).containsExactly('a', 0xC0, 0x80, 'b');
        assertThat(BadEventCorpus.bytes("${3*[}${2*\\x7D}")).containsExactly('[', '[', '[', '}', '}');
        assertThat(BadEventCorpus.bytes("${0*x}")).isEmpty();
        assertThat(BadEventCorpus.bytes("\"s\\q\" é")).isEqualTo("\"s\\q\" é".getBytes(StandardCharsets.UTF_8));
    }
}
