package dev.interim.replay;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.IOException;
import java.io.OutputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.zip.GZIPOutputStream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Lines of plain and gzip files: line ends, the last line, lines too long to hold, bytes counted. */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class EventLinesTest {
    @TempDir
    Path dir;

    private static List<String> lines(Path file, int maxLength) throws IOException {
        List<String> out = new ArrayList<>();
        try (EventLines lines = EventLines.open(file, maxLength)) {
            for (byte[] line; (line = lines.next()) != null; ) {
                out.add(line == EventLines.OVERSIZED ? "OVERSIZED(" + lines.oversizedLength() + ") at line "
                        + lines.lineNumber() : new String(line, StandardCharsets.UTF_8));
            }
            assertThat(lines.bytesRead()).as("every byte of the file read").isEqualTo(Files.size(file));
        }
        return out;
    }

    @Test
    void unixAndWindowsLineEndsAndALastLineWithoutOne() throws IOException {
        Path f = Files.writeString(dir.resolve("a.ndjson"), "{\"a\":1}\n{\"b\":2}\r\n\n{\"c\":3}");
        assertThat(lines(f, 100)).containsExactly("{\"a\":1}", "{\"b\":2}", "", "{\"c\":3}");
    }

    @Test
    void linesLongerThanTheLimitAreSkippedWithTheirLength() throws IOException {
        String longLine = "y".repeat(700_000);
        Path f = Files.writeString(dir.resolve("b.ndjson"), "short\n" + longLine + "\nafter\n" + "z".repeat(11) + "\nend");
        assertThat(lines(f, 10)).containsExactly("short", "OVERSIZED(700000) at line 2", "after",
                "OVERSIZED(11) at line 4", "end");
        assertThat(lines(f, 700_000)).containsExactly("short", longLine, "after", "z".repeat(11), "end");
    }

    @Test
    void aLineThatFillsTheBufferExactlyIsKept() throws IOException {
        // The first buffer holds 2^18 bytes: lines around that size cross its end.
        StringBuilder text = new StringBuilder();
        List<String> expected = new ArrayList<>();
        for (int n : new int[] {(1 << 18) - 1, 1 << 18, (1 << 18) + 1, 3, 1 << 19}) {
            String line = "q".repeat(n);
            expected.add(line);
            text.append(line).append('\n');
        }
        Path f = Files.writeString(dir.resolve("c.ndjson"), text);
        assertThat(lines(f, 1 << 20)).containsExactlyElementsOf(expected);
    }

    @Test
    void gzipIsReadByItsMagicBytesAndConcatenatedMembersFollowEachOther() throws IOException {
        Path f = dir.resolve("events.bin");
        try (OutputStream out = Files.newOutputStream(f)) {
            for (String part : new String[] {"{\"a\":1}\n{\"b\":2}\n", "{\"c\":3}\n"}) {
                GZIPOutputStream gz = new GZIPOutputStream(out);
                gz.write(part.getBytes(StandardCharsets.UTF_8));
                gz.finish();
            }
        }
        try (EventLines lines = EventLines.open(f, 100)) {
            assertThat(lines.compressed()).isTrue();
        }
        assertThat(lines(f, 100)).containsExactly("{\"a\":1}", "{\"b\":2}", "{\"c\":3}");
    }

    @Test
    void anEmptyFileHasNoLines() throws IOException {
        assertThat(lines(Files.write(dir.resolve("empty"), new byte[0]), 100)).isEmpty();
    }
}
