package dev.interim.stream;

import dev.interim.events.Catalog;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import dev.interim.config.ConfigLoader;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.Tally;
import dev.interim.stats.Moments;
import dev.interim.stats.ProportionCounts;
import dev.interim.stats.RatioMoments;
import java.lang.management.ManagementFactory;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.Combinators;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.Test;

/**
 * The per-unit rules of the partition state (docs/configuration.md, metric kinds): a unit is
 * counted once, in the arm of its first event; a unit-rate counts a unit's success once; a
 * unit-total replaces the unit's old total by its new one. And what a commit writes is enough: state
 * restored from the drained partials and units, through their codec, counts on exactly as the
 * original does. The experiments and events are invented (a fictional mossglint shop).
 */
// Source: expected values are counted by hand from the invented events of each test, or come from
// the original state itself (the restore property: its own ground truth); no published statistical
// values are checked here.
class PartitionStateTest {
    private static final String YAML = """
            kafka:
              input_topics: [mossglint.events]
              input_keyed_by_unit: true
            events:
              experiment: /exp
              arm: /arm
              unit: /user
            experiments:
              - id: mossglint-checkout
                assignment: event
                control: old
                treatments: [new, bold]
                metrics:
                  - {name: errors, kind: event-rate, role: guardrail, worse: higher, field: /status,
                     counts_if: {equals: error}, max_per_arm: 1000}
                  - {name: ms, kind: event-mean, role: guardrail, worse: higher, field: /ms, max_per_arm: 1000}
                  - {name: booked, kind: unit-rate, role: primary, worse: lower, field: /step,
                     counts_if: {equals: booked}, max_per_arm: 1000}
                  - {name: returned, kind: unit-rate, role: guardrail, worse: higher, field: /back,
                     counts_if: {equals: true}, max_per_arm: 1000}
                  - {name: spend, kind: unit-total, role: guardrail, worse: lower, field: /spend, max_per_arm: 1000}
                  - {name: items, kind: unit-total, role: guardrail, worse: lower, field: /items, max_per_arm: 1000}
                  - {name: ms-p90, kind: event-quantile, quantile: 0.9, role: guardrail, worse: higher, field: /ms,
                     max_per_arm: 1000}
              - id: mossglint-maps
                assignment: event
                control: a
                treatments: [b]
                metrics:
                  - {name: errors, kind: event-rate, role: guardrail, worse: higher, field: /status,
                     counts_if: {equals: error}, max_per_arm: 1000}
                  - {name: ms, kind: event-mean, role: guardrail, worse: higher, field: /ms, max_per_arm: 1000}
              - id: mossglint-fares
                assignment: unit
                control: x
                treatments: [y]
                metrics:
                  - {name: errors, kind: event-rate, role: guardrail, worse: higher, field: /status,
                     counts_if: {equals: error}, max_per_arm: 1000}
                  - {name: ms, kind: event-mean, role: guardrail, worse: higher, field: /ms, cap: 600, max_per_arm: 1000}
                  - {name: fare, kind: ratio, role: primary, worse: lower, numerator: /fare, denominator: /seats,
                     cap: 400, max_per_arm: 1000}
                  - {name: tips, kind: unit-total, role: guardrail, worse: lower, field: /tip, cap: 30, max_per_arm: 1000}
                  - {name: ms-p99, kind: event-quantile, quantile: 0.99, role: guardrail, worse: higher, field: /ms,
                     max_per_arm: 1000}
            """;
    private static final List<ExperimentDefinition> DEFINITIONS =
            ConfigLoader.parseWithoutSecrets(YAML).experiments().stream().map(e -> e.definition()).toList();
    static final Catalog CATALOG = new Catalog(DEFINITIONS);
    private static final String SOURCE = "mossglint.events-3";
    static final String SHOP = "mossglint-checkout";
    private static final String MAPS = "mossglint-maps";
    static final String FARES = "mossglint-fares";

    private static PartitionState state() {
        return new PartitionState(SOURCE, CATALOG);
    }

