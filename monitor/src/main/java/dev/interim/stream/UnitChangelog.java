package dev.interim.stream;

import java.nio.ByteBuffer;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;
import java.util.function.BiConsumer;

/**
 * The units changelog of one input partition: what a commit writes of the unit table, and how a
 * new owner reads it back. Its cost follows the commits, not the units: a commit writes the units
 * it changed as a few <em>delta blocks</em> (many units per record, each a unit record as
 * {@link StateCodec} writes it), and once the deltas outgrow the table a <em>snapshot</em> of every
 * unit is written in chunks, with a manifest, and the deltas and chunks it replaces are deleted
 * (tombstones, so compaction removes them).
 *
 * <p>Record keys (the units topic, the input partition's number; {@code S} the source
 * "topic-partition", then 0x1e 0x1d, text after): {@code S␞␝d<seq>} a delta block,
 * {@code S␞␝s<generation>.<chunk>} a snapshot chunk, {@code S␞␝m} the manifest. Keys of one unit
 * each ({@code S␞experiment␟<12 bytes>}) are those of earlier versions, still read.
 *
 * <p>Why restoring in the log's order is right (everything below is written in the tally stage's
 * transaction, with the partials and the consumed offsets, so a reader sees a commit whole or not at
 * all, and a restore reads to the high watermark):
 * <ul>
 *   <li>every record holds units' whole states (never increments), so applying records in the order
 *       they were written leaves each unit as its latest record says;</li>
 *   <li>keys are never reused but the manifest's: compaction keeps the order of what remains, and
 *       removes only what a later snapshot replaced (the deltas before it and older chunks);</li>
 *   <li>a snapshot holds every unit the table holds, and units never leave the table: whatever
 *       older record survives compaction before it is overwritten by it.</li>
 * </ul>
 * So applying every record as it comes, oldest first, gives the state of the last commit; the
 * manifest only tells the next writer which keys are live (the next sequence number, the snapshot's
 * generation and chunk count, the first delta after it).
 *
 * <p>Mutable, confined to the tally stage's thread. After a failed transaction the stage rebuilds
 * it from the topic, like the tallies.
 */
final class UnitChangelog {
    /** Values of a block are cut at about this size (the broker's default record limit is 1 MiB). */
    static final int BLOCK_BYTES = 256 * 1024;
    /** A snapshot is written once the deltas since the last one exceed this, and twice its size. */
    static final long MIN_DELTA_BYTES_FOR_SNAPSHOT = 8L * 1024 * 1024;
    private static final byte SOURCE_END = 0x1e;
    private static final byte BLOCK_MARK = 0x1d;
    private static final byte BLOCK_VERSION = 1;

    private final String source;
    private final byte[] prefix;
    private final long minDeltaBytesForSnapshot;
    private final UnitRecords records = new UnitRecords();
    /** The next delta's sequence number. */
    private long nextSeq;
    /** The first delta after the live snapshot (or the first delta when there is none). */
    private long firstLiveSeq;
    /** The live snapshot's generation and chunk count (-1 and 0: none). */
    private long generation = -1;
    private int chunks;
    private long snapshotBytes;
    private long deltaBytes;
    /** Keys of one unit each (earlier versions) read at a restore: deleted by the first snapshot. */
    private final List<byte[]> legacyKeys = new ArrayList<>();

    UnitChangelog(String source) {
        this(source, MIN_DELTA_BYTES_FOR_SNAPSHOT);
    }

    /** With another threshold for snapshots (tests make them frequent). */
    UnitChangelog(String source, long minDeltaBytesForSnapshot) {
        this.source = source;
        this.minDeltaBytesForSnapshot = minDeltaBytesForSnapshot;
        byte[] s = source.getBytes(StandardCharsets.UTF_8);
        this.prefix = new byte[s.length + 2];
        System.arraycopy(s, 0, prefix, 0, s.length);
        prefix[s.length] = SOURCE_END;
        prefix[s.length + 1] = BLOCK_MARK;
    }

    // ---- writing ------------------------------------------------------------------------------

    /**
     * Writes what a commit owes the changelog: the units changed since the last commit as delta
     * blocks and, when the deltas have outgrown the table (or records of one unit each remain from an
     * earlier version), a snapshot that replaces them. {@code out} takes key and value (null: delete).
     */
    void commit(PartitionState state, BiConsumer<byte[], byte[]> out) {
        BlockWriter deltas = new BlockWriter(block -> {
            out.accept(key("d" + nextSeq), block);
            nextSeq++;
            deltaBytes += block.length;
        });
        records.drainChanged(state, deltas::add);
        deltas.flush();
        if (!legacyKeys.isEmpty() || (deltaBytes > minDeltaBytesForSnapshot && deltaBytes > 2 * snapshotBytes)) {
            snapshot(state, out);
        }
    }

    private void snapshot(PartitionState state, BiConsumer<byte[], byte[]> out) {
        long gen = generation + 1;
        int[] written = {0};
        long[] bytes = {0};
        BlockWriter chunksOut = new BlockWriter(block -> {
            out.accept(key("s" + gen + "." + written[0]), block);
            written[0]++;
            bytes[0] += block.length;
        });
        records.all(state, chunksOut::add);
        chunksOut.flush();
        for (long seq = firstLiveSeq; seq < nextSeq; seq++) {
            out.accept(key("d" + seq), null);
        }
        for (int c = 0; c < chunks; c++) {
            out.accept(key("s" + generation + "." + c), null);
        }
        for (byte[] k : legacyKeys) {
            out.accept(k, null);
        }
        legacyKeys.clear();
        generation = gen;
        chunks = written[0];
        firstLiveSeq = nextSeq;
        snapshotBytes = bytes[0];
        deltaBytes = 0;
        out.accept(key("m"), manifest());
    }

