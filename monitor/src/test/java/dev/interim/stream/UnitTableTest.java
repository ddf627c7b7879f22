package dev.interim.stream;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import java.nio.charset.StandardCharsets;
import java.util.Arrays;
import java.util.ConcurrentModificationException;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Set;
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.Combinators;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;
import net.jqwik.api.constraints.IntRange;
import net.jqwik.api.constraints.Size;
import org.apache.commons.codec.digest.MurmurHash3;
import org.junit.jupiter.api.Test;

/**
 * The unit table against a plain {@link HashMap} model: any sequence of inserts, updates, restores,
 * growth and drains leaves the same units with the same state, and drains the same changed units.
 * Keys are invented, many of them sharing a home slot, sharing their 64-bit half, or homed at the
 * table's last slots, so that probing runs long, wraps around and compares both key parts.
 */
// Source: expected values come from the HashMap model in this test (its own ground truth), from the
// JDK's UTF-8 encoder and commons-codec's MurmurHash3 (the references named beside their checks), and
// from the table's documented growth rule; no published statistical values are checked here.
class UnitTableTest {

    // ---- the model ----------------------------------------------------------------------------------

    /** What the model holds per unit. */
    record Unit(int arm, boolean[] met, double[] totals) {
        Unit copy() {
            return new Unit(arm, met.clone(), totals.clone());
        }

        @Override
        public boolean equals(Object o) {
            return o instanceof Unit u && u.arm == arm && Arrays.equals(u.met, met) && Arrays.equals(u.totals, totals);
        }

        @Override
        public int hashCode() {
            return Objects.hash(arm, Arrays.hashCode(met), Arrays.hashCode(totals));
        }

        @Override
        public String toString() {
            return "Unit[arm=" + arm + ", met=" + Arrays.toString(met) + ", totals=" + Arrays.toString(totals) + "]";
        }
    }

    record Key(long hi, int lo) {}

    /**
     * The invented key of index {@code i}: pairs of indices share their 64-bit half (and differ in
     * the 32-bit one); one in five has the same top 32 bits, homed at the very last slots.
     */
    static Key key(int i) {
        int j = i % 8 < 2 ? -(i / 8) - 1 : i;
        long top = Math.floorMod(j, 5) == 0 ? 0xFFFF_FFF0L : (mix(j) & 0xFFFF_FFFFL);
        return new Key(top << 32 | (j & 0xFFFF_FFFFL), i);
    }

    private static long mix(long z) {
        z = (z ^ (z >>> 33)) * 0xff51afd7ed558ccdL;
        z = (z ^ (z >>> 33)) * 0xc4ceb9fe1a85ec53L;
        return z ^ (z >>> 33);
    }

    sealed interface Op permits Touch, Meet, Add, Restore, Drain, Clear {}

    /** An event of a unit: inserted in {@code arm} when new, marked changed when new. */
    record Touch(int key, int arm) implements Op {}

    record Meet(int key, int arm, int bit) implements Op {}

    record Add(int key, int arm, int metric, double value) implements Op {}

    record Restore(int key, int arm, long metBits, double total) implements Op {}

    record Drain() implements Op {}

    record Clear() implements Op {}

    @Provide
    Arbitrary<List<Op>> ops() {
        Arbitrary<Integer> keys = Arbitraries.oneOf(Arbitraries.integers().between(0, 40),
                Arbitraries.integers().between(0, 3000));
        Arbitrary<Integer> arms = Arbitraries.integers().between(0, 4);
        Arbitrary<Integer> bits = Arbitraries.integers().between(0, 127);
        Arbitrary<Double> values = Arbitraries.doubles().between(-1e6, 1e6);
        Arbitrary<Op> op = Arbitraries.frequencyOf(
                net.jqwik.api.Tuple.of(20, Combinators.combine(keys, arms).as(Touch::new)),
                net.jqwik.api.Tuple.of(6, Combinators.combine(keys, arms, bits).as(Meet::new)),
                net.jqwik.api.Tuple.of(6, Combinators.combine(keys, arms, bits, values).as(Add::new)),
                net.jqwik.api.Tuple.of(2, Combinators.combine(keys, arms, Arbitraries.longs(), values).as(Restore::new)),
                net.jqwik.api.Tuple.of(1, Arbitraries.just(new Drain())),
                net.jqwik.api.Tuple.of(1, Arbitraries.just(new Clear())));
        return op.list().ofMinSize(1).ofMaxSize(600);
    }

