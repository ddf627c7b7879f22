package dev.interim.stream;

import java.util.Arrays;
import java.util.ConcurrentModificationException;
import java.util.function.IntConsumer;
import org.apache.commons.codec.digest.MurmurHash3;

/**
 * The per-unit state of one experiment in one input partition, as columns of primitive arrays:
 * an open-addressing hash table with linear probing, keyed by a 96-bit hash of the unit id. There
 * is no object per unit: a unit is a slot, and what it holds is one element of each column.
 *
 * <p><b>Key width.</b> The unit id itself is not kept, only 96 bits of its MurmurHash3 (x64, 128-bit
 * variant, see {@link Hasher}). Two units whose keys collide would be taken for one; by the birthday
 * bound the chance of any collision among n units is at most n²/2^(b+1): with n = 10 million units
 * that is 10^14 / 2^97 ≈ 6.3e-16 for b = 96, against 2.7e-6 for b = 64 (too likely across many
 * experiments, partitions and months) and 1.5e-25 for b = 128. 96 bits keep it negligible while
 * leaving room in the memory budget that 128 bits would break (see below).
 *
 * <p><b>Memory.</b> Per slot: 8 + 4 bytes of key, 1 byte of arm, the unit-rate bits (0, 1, 2, 4 or
 * 8·⌈r/64⌉ bytes for r unit-rate metrics), 8 bytes per unit-total metric and 1 bit of change flag.
 * The capacity is not a power of two: a slot is found by the fast range reduction
 * {@code ((h >>> 32) * capacity) >>> 32} of the key's top 32 bits, and the table grows by half (×1.5)
 * when an insert would take it above a load of 0.8, so above the smallest sizes the load stays in
 * [0.8 / 1.5, 0.8] ≈ [0.53, 0.8]. With one unit-total metric a slot is 21.125 bytes, which is at
 * most 21.125 / 0.533 ≈ 39.6 bytes per unit (and 26.4 at the top of the cycle); with 128-bit keys
 * it would be up to 47.
 *
 * <p><b>Changes.</b> A bitset over the slots marks the units changed since the last drain; it moves
 * with the entries when the table grows, and {@link #drainChanged} walks it.
 *
 * <p>Units are never removed, so the table needs no tombstones. Mutable and not thread-safe.
 */
final class UnitTable {
    /** Arms are kept as index + 1 in a byte (0 marks an empty slot), so at most 255 arms. */
    static final int MAX_ARMS = 255;
    static final double MAX_LOAD = 0.8;
    private static final int INITIAL_CAPACITY = 16;
    /** The largest array length the JVM allows everywhere. */
    private static final int MAX_CAPACITY = Integer.MAX_VALUE - 8;

    private final int rateMetrics;
    private final int totalMetrics;
    /** Bits per slot of the unit-rate column: 0, 8, 16, 32, or 64 per word of {@link #metWords}. */
    private final int metWidth;
    private final int metWordCount;

    private int capacity;
    private int size;
    private int threshold;
    private long[] keyHi;
    private int[] keyLo;
    private byte[] arm;
    private byte[] met8;
    private short[] met16;
    private int[] met32;
    private long[][] metWords;
    private double[][] totals;
    private long[] changed;
    private int changedCount;
    private boolean draining;
    /** Counts the growths: a slot found before stays valid while this is unchanged. */
    private int generation;

    /**
     * @param rateMetrics number of unit-rate metrics (one "met" bit each per unit)
     * @param totalMetrics number of unit-total metrics (one double each per unit)
     */
    UnitTable(int rateMetrics, int totalMetrics) {
        this(rateMetrics, totalMetrics, INITIAL_CAPACITY);
    }

    UnitTable(int rateMetrics, int totalMetrics, int initialCapacity) {
        if (rateMetrics < 0 || totalMetrics < 0 || initialCapacity < 2) {
            throw new IllegalArgumentException("bad unit table shape: " + rateMetrics + " unit-rate, "
                    + totalMetrics + " unit-total metrics, capacity " + initialCapacity);
        }
        this.rateMetrics = rateMetrics;
        this.totalMetrics = totalMetrics;
        if (rateMetrics == 0) {
            metWidth = 0;
        } else if (rateMetrics <= 8) {
            metWidth = 8;
        } else if (rateMetrics <= 16) {
            metWidth = 16;
        } else if (rateMetrics <= 32) {
            metWidth = 32;
        } else {
            metWidth = 64;
        }
        metWordCount = metWidth == 64 ? (rateMetrics + 63) / 64 : 0;
        allocate(initialCapacity);
    }

