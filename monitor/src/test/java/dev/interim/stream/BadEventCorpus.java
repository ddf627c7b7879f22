package dev.interim.stream;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;
import java.util.Objects;

/**
 * The curated bad events of {@code bad-events.txt}: each line a reason label and a record, with
 * {@code \xHH} for a raw byte and {@code ${N*TEXT}} for TEXT repeated N times (the file's header
 * says so too). Shared by the reader's corpus test and the daemon's.
 */
public final class BadEventCorpus {
    public static final String RESOURCE = "/dev/interim/stream/bad-events.txt";
    /** The configuration the corpus is written against (invented; see its header). */
    public static final String CONFIG_RESOURCE = TileEvents.CONFIG_RESOURCE;

    private BadEventCorpus() {}

    /** One bad record: where it is in the file, the reason label it must get, and its bytes. */
    public record Entry(int line, String reason, byte[] bytes) {
        @Override
        public String toString() {
            return "line " + line + " (" + reason + "): " + TileEvents.show(bytes);
        }
    }

    public static List<Entry> entries() {
        List<Entry> out = new ArrayList<>();
        List<String> lines = text(RESOURCE).lines().toList();
        for (int i = 0; i < lines.size(); i++) {
            String line = lines.get(i);
            if (line.isBlank() || line.startsWith("#")) {
                continue;
            }
            String[] parts = line.split("\\s+", 2);
            out.add(new Entry(i + 1, parts[0], bytes(parts.length > 1 ? parts[1] : "")));
        }
        return out;
    }

    /** The text of a resource on the test class path. */
    public static String text(String resource) {
        try (InputStream in = BadEventCorpus.class.getResourceAsStream(resource)) {
            return new String(Objects.requireNonNull(in, resource).readAllBytes(), StandardCharsets.UTF_8);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    /** A record as written in the file: repetitions expanded, then \xHH escapes turned into bytes. */
    static byte[] bytes(String written) {
        StringBuilder expanded = new StringBuilder();
        int at = 0;
        for (int start = written.indexOf("${"); start >= 0; start = written.indexOf("${", at)) {
            int star = written.indexOf('*', start);
            int end = written.indexOf('}', star);
            expanded.append(written, at, start);
            expanded.append(written.substring(star + 1, end).repeat(Integer.parseInt(written.substring(start + 2, star))));
            at = end + 1;
        }
        expanded.append(written.substring(at));
        String text = expanded.toString();
        ByteArrayOutputStream out = new ByteArrayOutputStream(text.length());
        int plain = 0;
        for (int i = 0; i + 4 <= text.length(); i++) {
            if (text.startsWith("\\x", i) && isHex(text.charAt(i + 2)) && isHex(text.charAt(i + 3))) {
                out.writeBytes(text.substring(plain, i).getBytes(StandardCharsets.UTF_8));
                out.write(Integer.parseInt(text.substring(i + 2, i + 4), 16));
                i += 3;
                plain = i + 1;
            }
        }
        out.writeBytes(text.substring(plain).getBytes(StandardCharsets.UTF_8));
        return out.toByteArray();
    }

    private static boolean isHex(char c) {
        return Character.digit(c, 16) >= 0;
    }
}