    @Property(tries = 300)
    void behavesAsAHashMapWithAChangeSet(@ForAll("ops") List<Op> ops,
            @ForAll("rateMetricCounts") int rates, @ForAll @IntRange(min = 0, max = 3) int totalCount,
            @ForAll @IntRange(min = 2, max = 20) int initialCapacity) {
        UnitTable table = new UnitTable(rates, totalCount, initialCapacity);
        Map<Key, Unit> model = new HashMap<>();
        Set<Key> changed = new HashSet<>();
        for (Op op : ops) {
            if (op instanceof Touch t) {
                touch(table, model, changed, t.key(), t.arm());
            } else if (op instanceof Meet m) {
                int slot = touch(table, model, changed, m.key(), m.arm());
                if (rates > 0) {
                    int bit = m.bit() % rates;
                    table.setMet(slot, bit);
                    table.markChanged(slot);
                    model.get(key(m.key())).met()[bit] = true;
                    changed.add(key(m.key()));
                }
            } else if (op instanceof Add a) {
                int slot = touch(table, model, changed, a.key(), a.arm());
                if (totalCount > 0) {
                    int metric = a.metric() % totalCount;
                    table.setTotal(slot, metric, table.total(slot, metric) + a.value());
                    table.markChanged(slot);
                    model.get(key(a.key())).totals()[metric] += a.value();
                    changed.add(key(a.key()));
                }
            } else if (op instanceof Restore r) {
                boolean[] met = new boolean[rates];
                for (int b = 0; b < rates; b++) {
                    met[b] = (r.metBits() >>> (b % 64) & 1) != 0;
                }
                double[] totals = new double[totalCount];
                Arrays.fill(totals, r.total());
                Key k = key(r.key());
                table.put(k.hi(), k.lo(), r.arm(), met, totals);
                model.put(k, new Unit(r.arm(), met.clone(), totals.clone()));
            } else if (op instanceof Drain) {
                Map<Key, Unit> drained = new HashMap<>();
                table.drainChanged(slot -> drained.put(new Key(table.keyHi(slot), table.keyLo(slot)), unit(table, slot)));
                Map<Key, Unit> expected = new HashMap<>();
                changed.forEach(k -> expected.put(k, model.get(k)));
                assertThat(drained).as("drained units and their state").isEqualTo(expected);
                assertThat(table.changedCount()).isZero();
                changed.clear();
            } else {
                table.clearChanged();
                changed.clear();
            }
            assertThat(table.size()).isEqualTo(model.size());
            assertThat(table.size()).as("load at most 0.8").isLessThanOrEqualTo((int) (0.8 * table.capacity()));
            assertThat(table.changedCount()).isEqualTo(changed.size());
        }
        Map<Key, Unit> held = new HashMap<>();
        Set<Key> marked = new HashSet<>();
        for (int slot = 0; slot < table.capacity(); slot++) {
            if (table.occupied(slot)) {
                Key k = new Key(table.keyHi(slot), table.keyLo(slot));
                held.put(k, unit(table, slot));
                if (table.isChanged(slot)) {
                    marked.add(k);
                }
            }
        }
        assertThat(held).isEqualTo(model);
        assertThat(marked).isEqualTo(changed);
        for (int i = 0; i <= 3000; i++) {
            Key k = key(i);
            int slot = table.find(k.hi(), k.lo());
            assertThat(slot >= 0).as("key %d held", i).isEqualTo(model.containsKey(k));
        }
    }

    @Provide
    Arbitrary<Integer> rateMetricCounts() {
        return Arbitraries.of(0, 1, 5, 8, 9, 16, 17, 32, 33, 64, 70, 128);
    }

    private static int touch(UnitTable table, Map<Key, Unit> model, Set<Key> changed, int index, int arm) {
        Key k = key(index);
        int slot = table.findOrInsert(k.hi(), k.lo(), arm);
        if (slot >= 0) {
            assertThat(model).containsKey(k);
            return slot;
        }
        assertThat(model).doesNotContainKey(k);
        slot = -slot - 1;
        table.markChanged(slot);
        model.put(k, new Unit(arm, new boolean[table.rateMetrics()], new double[table.totalMetrics()]));
        changed.add(k);
        return slot;
    }

    private static Unit unit(UnitTable table, int slot) {
        boolean[] met = new boolean[table.rateMetrics()];
        for (int b = 0; b < met.length; b++) {
            met[b] = table.met(slot, b);
        }
        double[] totals = new double[table.totalMetrics()];
        for (int m = 0; m < totals.length; m++) {
            totals[m] = table.total(slot, m);
        }
        return new Unit(table.arm(slot), met, totals).copy();
    }

    // ---- growth and memory --------------------------------------------------------------------------