    private void allocate(int cap) {
        capacity = cap;
        threshold = (int) Math.min(cap - 1L, (long) (cap * MAX_LOAD));
        keyHi = new long[cap];
        keyLo = new int[cap];
        arm = new byte[cap];
        met8 = metWidth == 8 ? new byte[cap] : null;
        met16 = metWidth == 16 ? new short[cap] : null;
        met32 = metWidth == 32 ? new int[cap] : null;
        metWords = new long[metWordCount][];
        for (int w = 0; w < metWordCount; w++) {
            metWords[w] = new long[cap];
        }
        totals = new double[totalMetrics][];
        for (int m = 0; m < totalMetrics; m++) {
            totals[m] = new double[cap];
        }
        changed = new long[(cap + 63) >>> 6];
    }

    // ---- lookup and insertion -------------------------------------------------------------------

    /** The home slot of a key: fast range reduction of its top 32 bits onto [0, capacity). */
    private static int home(long hi, int cap) {
        return (int) (((hi >>> 32) * cap) >>> 32);
    }

    /** The slot of the key, or -1 when the table does not hold it. */
    int find(long hi, int lo) {
        int cap = capacity;
        int i = home(hi, cap);
        while (arm[i] != 0) {
            if (keyHi[i] == hi && keyLo[i] == lo) {
                return i;
            }
            if (++i == cap) {
                i = 0;
            }
        }
        return -1;
    }

    /**
     * The slot of the key when the table holds it; otherwise inserts it with {@code armIndex} (its
     * rate bits clear, its totals 0, not marked changed) and returns {@code -(slot + 1)}. An insert
     * may grow the table, which moves every slot: slots found before it are no longer valid.
     */
    int findOrInsert(long hi, int lo, int armIndex) {
        int cap = capacity;
        int i = home(hi, cap);
        while (arm[i] != 0) {
            if (keyHi[i] == hi && keyLo[i] == lo) {
                return i;
            }
            if (++i == cap) {
                i = 0;
            }
        }
        if (armIndex < 0 || armIndex >= MAX_ARMS) {
            throw new IllegalArgumentException("arm index " + armIndex + " outside [0, " + MAX_ARMS + ")");
        }
        if (draining) {
            throw new ConcurrentModificationException("a unit was added while the changed units were drained");
        }
        if (size >= threshold) {
            grow();
            cap = capacity;
            i = home(hi, cap);
            while (arm[i] != 0) {
                if (++i == cap) {
                    i = 0;
                }
            }
        }
        keyHi[i] = hi;
        keyLo[i] = lo;
        arm[i] = (byte) (armIndex + 1);
        size++;
        return -(i + 1);
    }

    private void grow() {
        if (capacity == MAX_CAPACITY) {
            throw new IllegalStateException("the unit table is full at " + size + " units");
        }
        int newCap = (int) Math.min(MAX_CAPACITY, capacity + Math.max(2L, capacity / 2L));
        long[] oldHi = keyHi;
        int[] oldLo = keyLo;
        byte[] oldArm = arm;
        byte[] old8 = met8;
        short[] old16 = met16;
        int[] old32 = met32;
        long[][] oldWords = metWords;
        double[][] oldTotals = totals;
        long[] oldChanged = changed;
        int oldCap = capacity;
        allocate(newCap);
        generation++;
        for (int j = 0; j < oldCap; j++) {
            if (oldArm[j] == 0) {
                continue;
            }
            long hi = oldHi[j];
            int i = home(hi, newCap);
            while (arm[i] != 0) {
                if (++i == newCap) {
                    i = 0;
                }
            }
            keyHi[i] = hi;
            keyLo[i] = oldLo[j];
            arm[i] = oldArm[j];
            switch (metWidth) {
                case 8 -> met8[i] = old8[j];
                case 16 -> met16[i] = old16[j];
                case 32 -> met32[i] = old32[j];
                case 64 -> {
                    for (int w = 0; w < metWordCount; w++) {
                        metWords[w][i] = oldWords[w][j];
                    }
                }
                default -> { }
            }
            for (int m = 0; m < totalMetrics; m++) {
                totals[m][i] = oldTotals[m][j];
            }
            if ((oldChanged[j >>> 6] & (1L << j)) != 0) {
                changed[i >>> 6] |= 1L << i;
            }
        }
    }