    private byte[] manifest() {
        return ByteBuffer.allocate(1 + 8 + 8 + 4 + 8 + 8).put(BLOCK_VERSION).putLong(nextSeq).putLong(generation)
                .putInt(chunks).putLong(snapshotBytes).putLong(firstLiveSeq).array();
    }

    private byte[] key(String suffix) {
        byte[] s = suffix.getBytes(StandardCharsets.US_ASCII);
        byte[] k = new byte[prefix.length + s.length];
        System.arraycopy(prefix, 0, k, 0, prefix.length);
        System.arraycopy(s, 0, k, prefix.length, s.length);
        return k;
    }

    /** Packs unit records (key, value) into blocks of about {@link #BLOCK_BYTES}. */
    private static final class BlockWriter {
        private final java.util.function.Consumer<byte[]> sink;
        private final ByteBuilder block = new ByteBuilder(BLOCK_BYTES + 1024);
        private int count;

        BlockWriter(java.util.function.Consumer<byte[]> sink) {
            this.sink = sink;
        }

        /** A unit record, written straight from the encoder into the block (no array per unit). */
        void add(StateCodec.UnitEncoder encoder, long keyHi, int keyLo) {
            if (count == 0) {
                block.write(BLOCK_VERSION);
            }
            block.writeLength(encoder.keyLength());
            encoder.writeKey(block, keyHi, keyLo);
            block.writeLength(encoder.valueLength());
            encoder.writeValue(block);
            count++;
            if (block.size() >= BLOCK_BYTES) {
                flush();
            }
        }

        void flush() {
            if (count > 0) {
                sink.accept(block.toByteArray());
                block.reset();
                count = 0;
            }
        }
    }

    // ---- reading ------------------------------------------------------------------------------

    /** Whether a units-topic key belongs to this partition's blocks, snapshot or manifest. */
    boolean isBlockKey(byte[] key) {
        if (key.length < prefix.length) {
            return false;
        }
        for (int i = 0; i < prefix.length; i++) {
            if (key[i] != prefix[i]) {
                return false;
            }
        }
        return true;
    }

    /**
     * Applies one record of the units topic of this partition's source, in the order of the log
     * (see the class comment): a block's units go into {@code state}; the manifest sets what the
     * next commit writes; a record of one unit (an earlier version) is applied by the caller, and its
     * key kept here for the first snapshot to delete.
     */
    void restore(byte[] key, byte[] value, PartitionState state, UnitApplier legacy) {
        if (!isBlockKey(key)) {
            if (value != null) {
                legacy.apply(key, value);
                legacyKeys.add(key);
            }
            return;
        }
        if (value == null) {
            return;
        }
        char kind = (char) key[prefix.length];
        String rest = new String(key, prefix.length + 1, key.length - prefix.length - 1, StandardCharsets.US_ASCII);
        if (kind == 'm') {
            ByteBuffer b = ByteBuffer.wrap(value);
            if (b.get() != BLOCK_VERSION) {
                throw new IllegalArgumentException(source + ": a units manifest of an unknown version");
            }
            nextSeq = Math.max(nextSeq, b.getLong());
            generation = b.getLong();
            chunks = b.getInt();
            snapshotBytes = b.getLong();
            firstLiveSeq = b.getLong();
            deltaBytes = 0;
            return;
        }
        if (kind == 'd') {
            long seq = Long.parseLong(rest);
            nextSeq = Math.max(nextSeq, seq + 1);
            if (seq >= firstLiveSeq) {
                deltaBytes += value.length;
            }
        } else if (kind != 's') {
            throw new IllegalArgumentException(source + ": an unknown record on the units topic");
        }
        forEachUnit(value, legacy);
    }

    /** How a unit record (key and value, as {@link StateCodec} writes them) reaches the tally. */
    @FunctionalInterface
    interface UnitApplier {
        void apply(byte[] key, byte[] value);
    }

    /** The unit records of one block, in the order written. */
    static void forEachUnit(byte[] block, UnitApplier out) {
        ByteBuffer b = ByteBuffer.wrap(block);
        if (b.get() != BLOCK_VERSION) {
            throw new IllegalArgumentException("a block of unit records of an unknown version");
        }
        while (b.hasRemaining()) {
            byte[] key = new byte[length(b)];
            b.get(key);
            byte[] value = new byte[length(b)];
            b.get(value);
            out.apply(key, value);
        }
    }

    private static int length(ByteBuffer b) {
        int n = 0;
        for (int shift = 0; shift < 32; shift += 7) {
            int x = b.get() & 0xff;
            n |= (x & 0x7f) << shift;
            if ((x & 0x80) == 0) {
                return n;
            }
        }
        throw new IllegalArgumentException("a block of unit records with a bad length");
    }

    /** The next delta's sequence number (tests). */
    long nextSeq() {
        return nextSeq;
    }

    /** The live snapshot's generation, -1 before the first (tests). */
    long generation() {
        return generation;
    }
}
