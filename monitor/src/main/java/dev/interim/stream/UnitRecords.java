package dev.interim.stream;

import java.util.IdentityHashMap;
import java.util.Map;
import java.util.function.BiConsumer;

/**
 * A partition's units as the units changelog's records (key and value bytes, see {@link StateCodec}):
 * the changed ones for a commit, all of them for a snapshot. The tally ({@link PartitionState}) knows
 * nothing of the encoding; this is where its table meets the codec.
 *
 * <p>Mutable (an encoder per experiment, made at its first unit), one thread.
 */
final class UnitRecords {
    private final Map<PartitionState.UnitColumns, StateCodec.UnitEncoder> encoders = new IdentityHashMap<>();

    /**
     * Takes one unit's record where it is encoded: the value in {@code encoder} (its
     * {@link StateCodec.UnitEncoder#writeValue}), the key from the unit's 96-bit key
     * ({@link StateCodec.UnitEncoder#writeKey}). The encoder is reused for the next unit.
     */
    interface Out {
        void unit(StateCodec.UnitEncoder encoder, long keyHi, int keyLo);
    }

    /** Every unit changed since the last drain, as records; the change set is cleared. */
    void drainChanged(PartitionState state, Out out) {
        state.drainChanged((c, t, slot) -> write(c, t, slot, out));
    }

    /** Every unit held, as records. */
    void all(PartitionState state, Out out) {
        state.forEachUnit((c, t, slot) -> write(c, t, slot, out));
    }

    /** {@link #drainChanged(PartitionState, Out)}, each record as two arrays. */
    void drainChanged(PartitionState state, BiConsumer<byte[], byte[]> out) {
        drainChanged(state, asArrays(out));
    }

    /** {@link #all(PartitionState, Out)}, each record as two arrays. */
    void all(PartitionState state, BiConsumer<byte[], byte[]> out) {
        all(state, asArrays(out));
    }

    private static Out asArrays(BiConsumer<byte[], byte[]> out) {
        return (encoder, hi, lo) -> out.accept(encoder.key(hi, lo), encoder.finish());
    }

    private void write(PartitionState.UnitColumns c, UnitTable t, int slot, Out out) {
        StateCodec.UnitEncoder encoder = encoders.computeIfAbsent(c,
                x -> new StateCodec.UnitEncoder(x.source(), x.experiment(), x.arms(), x.rateNames(), x.totalColumns()));
        encode(c, t, slot, encoder);
        out.unit(encoder, t.keyHi(slot), t.keyLo(slot));
    }

    /** One unit's value, into {@code encoder}: its arm, the unit-rate metrics it met, its non-zero totals. */
    private static void encode(PartitionState.UnitColumns c, UnitTable t, int slot, StateCodec.UnitEncoder encoder) {
        int[] bits = c.rateBits();
        int met = 0;
        for (int bit : bits) {
            if (t.met(slot, bit)) {
                met++;
            }
        }
        encoder.begin(t.arm(slot), met);
        for (int i = 0; i < bits.length; i++) {
            if (t.met(slot, bits[i])) {
                encoder.met(i);
            }
        }
        int columns = c.totalColumns().length;
        int written = 0;
        for (int col = 0; col < columns; col++) {
            if (Double.doubleToRawLongBits(t.total(slot, col)) != 0) {
                written++;
            }
        }
        encoder.totalCount(written);
        for (int col = 0; col < columns; col++) {
            double v = t.total(slot, col);
            if (Double.doubleToRawLongBits(v) != 0) {
                encoder.total(col, v);
            }
        }
    }
}