    // The sink takes catalog indices; these name them, as the reader resolves them.
    static void exposure(ObservationSink s, String experiment, String arm, String unit) {
        int e = CATALOG.index(experiment);
        s.exposure(e, CATALOG.arm(e, arm), unit);
    }

    static void outcome(ObservationSink s, String experiment, String arm, String unit, String metric,
                                boolean success) {
        int e = CATALOG.index(experiment);
        s.outcome(e, CATALOG.arm(e, arm), unit, CATALOG.metric(e, metric), success);
    }

    static void value(ObservationSink s, String experiment, String arm, String unit, String metric, double value) {
        int e = CATALOG.index(experiment);
        s.value(e, CATALOG.arm(e, arm), unit, CATALOG.metric(e, metric), value);
    }

    static void ratio(ObservationSink s, String experiment, String arm, String unit, String metric, double x,
                              double y) {
        int e = CATALOG.index(experiment);
        s.ratio(e, CATALOG.arm(e, arm), unit, CATALOG.metric(e, metric), x, y);
    }

    private static Map<PartialKey, Tally> byKey(List<PartitionState.Partial> partials) {
        Map<PartialKey, Tally> out = new HashMap<>();
        for (PartitionState.Partial p : partials) {
            assertThat(out.put(p.key(), p.tally())).as("one partial per key: %s", p.key()).isNull();
        }
        return out;
    }

    private static Tally tally(PartitionState s, String experiment, String arm, String metric) {
        return byKey(s.partials()).get(new PartialKey(experiment, arm, metric, SOURCE));
    }

    private static ProportionCounts rate(PartitionState s, String arm, String metric) {
        Tally t = tally(s, SHOP, arm, metric);
        return t == null ? null : ((Tally.Rate) t).counts();
    }

    private static Moments mean(PartitionState s, String arm, String metric) {
        Tally t = tally(s, SHOP, arm, metric);
        return t == null ? null : ((Tally.Mean) t).moments();
    }

    // ---- the per-unit rules ---------------------------------------------------------------------

    @Test
    void aUnitIsCountedOnceInTheArmOfItsFirstEvent() {
        PartitionState s = state();
        exposure(s, SHOP, "old", "ana");
        exposure(s, SHOP, "old", "ana");
        exposure(s, SHOP, "new", "ana");
        outcome(s, SHOP, "new", "ana", "booked", true);
        value(s, SHOP, "new", "ana", "spend", 12.0);
        outcome(s, SHOP, "new", "ana", "errors", true);
        exposure(s, SHOP, "new", "ben");

        assertThat(rate(s, "old", PartialKey.EXPOSURES)).as("ana: one unit, in old").isEqualTo(new ProportionCounts(0, 1));
        assertThat(rate(s, "new", PartialKey.EXPOSURES)).as("ben only").isEqualTo(new ProportionCounts(0, 1));
        assertThat(rate(s, "old", "booked")).as("ana's success counts in her first arm").isEqualTo(new ProportionCounts(1, 1));
        assertThat(rate(s, "new", "booked")).as("ben: a unit without success").isEqualTo(new ProportionCounts(0, 1));
        assertThat(mean(s, "old", "spend").count()).isEqualTo(1);
        assertThat(mean(s, "old", "spend").mean()).isEqualTo(12.0);
        assertThat(rate(s, "new", "errors")).as("event-level metrics count in the event's arm").isEqualTo(new ProportionCounts(1, 1));
        assertThat(rate(s, "old", "errors")).isNull();
        assertThat(tally(s, SHOP, "bold", PartialKey.EXPOSURES)).as("an arm without events has no partial").isNull();
        assertThat(s.unitCount()).isEqualTo(2);
    }

