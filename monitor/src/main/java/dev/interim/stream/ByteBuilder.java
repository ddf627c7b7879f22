package dev.interim.stream;

import java.util.Arrays;

/**
 * A growable byte array for the records a commit writes: what {@link java.io.ByteArrayOutputStream}
 * does, without its lock on every byte (a commit writes a few bytes at a time for each changed unit,
 * on the tally stage's hot path). Mutable, one thread.
 */
final class ByteBuilder {
    private byte[] bytes;
    private int size;

    ByteBuilder(int capacity) {
        bytes = new byte[Math.max(16, capacity)];
    }

    void write(int b) {
        ensure(1);
        bytes[size++] = (byte) b;
    }

    void write(byte[] b, int offset, int length) {
        ensure(length);
        System.arraycopy(b, offset, bytes, size, length);
        size += length;
    }

    void write(byte[] b) {
        write(b, 0, b.length);
    }

    /** Eight bytes, big-endian. */
    void writeLong(long v) {
        ensure(Long.BYTES);
        for (int shift = 56; shift >= 0; shift -= 8) {
            bytes[size++] = (byte) (v >>> shift);
        }
    }

    /** Four bytes, big-endian. */
    void writeInt(int v) {
        ensure(Integer.BYTES);
        for (int shift = 24; shift >= 0; shift -= 8) {
            bytes[size++] = (byte) (v >>> shift);
        }
    }

    /** An unsigned length in 7-bit groups, low group first, the high bit set on all but the last. */
    void writeLength(int n) {
        ensure(5);
        while ((n & ~0x7f) != 0) {
            bytes[size++] = (byte) ((n & 0x7f) | 0x80);
            n >>>= 7;
        }
        bytes[size++] = (byte) n;
    }

    /** Appends what this holds to {@code out}. */
    void writeTo(ByteBuilder out) {
        out.write(bytes, 0, size);
    }

    int size() {
        return size;
    }

    void reset() {
        size = 0;
    }

    byte[] toByteArray() {
        return Arrays.copyOf(bytes, size);
    }

    private void ensure(int more) {
        if (size + more > bytes.length) {
            bytes = Arrays.copyOf(bytes, Math.max(2 * bytes.length, size + more));
        }
    }
}