    // ---- the columns of one slot ----------------------------------------------------------------

    /** The arm index of the unit in {@code slot}. */
    int arm(int slot) {
        return (arm[slot] & 0xff) - 1;
    }

    long keyHi(int slot) {
        return keyHi[slot];
    }

    int keyLo(int slot) {
        return keyLo[slot];
    }

    /** True when {@code slot} holds a unit (for tests and dumps: slots are 0 to capacity - 1). */
    boolean occupied(int slot) {
        return arm[slot] != 0;
    }

    /** True when the unit met unit-rate metric {@code bit} (0 to rateMetrics - 1). */
    boolean met(int slot, int bit) {
        return switch (metWidth) {
            case 8 -> (met8[slot] & (1 << bit)) != 0;
            case 16 -> (met16[slot] & (1 << bit)) != 0;
            case 32 -> (met32[slot] & (1 << bit)) != 0;
            case 64 -> (metWords[bit >>> 6][slot] & (1L << bit)) != 0;
            default -> throw new IndexOutOfBoundsException("no unit-rate metric " + bit);
        };
    }

    void setMet(int slot, int bit) {
        if (bit < 0 || bit >= rateMetrics) {
            throw new IndexOutOfBoundsException("no unit-rate metric " + bit + " of " + rateMetrics);
        }
        switch (metWidth) {
            case 8 -> met8[slot] |= (byte) (1 << bit);
            case 16 -> met16[slot] |= (short) (1 << bit);
            case 32 -> met32[slot] |= 1 << bit;
            default -> metWords[bit >>> 6][slot] |= 1L << bit;
        }
    }

    double total(int slot, int metric) {
        return totals[metric][slot];
    }

    void setTotal(int slot, int metric, double value) {
        totals[metric][slot] = value;
    }

    /**
     * Sets the whole state of a unit (restoring it): its arm, no rate bits but those given, and its
     * totals as given (0 when absent). Inserts the unit when absent; does not mark it changed.
     *
     * @return the unit's slot
     */
    int put(long hi, int lo, int armIndex, boolean[] metBits, double[] totalValues) {
        int s = findOrInsert(hi, lo, armIndex);
        if (s < 0) {
            s = -s - 1;
        } else {
            if (armIndex < 0 || armIndex >= MAX_ARMS) {
                throw new IllegalArgumentException("arm index " + armIndex + " outside [0, " + MAX_ARMS + ")");
            }
            arm[s] = (byte) (armIndex + 1);
            clearMet(s);
        }
        for (int b = 0; b < rateMetrics; b++) {
            if (metBits[b]) {
                setMet(s, b);
            }
        }
        for (int m = 0; m < totalMetrics; m++) {
            totals[m][s] = totalValues[m];
        }
        return s;
    }

    private void clearMet(int slot) {
        switch (metWidth) {
            case 8 -> met8[slot] = 0;
            case 16 -> met16[slot] = 0;
            case 32 -> met32[slot] = 0;
            case 64 -> {
                for (int w = 0; w < metWordCount; w++) {
                    metWords[w][slot] = 0;
                }
            }
            default -> { }
        }
    }

    // ---- changes --------------------------------------------------------------------------------

    void markChanged(int slot) {
        long bit = 1L << slot;
        int w = slot >>> 6;
        if ((changed[w] & bit) == 0) {
            changed[w] |= bit;
            changedCount++;
        }
    }

    boolean isChanged(int slot) {
        return (changed[slot >>> 6] & (1L << slot)) != 0;
    }

    int changedCount() {
        return changedCount;
    }

