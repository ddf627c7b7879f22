package dev.interim.stream;

import dev.interim.experiment.MetricKind;
import dev.interim.experiment.Tally;
import dev.interim.stats.Moments;
import dev.interim.stats.ProportionCounts;
import dev.interim.stats.RunningMoments;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;

/**
 * The cumulative tallies of one input partition: per (experiment, arm, metric) the sufficient
 * statistics of everything read from the partition so far, and per unit what the per-unit metrics
 * need. What changed since the last commit is tracked, so a commit writes only that.
 *
 * <p>Per-unit metrics: a unit belongs to the first arm it was exposed to. A unit-rate counts each
 * unit once in the denominator and once in the numerator, the first time it meets the condition; a
 * unit-total tallies each unit's running total (when the total grows, the old total is removed from
 * the arm's moments and the new one accepted).
 *
 * <p>Mutable, confined to the tally stage's thread.
 */
final class PartitionState implements ObservationSink {
    private final String source;
    private final Catalog catalog;
    private final Map<PartialKey, Object> live = new HashMap<>();
    private final Set<PartialKey> dirty = new HashSet<>();
    private final Map<String, UnitState> units = new HashMap<>();
    private final Set<String> dirtyUnits = new HashSet<>();
    /** Events accepted per experiment since the last drain (one exposure call per event). */
    private final Map<String, long[]> accepted = new HashMap<>();

    PartitionState(String source, Catalog catalog) {
        this.source = source;
        this.catalog = catalog;
    }

    /** The input partition, as "topic-partition". */
    String source() {
        return source;
    }

    /** Successes over trials, mutable. */
    static final class Counts {
        long successes;
        long trials;

        ProportionCounts snapshot() {
            return new ProportionCounts(successes, trials);
        }
    }

    /** A unit's arm and its per-unit metric state. */
    static final class UnitState {
        final String arm;
        final Map<String, Double> totals = new HashMap<>();
        final Set<String> met = new HashSet<>();

        UnitState(String arm) {
            this.arm = arm;
        }
    }

    @Override
    public void exposure(String experiment, String arm, String unit) {
        accepted.computeIfAbsent(experiment, e -> new long[1])[0]++;
        if (unit == null) {
            counts(experiment, arm, PartialKey.EXPOSURES).trials++;
            return;
        }
        unit(experiment, arm, unit);
    }

    @Override
    public void outcome(String experiment, String arm, String unit, String metric, boolean success) {
        MetricKind kind = catalog.kind(experiment, metric);
        if (kind == MetricKind.UNIT_RATE) {
            String key = unitKey(experiment, unit);
            UnitState u = unit(experiment, arm, unit);
            if (success && u.met.add(metric)) {
                counts(experiment, u.arm, metric).successes++;
                dirtyUnits.add(key);
            }
            return;
        }
        Counts c = counts(experiment, arm, metric);
        c.trials++;
        if (success) {
            c.successes++;
        }
    }

    @Override
    public void value(String experiment, String arm, String unit, String metric, double value) {
        MetricKind kind = catalog.kind(experiment, metric);
        if (kind == MetricKind.UNIT_TOTAL) {
            UnitState u = unit(experiment, arm, unit);
            double before = u.totals.getOrDefault(metric, 0.0);
            double after = before + value;
            RunningMoments m = moments(experiment, u.arm, metric);
            m.remove(before);
            m.accept(after);
            u.totals.put(metric, after);
            dirtyUnits.add(unitKey(experiment, unit));
            return;
        }
        moments(experiment, arm, metric).accept(value);
    }

    /** The unit's state, creating it (and counting its exposure) at its first event. */
    private UnitState unit(String experiment, String arm, String unit) {
        String key = unitKey(experiment, unit);
        UnitState u = units.get(key);
        if (u != null) {
            return u;
        }
        u = new UnitState(arm);
        units.put(key, u);
        dirtyUnits.add(key);
        counts(experiment, arm, PartialKey.EXPOSURES).trials++;
        for (var e : catalog.experiment(experiment).metrics()) {
            if (e.kind() == MetricKind.UNIT_RATE) {
                counts(experiment, arm, e.name()).trials++;
            } else if (e.kind() == MetricKind.UNIT_TOTAL) {
                moments(experiment, arm, e.name()).accept(0);
            }
        }
        return u;
    }

    private static String unitKey(String experiment, String unit) {
        return experiment + '\u001f' + unit;
    }

    private Counts counts(String experiment, String arm, String metric) {
        PartialKey key = new PartialKey(experiment, arm, metric, source);
        dirty.add(key);
        return (Counts) live.computeIfAbsent(key, k -> new Counts());
    }

    private RunningMoments moments(String experiment, String arm, String metric) {
        PartialKey key = new PartialKey(experiment, arm, metric, source);
        dirty.add(key);
        return (RunningMoments) live.computeIfAbsent(key, k -> new RunningMoments());
    }

    // ---- what a commit writes, and what a restore reads ----------------------------------------

    /** The changed partials as immutable values; the change set is cleared. */
    List<Partial> drainChangedPartials() {
        List<Partial> out = new ArrayList<>(dirty.size());
        for (PartialKey key : dirty) {
            out.add(partialOf(key, live.get(key)));
        }
        dirty.clear();
        return out;
    }

    /** Every partial, for tests and dumps. */
    List<Partial> partials() {
        List<Partial> out = new ArrayList<>(live.size());
        live.forEach((k, v) -> out.add(partialOf(k, v)));
        return out;
    }

    /** Events accepted per experiment since the last call; the counts are cleared. */
    Map<String, Long> drainAccepted() {
        Map<String, Long> out = new HashMap<>();
        accepted.forEach((e, n) -> out.put(e, n[0]));
        accepted.clear();
        return out;
    }

    /** The changed units as (key, state); the change set is cleared. */
    Map<String, UnitState> drainChangedUnits() {
        Map<String, UnitState> out = new HashMap<>();
        for (String key : dirtyUnits) {
            out.put(key, units.get(key));
        }
        dirtyUnits.clear();
        return out;
    }

    void restore(Partial partial) {
        Object holder;
        if (partial.tally() instanceof Tally.Mean m) {
            holder = RunningMoments.from(m.moments());
        } else {
            ProportionCounts p = ((Tally.Rate) partial.tally()).counts();
            Counts c = new Counts();
            c.successes = p.successes();
            c.trials = p.trials();
            holder = c;
        }
        live.put(partial.key(), holder);
    }

    void restoreUnit(String key, UnitState state) {
        units.put(key, state);
    }

    int unitCount() {
        return units.size();
    }

    private static Partial partialOf(PartialKey key, Object holder) {
        if (holder instanceof RunningMoments m) {
            return new Partial(key, new Tally.Mean(m.snapshot()));
        }
        return new Partial(key, new Tally.Rate(((Counts) holder).snapshot()));
    }

    /** A cumulative partial tally: what the tallies topic carries. */
    record Partial(PartialKey key, Tally tally) {
        static Partial empty(PartialKey key, boolean mean) {
            return new Partial(key, mean ? new Tally.Mean(Moments.EMPTY) : new Tally.Rate(ProportionCounts.EMPTY));
        }
    }
}