    @Test
    void aUnitRateCountsEveryUnitOnceAndItsSuccessOnce() {
        PartitionState s = state();
        for (int i = 0; i < 3; i++) {
            exposure(s, SHOP, "old", "cem");
            outcome(s, SHOP, "old", "cem", "booked", true);
        }
        exposure(s, SHOP, "old", "dia");
        outcome(s, SHOP, "old", "dia", "booked", false);
        outcome(s, SHOP, "old", "dia", "returned", true);
        outcome(s, SHOP, "old", "dia", "booked", true);

        assertThat(rate(s, "old", "booked")).as("cem (3 successes) and dia (1): 2 of 2 units").isEqualTo(new ProportionCounts(2, 2));
        assertThat(rate(s, "old", "returned")).as("dia only").isEqualTo(new ProportionCounts(1, 2));
        assertThat(rate(s, "old", PartialKey.EXPOSURES)).isEqualTo(new ProportionCounts(0, 2));
    }

    @Test
    void aUnitTotalRemovesTheUnitsOldTotalAndAcceptsItsNewOne() {
        PartitionState s = state();
        exposure(s, SHOP, "new", "eda");
        value(s, SHOP, "new", "eda", "spend", 40.0);
        value(s, SHOP, "new", "eda", "spend", 2.5);
        exposure(s, SHOP, "new", "fay");
        value(s, SHOP, "new", "fay", "items", 3);

        Moments spend = mean(s, "new", "spend");
        assertThat(spend.count()).as("one total per unit: eda 42.5, fay 0").isEqualTo(2);
        assertThat(spend.mean()).isCloseTo(21.25, within(1e-12));
        assertThat(spend.sumSquaredDeviations()).as("2 × 21.25²").isCloseTo(903.125, within(1e-9));
        Moments items = mean(s, "new", "items");
        assertThat(items.count()).isEqualTo(2);
        assertThat(items.mean()).as("eda 0, fay 3").isCloseTo(1.5, within(1e-12));
    }

    @Test
    void eventsWithoutAUnitCountAsEvents() {
        PartitionState s = state();
        exposure(s, MAPS, "a", null);
        outcome(s, MAPS, "a", null, "errors", true);
        exposure(s, MAPS, "a", null);
        value(s, MAPS, "a", null, "ms", 80);
        assertThat(((Tally.Rate) tally(s, MAPS, "a", PartialKey.EXPOSURES)).counts()).isEqualTo(new ProportionCounts(0, 2));
        assertThat(((Tally.Rate) tally(s, MAPS, "a", "errors")).counts()).isEqualTo(new ProportionCounts(1, 1));
        assertThat(s.unitCount()).isZero();
        assertThat(s.drainAccepted()).as("one exposure call per event").isEqualTo(Map.of(MAPS, 2L));
        assertThat(s.drainAccepted()).isEmpty();
    }