    /**
     * Hands the slot of every unit changed since the last drain to {@code visitor}, in slot order,
     * and clears the change set. The visitor may read the table but not add units.
     */
    void drainChanged(IntConsumer visitor) {
        if (changedCount == 0) {
            return;
        }
        draining = true;
        try {
            long[] bits = changed;
            for (int w = 0; w < bits.length; w++) {
                long word = bits[w];
                while (word != 0) {
                    visitor.accept((w << 6) + Long.numberOfTrailingZeros(word));
                    word &= word - 1;
                }
                bits[w] = 0;
            }
            changedCount = 0;
        } finally {
            draining = false;
        }
    }

    /** Forgets the change set without visiting it. */
    void clearChanged() {
        if (changedCount != 0) {
            Arrays.fill(changed, 0L);
            changedCount = 0;
        }
    }

    // ---- size -----------------------------------------------------------------------------------

    int size() {
        return size;
    }

    /** Changes when the table grows (which moves every slot), and only then. */
    int generation() {
        return generation;
    }

    int capacity() {
        return capacity;
    }

    int rateMetrics() {
        return rateMetrics;
    }

    int totalMetrics() {
        return totalMetrics;
    }

    /** The bytes of the column arrays' elements (array headers, about 16 bytes each, not counted). */
    long bytes() {
        long perSlot = 8 + 4 + 1 + (long) metWordCount * 8 + 8L * totalMetrics
                + switch (metWidth) {
                    case 8 -> 1;
                    case 16 -> 2;
                    case 32 -> 4;
                    default -> 0;
                };
        return perSlot * capacity + 8L * changed.length;
    }

    // ---- keys -----------------------------------------------------------------------------------

    /**
     * Hashes unit ids to table keys: the UTF-8 bytes of the id through MurmurHash3 x64 128-bit (its
     * starting hash value 0), keeping the first 64-bit half whole and the low 32 bits of the second. The keys are written
     * to the units changelog, so this function is fixed: changing it would need a new record version.
     * Reuses one byte buffer, so hashing allocates only the hash's own two-long result.
     *
     * <p>Mutable, one owner; the last key is in {@link #hi} and {@link #lo}.
     */
    static final class Hasher {
        private byte[] buffer = new byte[256];
        private String last;
        long hi;
        int lo;

        /** Sets {@link #hi} and {@link #lo} to the key of {@code unit}. */
        void hash(String unit) {
            if (unit == last) {
                return;   // the reader names one unit object in every call of an event
            }
            int n = utf8(unit);
            long[] h = MurmurHash3.hash128x64(buffer, 0, n, 0);
            hi = h[0];
            lo = (int) h[1];
            last = unit;
        }

        /** Encodes {@code s} as String.getBytes(UTF_8) would (an unpaired surrogate as '?') into the buffer. */
        int utf8(String s) {
            int len = s.length();
            if (buffer.length < 3 * len) {
                buffer = new byte[Math.max(3 * len, 2 * buffer.length)];
            }
            byte[] b = buffer;
            int n = 0;
            for (int i = 0; i < len; i++) {
                char c = s.charAt(i);
                if (c < 0x80) {
                    b[n++] = (byte) c;
                } else if (c < 0x800) {
                    b[n++] = (byte) (0xc0 | (c >> 6));
                    b[n++] = (byte) (0x80 | (c & 0x3f));
                } else if (Character.isSurrogate(c)) {
                    char d = i + 1 < len ? s.charAt(i + 1) : 0;
                    if (Character.isHighSurrogate(c) && Character.isLowSurrogate(d)) {
                        int cp = Character.toCodePoint(c, d);
                        b[n++] = (byte) (0xf0 | (cp >> 18));
                        b[n++] = (byte) (0x80 | ((cp >> 12) & 0x3f));
                        b[n++] = (byte) (0x80 | ((cp >> 6) & 0x3f));
                        b[n++] = (byte) (0x80 | (cp & 0x3f));
                        i++;
                    } else {
                        b[n++] = '?';
                    }
                } else {
                    b[n++] = (byte) (0xe0 | (c >> 12));
                    b[n++] = (byte) (0x80 | ((c >> 6) & 0x3f));
                    b[n++] = (byte) (0x80 | (c & 0x3f));
                }
            }
            return n;
        }

        /** The bytes {@link #utf8} wrote last, for tests. */
        byte[] buffer() {
            return buffer;
        }
    }
}