    @Test
    void theLoadStaysBetweenTheGrowthBoundsAndAUnitTakesAtMost40Bytes() {
        UnitTable table = new UnitTable(0, 1);
        UnitTable.Hasher hasher = new UnitTable.Hasher();
        double lowest = 1;
        for (int i = 0; i < 300_000; i++) {
            hasher.hash("unit-" + i);
            int before = table.capacity();
            assertThat(table.findOrInsert(hasher.hi, hasher.lo, i % 2)).isNegative();
            double load = (double) table.size() / table.capacity();
            // the table's rule: grow by half at a load of 0.8, so the load never passes 0.8
            assertThat(load).isLessThanOrEqualTo(0.8);
            if (table.capacity() != before && before >= 1000) {
                // the table's rule: right after growing, the load is 0.8 / 1.5 (rounding aside)
                assertThat(load).isBetween(0.53, 0.54);
                lowest = Math.min(lowest, load);
            }
            if (table.size() >= 1000) {
                // the budget of the per-unit state: at most 40 bytes per unit for one unit-total metric
                assertThat((double) table.bytes() / table.size()).as("bytes per unit at %d units", table.size())
                        .isLessThanOrEqualTo(40.0);
            }
        }
        assertThat(lowest).isLessThan(0.54);
        // 8 + 4 key bytes, 1 arm byte, 8 bytes of total and 1 bit of change flag per slot: the layout documented
        assertThat(table.bytes()).isEqualTo(21L * table.capacity() + 8L * ((table.capacity() + 63) / 64));
    }

    @Test
    void changedUnitsFollowTheirEntriesThroughGrowth() {
        UnitTable table = new UnitTable(3, 1, 4);
        Set<Key> marked = new HashSet<>();
        for (int i = 0; i < 5000; i++) {
            Key k = key(i);
            int slot = -table.findOrInsert(k.hi(), k.lo(), i % 3) - 1;
            if (i % 7 == 0) {
                table.markChanged(slot);
                table.setTotal(slot, 0, i);
                marked.add(k);
            }
        }
        Set<Key> drained = new HashSet<>();
        table.drainChanged(slot -> {
            drained.add(new Key(table.keyHi(slot), table.keyLo(slot)));
            // each changed unit kept its own state through every growth (its index, set above)
            assertThat(table.total(slot, 0)).isEqualTo((double) table.keyLo(slot));
        });
        assertThat(drained).isEqualTo(marked);
        Set<Key> again = new HashSet<>();
        table.drainChanged(slot -> again.add(new Key(table.keyHi(slot), table.keyLo(slot))));
        assertThat(again).as("a drain clears the change set").isEmpty();
    }

    @Test
    void noUnitIsAddedWhileTheChangedOnesAreDrained() {
        UnitTable table = new UnitTable(0, 0);
        table.markChanged(-table.findOrInsert(1L << 40, 1, 0) - 1);
        assertThatThrownBy(() -> table.drainChanged(slot -> table.findOrInsert(2L << 40, 2, 0)))
                .isInstanceOf(ConcurrentModificationException.class);
        assertThat(table.changedCount()).as("the drain did not finish").isEqualTo(1);
    }

    @Test
    void armsAreKeptUpTo255() {
        UnitTable table = new UnitTable(0, 0);
        int slot = -table.findOrInsert(5, 5, 254) - 1;
        assertThat(table.arm(slot)).isEqualTo(254);
        assertThatThrownBy(() -> table.findOrInsert(6, 6, 255)).isInstanceOf(IllegalArgumentException.class);
    }

    // ---- keys ---------------------------------------------------------------------------------------

    @Property(tries = 1000)
    void unitIdsAreEncodedAsTheJdkEncodesUtf8(@ForAll @Size(max = 40) String unit) {
        UnitTable.Hasher hasher = new UnitTable.Hasher();
        int n = hasher.utf8(unit);
        // reference: the JDK's own UTF-8 encoder, unpaired surrogates as '?'
        assertThat(Arrays.copyOf(hasher.buffer(), n)).isEqualTo(unit.getBytes(StandardCharsets.UTF_8));
    }

    @Property(tries = 300)
    void theKeyIsNinetySixBitsOfTheLibraryHash(@ForAll @Size(max = 600) String unit) {
        UnitTable.Hasher hasher = new UnitTable.Hasher();
        hasher.hash(unit);
        // reference: commons-codec's MurmurHash3 x64 128-bit of the JDK's UTF-8 bytes
        long[] h = MurmurHash3.hash128x64(unit.getBytes(StandardCharsets.UTF_8));
        assertThat(hasher.hi).isEqualTo(h[0]);
        assertThat(hasher.lo).isEqualTo((int) h[1]);
    }

    @Test
    void theKeyOfAUnitIdIsFixed() {
        UnitTable.Hasher hasher = new UnitTable.Hasher();
        hasher.hash("ana");
        // pinned: commons-codec 1.23.0's MurmurHash3.hash128x64 of the bytes "ana", computed once when
        // the units changelog took these keys; its records depend on the function staying so
        Key ana = new Key(0xBB74DAF88FCB8E94L, 0x38B7C646);
        assertThat(new Key(hasher.hi, hasher.lo)).isEqualTo(ana);
        String sameText = new String("ana".toCharArray());
        hasher.hash("ben");
        hasher.hash(sameText);
        // common practice: a cache by identity must not return the previous id's key
        assertThat(new Key(hasher.hi, hasher.lo)).isEqualTo(ana);
    }
}
