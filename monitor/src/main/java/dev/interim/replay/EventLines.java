package dev.interim.replay;

import java.io.BufferedInputStream;
import java.io.Closeable;
import java.io.FilterInputStream;
import java.io.IOException;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.Locale;
import java.util.zip.GZIPInputStream;

/**
 * The lines of an NDJSON file, plain or gzip-compressed (recognised by its first two bytes, the gzip
 * magic number 1f 8b; a name ending in {@code .gz} must have them), as byte arrays without the line
 * end ({@code \n} or {@code \r\n}). A line longer than {@link #maxLength} is not held in memory: it
 * comes back as {@link #OVERSIZED}, its length in {@link #oversizedLength()}.
 *
 * <p>{@link #bytesRead()} counts the bytes read from the file itself (compressed ones for gzip), so
 * that progress can be shown as a share of the file's size. Mutable, one owner.
 */
final class EventLines implements Closeable {
    /** Returned, by identity, for a line longer than the limit. */
    static final byte[] OVERSIZED = new byte[0];

    private static final int FIRST_BUFFER = 1 << 18;
    private final CountingStream counted;
    private final InputStream in;
    private final long size;
    private final boolean compressed;
    private final int maxLength;
    private byte[] buf = new byte[FIRST_BUFFER];
    private int start;
    private int end;
    private boolean eof;
    private long lineNumber;
    private long oversizedLength;

    private EventLines(CountingStream counted, InputStream in, long size, boolean compressed, int maxLength) {
        this.counted = counted;
        this.in = in;
        this.size = size;
        this.compressed = compressed;
        this.maxLength = maxLength;
    }

    /**
     * Opens {@code file}; lines longer than {@code maxLength} bytes are reported as {@link #OVERSIZED}.
     *
     * @throws IllegalArgumentException when the name ends in .gz but the content is not gzip
     */
    static EventLines open(Path file, int maxLength) throws IOException {
        long size = Files.size(file);
        CountingStream counted = new CountingStream(Files.newInputStream(file));
        try {
            BufferedInputStream buffered = new BufferedInputStream(counted, 1 << 16);
            buffered.mark(2);
            int b0 = buffered.read();
            int b1 = buffered.read();
            buffered.reset();
            boolean gzip = b0 == 0x1f && b1 == 0x8b;
            if (!gzip && file.getFileName().toString().toLowerCase(Locale.ROOT).endsWith(".gz")) {
                throw new IllegalArgumentException(file + ": the name ends in .gz but the file is not gzip-compressed "
                        + "(it does not start with the gzip magic bytes 1f 8b)");
            }
            InputStream in = gzip ? new GZIPInputStream(buffered, 1 << 16) : buffered;
            return new EventLines(counted, in, size, gzip, maxLength);
        } catch (IOException | RuntimeException e) {
            counted.close();
            throw e;
        }
    }

    /** The file's size in bytes. */
    long size() {
        return size;
    }

    boolean compressed() {
        return compressed;
    }

    /** Bytes read from the file so far (ahead of the lines returned by at most the buffers). */
    long bytesRead() {
        return counted.count;
    }

    /** The number of the line last returned, from 1. */
    long lineNumber() {
        return lineNumber;
    }

    /**
     * The length in bytes of the last line returned as {@link #OVERSIZED}, without its line end (a
     * '\r' before the '\n' of a line too long to hold is counted).
     */
    long oversizedLength() {
        return oversizedLength;
    }

    /** The next line, {@link #OVERSIZED}, or null at the end of the file. */
    byte[] next() throws IOException {
        int searched = start;
        while (true) {
            for (int i = searched; i < end; i++) {
                if (buf[i] == '\n') {
                    return take(i, i + 1);
                }
            }
            if (eof) {
                return start < end ? take(end, end) : null;
            }
            searched = end;
            if (start > 0) {
                System.arraycopy(buf, start, buf, 0, end - start);
                searched -= start;
                end -= start;
                start = 0;
            }
            if (end == buf.length) {
                // maxLength + 1 content bytes and a '\r' fit: a line that fills that without a '\n' is too long.
                int cap = maxLength + 2;
                if (buf.length >= cap) {
                    return skipOversized();
                }
                buf = Arrays.copyOf(buf, (int) Math.min(cap, 2L * buf.length));
            }
            fill();
        }
    }

    private void fill() throws IOException {
        int n = in.read(buf, end, buf.length - end);
        if (n < 0) {
            eof = true;
        } else {
            end += n;
        }
    }

    private byte[] take(int lineEnd, int next) {
        int to = lineEnd > start && buf[lineEnd - 1] == '\r' ? lineEnd - 1 : lineEnd;
        int from = start;
        start = next;
        lineNumber++;
        if (to - from > maxLength) {
            oversizedLength = to - from;
            return OVERSIZED;
        }
        return Arrays.copyOfRange(buf, from, to);
    }

    /** Skips the rest of a line too long to hold, counting its length. */
    private byte[] skipOversized() throws IOException {
        long length = end - start;
        start = end = 0;
        while (true) {
            fill();
            if (eof) {
                break;
            }
            int i = 0;
            while (i < end && buf[i] != '\n') {
                i++;
            }
            if (i < end) {
                length += i;
                start = i + 1;
                break;
            }
            length += end;
            end = 0;
        }
        lineNumber++;
        oversizedLength = length;
        return OVERSIZED;
    }

    @Override
    public void close() throws IOException {
        in.close();
    }

    /** Counts the bytes read through it. */
    private static final class CountingStream extends FilterInputStream {
        long count;

        CountingStream(InputStream in) {
            super(in);
        }

        @Override
        public int read() throws IOException {
            int b = super.read();
            if (b >= 0) {
                count++;
            }
            return b;
        }

        @Override
        public int read(byte[] b, int off, int len) throws IOException {
            int n = super.read(b, off, len);
            if (n > 0) {
                count += n;
            }
            return n;
        }

        @Override
        public long skip(long n) throws IOException {
            long k = super.skip(n);
            count += k;
            return k;
        }
    }
}