    @Test
    void theCatalogKnowsNoOtherNamesAndThePerUnitSinkNeedsAUnit() {
        // Names are resolved once, by the reader through the catalog: what it does not have is -1
        // there (the reader refuses such events); the sink sees only indices of the catalog.
        int shop = CATALOG.index(SHOP);
        assertThat(CATALOG.index("mossglint-nothing")).isEqualTo(-1);
        assertThat(CATALOG.arm(shop, "teal")).isEqualTo(-1);
        assertThat(CATALOG.metric(shop, "weight")).isEqualTo(-1);
        assertThat(CATALOG.definition(shop).metrics().get(CATALOG.metric(shop, "spend")).name()).isEqualTo("spend");
        PartitionState s = state();
        assertThatThrownBy(() -> value(s, SHOP, "old", null, "spend", 1)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("unit");
        assertThat(s.partials()).isEmpty();
    }

    @Test
    void underPerUnitAssignmentEventMetricsAreRatiosOfPerUnitSums() {
        // Counted by hand: ana (x) 2 requests, 1 error, 100 and 900 ms (900 capped at 600); ben (x) one
        // request, no error, 200 ms, then a fare of 450 (capped at 400) over 4 seats; cy (x) exposed only.
        PartitionState s = state();
        exposure(s, FARES, "x", "ana");
        outcome(s, FARES, "x", "ana", "errors", true);
        value(s, FARES, "x", "ana", "ms", 100);
        exposure(s, FARES, "x", "ana");
        outcome(s, FARES, "x", "ana", "errors", false);
        value(s, FARES, "x", "ana", "ms", 900);
        exposure(s, FARES, "x", "ben");
        outcome(s, FARES, "x", "ben", "errors", false);
        value(s, FARES, "x", "ben", "ms", 200);
        exposure(s, FARES, "y", "ben");                 // ben keeps x, the arm of his first event
        ratio(s, FARES, "y", "ben", "fare", 450, 4);
        exposure(s, FARES, "x", "cy");
        RatioMoments errors = ((Tally.Ratio) tally(s, FARES, "x", "errors")).moments();
        assertThat(errors).isEqualTo(RatioMoments.of(new double[] {1, 0, 0}, new double[] {2, 1, 0}));
        RatioMoments ms = ((Tally.Ratio) tally(s, FARES, "x", "ms")).moments();
        // Each event value is capped: ana's sum is 100 + 600.
        assertThat(ms.count()).isEqualTo(3);
        assertThat(ms.meanX() * 3).isCloseTo(900, within(1e-9));
        assertThat(ms.meanY() * 3).isCloseTo(3, within(1e-12));
        RatioMoments fare = ((Tally.Ratio) tally(s, FARES, "x", "fare")).moments();
        assertThat(fare.meanX() * 3).isCloseTo(400, within(1e-9));
        assertThat(fare.meanY() * 3).isCloseTo(4, within(1e-12));
        assertThat(tally(s, FARES, "y", "fare")).as("ben's fare counts in x").isNull();
        assertThat(((Tally.Rate) tally(s, FARES, "x", PartialKey.EXPOSURES)).count()).as("units").isEqualTo(3);
    }

    @Test
    void aQuantileCountsEachValueInItsArmPerEventAndInItsUnitsArmAndGroupPerUnit() {
        // Counted by hand: per-event assignment (the shop), each value in the arm of its event; per-unit
        // assignment (the fares), ben's values in x, the arm of his first event, all in his key's group.
        PartitionState s = state();
        value(s, SHOP, "old", "ana", "ms-p90", 120);
        value(s, SHOP, "new", "ana", "ms-p90", 80);
        value(s, SHOP, "new", "ben", "ms-p90", 95.5);
        exposure(s, FARES, "x", "ben");
        value(s, FARES, "x", "ben", "ms-p99", 200);
        value(s, FARES, "y", "ben", "ms-p99", 300);
        dev.interim.stats.HistogramCounts old = ((Tally.Quantile) tally(s, SHOP, "old", "ms-p90")).counts();
        dev.interim.stats.HistogramCounts fresh = ((Tally.Quantile) tally(s, SHOP, "new", "ms-p90")).counts();
        assertThat(old.groupCount()).as("one group per event").isEqualTo(1);
        assertThat(old.count()).isEqualTo(1);
        assertThat(fresh.count()).isEqualTo(2);
        assertThat(fresh.below(90)).isEqualTo(1);
        dev.interim.stats.HistogramCounts x = ((Tally.Quantile) tally(s, FARES, "x", "ms-p99")).counts();
        assertThat(x.groupCount()).isEqualTo(dev.interim.stats.HistogramCounts.UNIT_GROUPS);
        assertThat(x.count()).as("ben's two values, both in x").isEqualTo(2);
        assertThat(x.groupsUsed()).as("one unit, one group").isEqualTo(1);
        assertThat(tally(s, FARES, "y", "ms-p99")).isNull();
        // A partial of other groups (the assignment changed) is kept apart at a restore, not mixed.
        PartitionState restored = state();
        dev.interim.stats.RunningHistogram perEvent = new dev.interim.stats.RunningHistogram(1);
        perEvent.accept(5, 0);
        restored.restore(new PartitionState.Partial(new PartialKey(FARES, "x", "ms-p99", SOURCE),
                new Tally.Quantile(perEvent.snapshot())));
        value(restored, FARES, "x", "cy", "ms-p99", 7);
        assertThat(((Tally.Quantile) tally(restored, FARES, "x", "ms-p99")).counts().count())
                .as("the orphan replaced by the new partial, not added to").isEqualTo(1);
    }

    @Test
    void aUnitTotalsCapAppliesToTheUnitsTotalNotToEachValue() {
        // By hand: ana tips 20 then 25 (total 45, capped at 30); ben tips 10; cy nothing (0).
        PartitionState s = state();
        exposure(s, FARES, "x", "ana");
        value(s, FARES, "x", "ana", "tips", 20);
        value(s, FARES, "x", "ana", "tips", 25);
        exposure(s, FARES, "x", "ben");
        value(s, FARES, "x", "ben", "tips", 10);
        exposure(s, FARES, "x", "cy");
        Moments tips = ((Tally.Mean) tally(s, FARES, "x", "tips")).moments();
        assertThat(tips.count()).isEqualTo(3);
        assertThat(tips.mean()).isCloseTo((30 + 10 + 0) / 3.0, within(1e-12));
        assertThat(tips.sumSquaredDeviations()).isCloseTo(Moments.ofValues(30, 10, 0).sumSquaredDeviations(), within(1e-9));
    }

    // ---- what a commit writes, and what a restore reads -----------------------------------------

    @Test
    void restoredStateLeavesOutWhatTheCatalogNoLongerHas() {
        PartitionState s = state();
        PartialKey gone = new PartialKey(SHOP, "old", "weight", SOURCE);
        PartialKey changedKind = new PartialKey(SHOP, "old", "errors", SOURCE);
        s.restore(new PartitionState.Partial(gone, new Tally.Rate(new ProportionCounts(1, 4))));
        s.restore(new PartitionState.Partial(changedKind, new Tally.Mean(Moments.ofValues(1, 2))));
        s.restoreUnit(UnitKey.of(SHOP, "gil"), new UnitState("teal", Set.of(), Map.of()));
        s.restoreUnit(UnitKey.of(SHOP, "hal"), new UnitState("new", Set.of("booked", "weight"),
                Map.of("spend", 5.0, "weight", 2.0)));
        s.restore(new PartitionState.Partial(new PartialKey(SHOP, "new", "spend", SOURCE), new Tally.Mean(Moments.ofValues(5.0))));

        assertThat(byKey(s.partials())).as("kept apart, still listed")
                .containsEntry(gone, new Tally.Rate(new ProportionCounts(1, 4)))
                .containsEntry(changedKind, new Tally.Mean(Moments.ofValues(1, 2)));
        assertThat(s.unitsLeftOut()).as("gil's arm is gone").isEqualTo(1);
        assertThat(s.unitCount()).isEqualTo(1);
        outcome(s, SHOP, "old", "x", "errors", true);
        assertThat(rate(s, "old", "errors")).as("an event starts the metric anew, replacing the one kept apart")
                .isEqualTo(new ProportionCounts(1, 1));
        Map<UnitKey, UnitState> none = s.drainChangedUnits();
        outcome(s, SHOP, "old", "hal", "booked", true);
        value(s, SHOP, "old", "hal", "spend", 1.0);
        Map<UnitKey, UnitState> hal = s.drainChangedUnits();
        assertThat(none).as("restored units are not changed, and an event-level outcome keeps no unit").isEmpty();
        assertThat(hal).as("hal kept his arm, his success and his total; unknown names dropped")
                .containsExactly(Map.entry(UnitKey.of(SHOP, "hal"),
                        new UnitState("new", Set.of("booked"), Map.of("spend", 6.0))));
    }

    /** One call on the sink, over a small invented universe. */
    record Call(int kind, String experiment, String arm, String unit, String metric, double number) {
        void applyTo(ObservationSink sink) {
            switch (kind) {
                case 0 -> exposure(sink, experiment, arm, unit);
                case 1 -> outcome(sink, experiment, arm, unit, metric, number != 0);
                case 3 -> ratio(sink, experiment, arm, unit, metric, number, Math.floor(number / 100));
                default -> value(sink, experiment, arm, unit, metric, number);
            }
        }
    }

    /** A step of the run: an event (its exposure, then its observations) or a commit (-1 calls). */
    record Step(List<Call> calls) {
        boolean commit() {
            return calls.isEmpty();
        }
    }

    @Provide
    Arbitrary<List<Step>> runs() {
        Arbitrary<String> units = Arbitraries.of("u0", "u1", "u2", "u3", "u4", "u5", "u6", "u7", "u8", "u9", "ünï", "🦊")
                .map(u -> new String(u.toCharArray()));   // a new object per event, as the reader gives
        Arbitrary<Step> shop = Combinators.combine(Arbitraries.of("old", "new", "bold"), units,
                Arbitraries.integers().between(0, 63), Arbitraries.doubles().between(-50, 500).ofScale(2),
                Arbitraries.doubles().between(0, 900).ofScale(1)).as((arm, unit, mask, spend, ms) -> {
                    List<Call> calls = new ArrayList<>();
                    calls.add(new Call(0, SHOP, arm, unit, null, 0));
                    if ((mask & 1) != 0) {
                        calls.add(new Call(1, SHOP, arm, unit, "errors", (mask & 2)));
                    }
                    if ((mask & 4) != 0) {
                        calls.add(new Call(2, SHOP, arm, unit, "ms", ms));
                        calls.add(new Call(2, SHOP, arm, unit, "ms-p90", ms));
                    }
                    if ((mask & 8) != 0) {
                        calls.add(new Call(1, SHOP, arm, unit, "booked", (mask & 16)));
                    }
                    if ((mask & 32) != 0) {
                        calls.add(new Call(1, SHOP, arm, unit, "returned", 1));
                    }
                    if ((mask & 3) == 3) {
                        calls.add(new Call(2, SHOP, arm, unit, "spend", spend));
                    }
                    if ((mask & 12) == 12) {
                        calls.add(new Call(2, SHOP, arm, unit, "items", mask));
                    }
                    return new Step(calls);
                });
        Arbitrary<Step> maps = Combinators.combine(Arbitraries.of("a", "b"), Arbitraries.of("u1", "u2", "m1", "m2"),
                Arbitraries.integers().between(0, 3)).as((arm, unit, mask) -> new Step(List.of(
                        new Call(0, MAPS, arm, unit, null, 0), new Call(1, MAPS, arm, unit, "errors", mask & 1))));
        Arbitrary<Step> fares = Combinators.combine(Arbitraries.of("x", "y"), units, Arbitraries.integers().between(0, 15),
                Arbitraries.doubles().between(0, 900).ofScale(1)).as((arm, unit, mask, v) -> {
                    List<Call> calls = new ArrayList<>();
                    calls.add(new Call(0, FARES, arm, unit, null, 0));
                    if ((mask & 1) != 0) {
                        calls.add(new Call(1, FARES, arm, unit, "errors", (mask & 2)));
                    }
                    if ((mask & 4) != 0) {
                        calls.add(new Call(2, FARES, arm, unit, "ms", v));
                        calls.add(new Call(2, FARES, arm, unit, "ms-p99", v));
                    }
                    if ((mask & 8) != 0) {
                        calls.add(new Call(3, FARES, arm, unit, "fare", v));
                    }
                    if ((mask & 6) == 6) {
                        calls.add(new Call(2, FARES, arm, unit, "tips", v / 20));
                    }
                    return new Step(calls);
                });
        return Arbitraries.frequencyOf(
                net.jqwik.api.Tuple.of(6, fares),
                net.jqwik.api.Tuple.of(12, shop),
                net.jqwik.api.Tuple.of(3, maps),
                net.jqwik.api.Tuple.of(1, Arbitraries.just(new Step(List.of()))))
                .list().ofMaxSize(150);
    }

    /**
     * Commits at any points, as the tally stage makes them (changed partials and changed units
     * through their codec, into compacted topics: the last value of a key wins), then a new owner
     * restores from those topics and both count on: their partials stay equal, bit for bit. At every
     * commit the drained partials are exactly those whose value changed, each with its current value.
     */
    @Property(tries = 300)
    void stateRestoredFromTheCommittedRecordsCountsOnExactlyAsTheOriginal(@ForAll("runs") List<Step> before,
            @ForAll("runs") List<Step> after) {
        PartitionState original = state();
        Map<String, byte[]> tallies = new HashMap<>();
        Map<String, byte[]> unitKeys = new HashMap<>();
        Map<String, byte[]> unitValues = new HashMap<>();
        Map<PartialKey, Tally> committed = new HashMap<>();
        for (Step step : before) {
            if (step.commit()) {
                commit(original, tallies, unitKeys, unitValues, committed);
            } else {
                step.calls().forEach(c -> c.applyTo(original));
            }
        }
        commit(original, tallies, unitKeys, unitValues, committed);

        PartitionState restored = state();
        tallies.forEach((text, bytes) ->
                restored.restore(new PartitionState.Partial(PartialKey.parse(text), StateCodec.partial(bytes))));
        unitKeys.forEach((id, key) -> {
            StateCodec.UnitRecordKey k = StateCodec.unitKey(key, unitValues.get(id));
            assertThat(k.source()).isEqualTo(SOURCE);
            restored.restoreUnit(k.unit(), StateCodec.unit(unitValues.get(id)));
        });
        assertThat(byKey(restored.partials())).isEqualTo(byKey(original.partials()));
        assertThat(restored.unitCount()).isEqualTo(original.unitCount());
        assertThat(restored.drainChangedPartials()).as("a restore changes nothing").isEmpty();
        assertThat(restored.drainChangedUnits()).isEmpty();

        for (Step step : after) {
            step.calls().forEach(c -> {
                c.applyTo(original);
                c.applyTo(restored);
            });
        }
        assertThat(byKey(restored.partials())).isEqualTo(byKey(original.partials()));
        assertThat(restored.drainChangedUnits()).isEqualTo(original.drainChangedUnits());
        assertThat(byKey(restored.drainChangedPartials())).isEqualTo(byKey(original.drainChangedPartials()));
    }

    private static void commit(PartitionState s, Map<String, byte[]> tallies, Map<String, byte[]> unitKeys,
            Map<String, byte[]> unitValues, Map<PartialKey, Tally> committed) {
        Map<PartialKey, Tally> now = byKey(s.partials());
        Map<PartialKey, Tally> drained = byKey(s.drainChangedPartials());
        Set<PartialKey> differing = new HashSet<>();
        now.forEach((k, t) -> {
            if (!t.equals(committed.get(k))) {
                differing.add(k);
            }
        });
        assertThat(drained.keySet()).as("every partial that changed is drained").containsAll(differing);
        drained.forEach((k, t) -> assertThat(t).as("drained with its current value").isEqualTo(now.get(k)));
        drained.forEach((k, t) -> tallies.put(k.text(), StateCodec.partial(t)));
        committed.putAll(drained);
        // What the tally stage writes: records encoded straight from the table.
        new UnitRecords().drainChanged(s, (key, value) -> {
            String id = new String(key, java.nio.charset.StandardCharsets.ISO_8859_1);
            unitKeys.put(id, key);
            unitValues.put(id, value);
        });
    }

    /**
     * The records a commit writes straight from the unit table are byte for byte those of the
     * codec's documented layout ({@link StateCodec#unitKey(String, UnitKey)} and
     * {@link StateCodec#unit(UnitState)}) of the same units.
     * Source: the codec in this project is the reference; the property is the equality of the two paths.
     */
    @Property(tries = 200)
    void recordsEncodedFromTheTableEqualTheCodecsRecordsOfTheSameUnits(@ForAll("runs") List<Step> steps) {
        PartitionState direct = state();
        PartitionState viaObjects = state();
        for (Step step : steps) {
            if (step.commit()) {
                assertThat(records(direct, true)).isEqualTo(records(viaObjects, false));
            } else {
                step.calls().forEach(c -> {
                    c.applyTo(direct);
                    c.applyTo(viaObjects);
                });
            }
        }
        assertThat(records(direct, true)).isEqualTo(records(viaObjects, false));
    }

    private static Map<String, String> records(PartitionState s, boolean direct) {
        Map<String, String> out = new HashMap<>();
        java.util.function.BiConsumer<byte[], byte[]> put = (k, v) -> {
            String key = java.util.HexFormat.of().formatHex(k);
            assertThat(out.put(key, java.util.HexFormat.of().formatHex(v))).as("one record per unit").isNull();
        };
        if (direct) {
            new UnitRecords().drainChanged(s, put);
        } else {
            s.drainChangedUnits((unit, u) -> put.accept(StateCodec.unitKey(SOURCE, unit), StateCodec.unit(u)));
        }
        return out;
    }

    // ---- the hot path -------------------------------------------------------------------------------

    @Test
    void eventLevelObservationsAllocateNothingOnceTheirHoldersExist() {
        java.lang.management.ThreadMXBean bean = ManagementFactory.getThreadMXBean();
        Assumptions.assumeTrue(bean instanceof com.sun.management.ThreadMXBean t && t.isThreadAllocatedMemorySupported(),
                "this JVM does not count a thread's allocations");
        com.sun.management.ThreadMXBean threads = (com.sun.management.ThreadMXBean) bean;
        PartitionState s = state();
        String unit = "ivo";
        Runnable events = () -> {
            for (int i = 0; i < 20_000; i++) {
                exposure(s, MAPS, (i & 1) == 0 ? "a" : "b", null);
                outcome(s, MAPS, (i & 1) == 0 ? "a" : "b", null, "errors", (i % 7) == 0);
                exposure(s, SHOP, "new", unit);
                outcome(s, SHOP, "new", unit, "errors", (i % 3) == 0);
                outcome(s, SHOP, "new", unit, "booked", true);
            }
        };
        events.run();
        s.drainChangedPartials();
        long thread = Thread.currentThread().getId();
        long start = threads.getThreadAllocatedBytes(thread);
        events.run();
        long allocated = threads.getThreadAllocatedBytes(thread) - start;
        // common practice: a hot path that allocates per call shows it at once (a 24-byte key per call
        // would be 2.4 MB here); a little slack for the measuring itself
        assertThat(allocated).as("bytes allocated by 100,000 calls").isLessThan(4096);
    }

    @Test
    void theChangedUnitsAreDrainedOnceWithTheirState() {
        PartitionState s = state();
        exposure(s, SHOP, "bold", "jo");
        value(s, SHOP, "bold", "jo", "spend", 7.25);
        exposure(s, MAPS, "b", "jo");
        Map<UnitKey, UnitState> first = s.drainChangedUnits();
        Map<UnitKey, UnitState> expected = new LinkedHashMap<>();
        expected.put(UnitKey.of(SHOP, "jo"), new UnitState("bold", Set.of(), Map.of("spend", 7.25)));
        expected.put(UnitKey.of(MAPS, "jo"), new UnitState("b", Set.of(), Map.of()));
        assertThat(first).as("one unit per experiment").isEqualTo(expected);
        assertThat(s.drainChangedUnits()).isEmpty();
        exposure(s, SHOP, "bold", "jo");
        assertThat(s.drainChangedUnits()).as("an exposure of a known unit changes nothing of it").isEmpty();
        outcome(s, SHOP, "bold", "jo", "returned", true);
        assertThat(s.drainChangedUnits()).containsOnlyKeys(UnitKey.of(SHOP, "jo"));
    }
}
