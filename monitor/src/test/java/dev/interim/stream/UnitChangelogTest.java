package dev.interim.stream;

import static dev.interim.stream.PartitionStateTest.CATALOG;
import static dev.interim.stream.PartitionStateTest.FARES;
import static dev.interim.stream.PartitionStateTest.SHOP;
import static dev.interim.stream.PartitionStateTest.exposure;
import static dev.interim.stream.PartitionStateTest.outcome;
import static dev.interim.stream.PartitionStateTest.value;
import static org.assertj.core.api.Assertions.assertThat;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.HexFormat;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * The units changelog in delta blocks and snapshots restores exactly what was committed: a tally fed
 * random per-unit traffic commits through {@link UnitChangelog} into an in-memory log; a new tally
 * restored from that log, as written or as log compaction leaves it (the last record of each key,
 * tombstones gone, order kept), holds the same units, and its changelog carries on with keys that
 * never collide with earlier ones. Records of one unit each (an earlier layout) still restore and
 * are deleted by the first snapshot.
 */
// Source: expected values come from what this test itself writes (the original tally is the ground
// truth); no published statistical values are checked here.
class UnitChangelogTest {
    private static final String SOURCE = "mossglint.events-3";

    /** An append-only log of (key, value) records; a null value deletes its key at compaction. */
    static final class Log {
        final List<byte[][]> records = new ArrayList<>();

        void append(byte[] key, byte[] value) {
            records.add(new byte[][] {key, value});
        }

        /** What compaction leaves: each key's last record, in log order, tombstones removed. */
        List<byte[][]> compacted() {
            Map<String, Integer> last = new HashMap<>();
            for (int i = 0; i < records.size(); i++) {
                last.put(HexFormat.of().formatHex(records.get(i)[0]), i);
            }
            List<byte[][]> out = new ArrayList<>();
            for (int i = 0; i < records.size(); i++) {
                byte[][] r = records.get(i);
                if (last.get(HexFormat.of().formatHex(r[0])) == i && r[1] != null) {
                    out.add(r);
                }
            }
            return out;
        }
    }

    /** A restored tally and its changelog. */
    private record Restored(PartitionState state, UnitChangelog changelog) {}

    private static Restored restore(List<byte[][]> records, long snapshotBytes) {
        PartitionState state = new PartitionState(SOURCE, CATALOG);
        UnitChangelog log = new UnitChangelog(SOURCE, snapshotBytes);
        for (byte[][] r : records) {
            log.restore(r[0], r[1], state, (k, v) -> state.restoreUnit(StateCodec.unitKey(k, v).unit(), StateCodec.unit(v)));
        }
        return new Restored(state, log);
    }

    /** Every unit held, by its record key, as its record value (hex): the table's whole content. */
    private static Map<String, String> units(PartitionState s) {
        Map<String, String> out = new LinkedHashMap<>();
        new UnitRecords().all(s, (k, v) -> out.put(HexFormat.of().formatHex(k), HexFormat.of().formatHex(v)));
        return out;
    }

    private static void traffic(PartitionState s, SplittableRandom random, int events, int units) {
        for (int i = 0; i < events; i++) {
            String unit = "u" + random.nextInt(units);
            boolean shop = random.nextBoolean();
            String experiment = shop ? SHOP : FARES;
            String arm = shop ? (random.nextBoolean() ? "old" : "new") : (random.nextBoolean() ? "x" : "y");
            exposure(s, experiment, arm, unit);
            if (shop) {
                outcome(s, SHOP, arm, unit, "booked", random.nextInt(5) == 0);
                value(s, SHOP, arm, unit, "spend", random.nextInt(100) / 4.0);
            } else {
                outcome(s, FARES, arm, unit, "errors", random.nextInt(20) == 0);
            }
        }
    }

    @Test
    void restoringTheLogAsWrittenOrCompactedGivesTheCommittedUnitsAndWritingGoesOn() {
        SplittableRandom random = new SplittableRandom(11);
        PartitionState original = new PartitionState(SOURCE, CATALOG);
        Log log = new Log();
        UnitChangelog changelog = new UnitChangelog(SOURCE, 2_000);   // a snapshot every few commits
        for (int commit = 0; commit < 40; commit++) {
            traffic(original, random, 1 + random.nextInt(300), 500);
            changelog.commit(original, log::append);
        }
        assertThat(changelog.generation()).as("snapshots were written").isGreaterThan(2);
        Map<String, String> committed = units(original);
        assertThat(committed).hasSizeGreaterThan(400);
        assertThat(units(restore(log.records, 2_000).state())).isEqualTo(committed);
        List<byte[][]> compacted = log.compacted();
        assertThat(compacted.size()).as("compaction removes the replaced deltas and chunks").isLessThan(log.records.size());
        Restored next = restore(compacted, 2_000);
        assertThat(units(next.state())).isEqualTo(committed);

        // The restored owner writes on (its partials restored too, as the tally stage restores them):
        // its keys continue where the first owner's stopped.
        assertThat(next.changelog().nextSeq()).isEqualTo(changelog.nextSeq());
        original.partials().forEach(next.state()::restore);
        for (int commit = 0; commit < 20; commit++) {
            SplittableRandom r = new SplittableRandom(100 + commit);
            traffic(next.state(), r, 1 + r.nextInt(300), 700);
            next.changelog().commit(next.state(), log::append);
        }
        Map<String, String> later = units(next.state());
        assertThat(units(restore(log.records, 2_000).state())).isEqualTo(later);
        assertThat(units(restore(log.compacted(), 2_000).state())).isEqualTo(later);
    }

    @Test
    void aCommitWritesBlocksOfManyUnitsNotARecordPerUnit() {
        PartitionState s = new PartitionState(SOURCE, CATALOG);
        traffic(s, new SplittableRandom(3), 20_000, 10_000);
        Log log = new Log();
        new UnitChangelog(SOURCE).commit(s, log::append);
        int units = units(s).size();
        assertThat(units).isGreaterThan(8_000);
        assertThat(log.records.size()).as("%d units in %d records", units, log.records.size()).isLessThan(units / 500);
    }

    @Test
    void recordsOfOneUnitEachStillRestoreAndTheFirstSnapshotDeletesThem() {
        PartitionState earlier = new PartitionState(SOURCE, CATALOG);
        traffic(earlier, new SplittableRandom(5), 2_000, 300);
        Log log = new Log();
        new UnitRecords().drainChanged(earlier, log::append);   // the layout before blocks: a record per unit
        Map<String, String> committed = units(earlier);

        Restored upgraded = restore(log.records, UnitChangelog.MIN_DELTA_BYTES_FOR_SNAPSHOT);
        assertThat(units(upgraded.state())).isEqualTo(committed);
        int perUnitRecords = log.records.size();
        upgraded.changelog().commit(upgraded.state(), log::append);
        assertThat(upgraded.changelog().generation()).as("the first commit snapshots").isZero();
        List<byte[][]> compacted = log.compacted();
        assertThat(compacted.stream().filter(r -> !upgraded.changelog().isBlockKey(r[0])).count())
                .as("no record of one unit is left").isZero();
        assertThat(compacted.size()).isLessThan(perUnitRecords);
        assertThat(units(restore(compacted, UnitChangelog.MIN_DELTA_BYTES_FOR_SNAPSHOT).state())).isEqualTo(committed);
    }
}
