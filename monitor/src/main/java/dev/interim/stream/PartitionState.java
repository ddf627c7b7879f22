package dev.interim.stream;

import dev.interim.events.Catalog;

import dev.interim.experiment.Assignment;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.MetricKind;
import dev.interim.experiment.Tally;
import dev.interim.experiment.TallyForm;
import dev.interim.stats.HistogramCounts;
import dev.interim.stats.ProportionCounts;
import dev.interim.stats.RunningHistogram;
import dev.interim.stats.RunningMoments;
import dev.interim.stats.RunningRatioMoments;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.function.BiConsumer;

/**
 * The cumulative tallies of one input partition: per (experiment, arm, metric) the sufficient
 * statistics of everything read from the partition so far, and per unit what the per-unit metrics
 * need. What changed since the last commit is tracked, so a commit writes only that.
 *
 * <p>Per-unit metrics: a unit belongs to the first arm it was exposed to. A unit-rate counts each
 * unit once in the denominator and once in the numerator, the first time it meets the condition; a
 * unit-total tallies each unit's running total (when the total grows, the old total is removed from
 * the arm's moments and the new one accepted). When the input is keyed by unit, the exposures of
 * every experiment count units, not events, so every experiment that sees units keeps them.
 *
 * <p>Layout, for speed and memory: each experiment of the catalog is compiled once into arrays of
 * holders indexed by (arm, metric), found by the catalog indices each call carries; the
 * steady state of an event-level observation allocates nothing. Units live in one {@link UnitTable}
 * per experiment (primitive columns, no object per unit). The sink is given only experiments, arms
 * and metrics of the catalog, as indices (the event reader refuses the others).
 *
 * <p>Mutable, confined to the tally stage's thread.
 */
final class PartitionState implements ObservationSink {
    private final String source;
    /** The compiled experiments, by catalog index. */
    private final Experiment[] experiments;
    /** The same, by id (restores and drains name experiments). */
    private final Map<String, Experiment> byId = new HashMap<>();
    /** Experiments with changed partials since the last drain, each once. */
    private final List<Experiment> changed = new ArrayList<>();
    /** Restored partials that the catalog no longer counts (an arm, a metric or a kind that changed). */
    private final Map<PartialKey, Tally> orphans = new HashMap<>();
    private final UnitTable.Hasher hasher = new UnitTable.Hasher();
    /**
     * The last unit found, by identity: the calls of one event name the same unit object, so its
     * observations reuse the slot its exposure found (valid while its table has not grown).
     */
    private String lastUnit;
    private UnitTable lastTable;
    private int lastSlot;
    private int lastGeneration;
    /** Units restored under an arm or experiment the catalog no longer has, and so left out. */
    private long unitsLeftOut;

    PartitionState(String source, Catalog catalog) {
        this.source = source;
        this.experiments = new Experiment[catalog.size()];
        for (int i = 0; i < experiments.length; i++) {
            experiments[i] = new Experiment(catalog.definition(i), source);
            byId.put(experiments[i].id, experiments[i]);
        }
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

    /** One metric of a compiled experiment. */
    private static final class Metric {
        final String name;
        final MetricKind kind;
        final MetricDefinition definition;
        /** True for a ratio of per-unit sums (its numerator and denominator in two totals columns). */
        final boolean unitRatio;
        /** For a quantile: its groups of values (1 per event, {@link HistogramCounts#UNIT_GROUPS} per unit), else 0. */
        final int groups;
        /** The metric's column in the holder arrays (0 is the exposures). */
        final int slot;
        /**
         * Its bit (unit-rate), its totals column (unit-total) or the first of its two totals columns
         * (numerator, then denominator: a ratio of per-unit sums) in the unit table, else -1.
         */
        final int column;

        Metric(MetricDefinition definition, TallyForm form, int slot, int column, boolean perUnit) {
            this.groups = form != TallyForm.QUANTILE ? 0 : perUnit ? HistogramCounts.UNIT_GROUPS : 1;
            this.name = definition.name();
            this.kind = definition.kind();
            this.definition = definition;
            this.unitRatio = form == TallyForm.RATIO && column >= 0;
            this.slot = slot;
            this.column = column;
        }
    }

    /** One experiment's holders: arms × (exposures + metrics), each created at its first use. */
    private static final class Experiment {
        final String id;
        final String source;
        final String[] arms;
        final Map<String, Metric> metrics = new HashMap<>();
        /** The metrics by catalog index (definition order). */
        final Metric[] byIndex;
        /** Column 0 is the exposures; columns 1.. the metrics in definition order. */
        final String[] columnNames;
        final TallyForm[] form;
        final Metric[] unitRates;
        /** Metrics with totals columns: unit-totals and ratios of per-unit sums. */
        final Metric[] unitTotals;
        /** The names of the totals columns, as the units changelog carries them. */
        final String[] totalColumns;
        final int width;
        final Counts[] counts;
        final RunningMoments[] moments;
        final RunningRatioMoments[] ratios;
        final RunningHistogram[] histograms;
        final PartialKey[] keys;
        final boolean[] dirty;
        boolean anyDirty;
        long accepted;
        UnitTable units;
        /** What an encoder of this experiment's unit records needs (made at the first use). */
        private UnitColumns columns;

        UnitColumns columns() {
            if (columns == null) {
                String[] rateNames = new String[unitRates.length];
                int[] rateBits = new int[unitRates.length];
                for (int i = 0; i < rateNames.length; i++) {
                    rateNames[i] = unitRates[i].name;
                    rateBits[i] = unitRates[i].column;
                }
                columns = new UnitColumns(source, id, arms, rateNames, rateBits, totalColumns);
            }
            return columns;
        }

        /** Scratch of {@link #restoreUnit}, reused from one unit to the next. */
        final boolean[] restoredMet;
        final double[] restoredTotals;

        Experiment(ExperimentDefinition d, String source) {
            this.id = d.id();
            this.source = source;
            this.arms = d.arms().toArray(new String[0]);
            if (arms.length > UnitTable.MAX_ARMS) {
                throw new IllegalArgumentException("experiment '" + id + "' has " + arms.length
                        + " arms; the tallies take at most " + UnitTable.MAX_ARMS);
            }
            List<MetricDefinition> defs = d.metrics();
            width = defs.size() + 1;
            byIndex = new Metric[defs.size()];
            columnNames = new String[width];
            form = new TallyForm[width];
            columnNames[0] = PartialKey.EXPOSURES;
            form[0] = TallyForm.RATE;
            List<Metric> rates = new ArrayList<>();
            List<Metric> totals = new ArrayList<>();
            List<String> totalNames = new ArrayList<>();
            boolean perUnit = d.assignment() == Assignment.UNIT;
            for (int i = 0; i < defs.size(); i++) {
                MetricDefinition m = defs.get(i);
                TallyForm f = d.form(m);
                boolean unitRatio = f == TallyForm.RATIO && perUnit;
                int column = m.kind() == MetricKind.UNIT_RATE ? rates.size()
                        : m.kind() == MetricKind.UNIT_TOTAL || unitRatio ? totalNames.size() : -1;
                Metric metric = new Metric(m, f, i + 1, column, perUnit);
                metrics.put(m.name(), metric);
                byIndex[i] = metric;
                columnNames[i + 1] = m.name();
                form[i + 1] = f;
                if (m.kind() == MetricKind.UNIT_RATE) {
                    rates.add(metric);
                } else if (m.kind() == MetricKind.UNIT_TOTAL) {
                    totals.add(metric);
                    totalNames.add(m.name());
                } else if (unitRatio) {
                    totals.add(metric);
                    totalNames.add(m.name() + NUMERATOR);
                    totalNames.add(m.name() + DENOMINATOR);
                }
            }
            unitRates = rates.toArray(new Metric[0]);
            unitTotals = totals.toArray(new Metric[0]);
            totalColumns = totalNames.toArray(new String[0]);
            restoredMet = new boolean[unitRates.length];
            restoredTotals = new double[totalColumns.length];
            int n = arms.length * width;
            counts = new Counts[n];
            moments = new RunningMoments[n];
            ratios = new RunningRatioMoments[n];
            histograms = new RunningHistogram[n];
            keys = new PartialKey[n];
            dirty = new boolean[n];
        }

        /** The index of {@code arm}, or -1. */
        int armIndex(String arm) {
            for (int i = 0; i < arms.length; i++) {
                if (arms[i].equals(arm)) {
                    return i;
                }
            }
            return -1;
        }

        UnitTable units() {
            if (units == null) {
                units = new UnitTable(unitRates.length, totalColumns.length);
            }
            return units;
        }

        PartialKey key(int index) {
            PartialKey k = keys[index];
            if (k == null) {
                k = new PartialKey(id, arms[index / width], columnNames[index % width], source);
                keys[index] = k;
            }
            return k;
        }
    }

    @Override
    public void exposure(int experiment, int a, String unit) {
        Experiment e = experiments[experiment];
        e.accepted++;
        if (unit == null) {
            counts(e, a * e.width).trials++;
            return;
        }
        unit(e, a, unit);
    }

    @Override
    public void outcome(int experiment, int a, String unit, int metric, boolean success) {
        Experiment e = experiments[experiment];
        Metric m = e.byIndex[metric];
        if (m.unitRatio) {
            addToUnit(e, m, a, unit, success ? 1 : 0, 1, false);
            return;
        }
        if (m.kind == MetricKind.UNIT_RATE) {
            int slot = unit(e, a, unit);
            UnitTable t = e.units;
            if (success && !t.met(slot, m.column)) {
                t.setMet(slot, m.column);
                counts(e, t.arm(slot) * e.width + m.slot).successes++;
                t.markChanged(slot);
            }
            return;
        }
        Counts c = counts(e, a * e.width + m.slot);
        c.trials++;
        if (success) {
            c.successes++;
        }
    }

    @Override
    public void value(int experiment, int a, String unit, int metric, double value) {
        Experiment e = experiments[experiment];
        Metric m = e.byIndex[metric];
        if (m.unitRatio) {
            addToUnit(e, m, a, unit, m.definition.capped(value), 1, false);
            return;
        }
        if (m.groups == 1) {
            histogram(e, a * e.width + m.slot, m).accept(value, 0);
            return;
        }
        if (m.groups > 1) {
            int slot = unit(e, a, unit);
            UnitTable t = e.units;
            histogram(e, t.arm(slot) * e.width + m.slot, m).accept(value, t.keyLo(slot) & (m.groups - 1));
            return;
        }
        if (m.kind == MetricKind.UNIT_TOTAL) {
            int slot = unit(e, a, unit);
            UnitTable t = e.units;
            double before = t.total(slot, m.column);
            double after = before + value;
            RunningMoments r = moments(e, t.arm(slot) * e.width + m.slot);
            r.remove(m.definition.capped(before));
            r.accept(m.definition.capped(after));
            t.setTotal(slot, m.column, after);
            t.markChanged(slot);
            return;
        }
        moments(e, a * e.width + m.slot).accept(m.definition.capped(value));
    }

    @Override
    public void ratio(int experiment, int a, String unit, int metric, double numerator, double denominator) {
        Experiment e = experiments[experiment];
        Metric m = e.byIndex[metric];
        if (m.unitRatio) {
            addToUnit(e, m, a, unit, numerator, denominator, true);
            return;
        }
        ratios(e, a * e.width + m.slot).accept(m.definition.capped(numerator), m.definition.cappedDenominator(denominator));
    }

    /**
     * Adds to a unit's numerator and denominator sums, and replaces the unit's pair in its arm's
     * ratio moments (the unit's first arm: a unit keeps the arm it was first exposed to). For a ratio
     * metric the caps apply to the unit's sums ({@code capSums}): the table keeps the raw sums and the
     * moments see them capped; an event-mean's cap applies to each event value, before it is added.
     */
    private void addToUnit(Experiment e, Metric m, int arm, String unit, double numerator, double denominator,
                           boolean capSums) {
        int slot = unit(e, arm, unit);
        UnitTable t = e.units;
        double x0 = t.total(slot, m.column);
        double y0 = t.total(slot, m.column + 1);
        double x1 = x0 + numerator;
        double y1 = y0 + denominator;
        MetricDefinition d = m.definition;
        RunningRatioMoments r = ratios(e, t.arm(slot) * e.width + m.slot);
        if (capSums) {
            r.replace(d.capped(x0), d.cappedDenominator(y0), d.capped(x1), d.cappedDenominator(y1));
        } else {
            r.replace(x0, y0, x1, y1);
        }
        t.setTotal(slot, m.column, x1);
        t.setTotal(slot, m.column + 1, y1);
        t.markChanged(slot);
    }

    /** The unit's slot, creating the unit (and counting its exposure) at its first event. */
    private int unit(Experiment e, int arm, String unit) {
        if (unit == null) {
            throw new IllegalArgumentException("experiment '" + e.id + "' has per-unit metrics: an event needs a unit");
        }
        UnitTable t = e.units();
        if (unit == lastUnit && t == lastTable && t.generation() == lastGeneration) {
            return lastSlot;
        }
        hasher.hash(unit);
        int slot = t.findOrInsert(hasher.hi, hasher.lo, arm);
        if (slot < 0) {
            slot = -slot - 1;
            t.markChanged(slot);
            int row = arm * e.width;
            counts(e, row).trials++;
            for (Metric m : e.unitRates) {
                counts(e, row + m.slot).trials++;
            }
            for (Metric m : e.unitTotals) {
                if (m.unitRatio && m.kind == MetricKind.RATIO) {
                    ratios(e, row + m.slot).accept(m.definition.capped(0), m.definition.cappedDenominator(0));
                } else if (m.unitRatio) {
                    ratios(e, row + m.slot).accept(0, 0);
                } else {
                    moments(e, row + m.slot).accept(m.definition.capped(0));
                }
            }
        }
        lastUnit = unit;
        lastTable = t;
        lastSlot = slot;
        lastGeneration = t.generation();
        return slot;
    }

    private Counts counts(Experiment e, int index) {
        Counts c = e.counts[index];
        if (c == null) {
            c = new Counts();
            e.counts[index] = c;
            created(e, index);
        }
        touch(e, index);
        return c;
    }

    private RunningMoments moments(Experiment e, int index) {
        RunningMoments m = e.moments[index];
        if (m == null) {
            m = new RunningMoments();
            e.moments[index] = m;
            created(e, index);
        }
        touch(e, index);
        return m;
    }

    private RunningRatioMoments ratios(Experiment e, int index) {
        RunningRatioMoments m = e.ratios[index];
        if (m == null) {
            m = new RunningRatioMoments();
            e.ratios[index] = m;
            created(e, index);
        }
        touch(e, index);
        return m;
    }

    private RunningHistogram histogram(Experiment e, int index, Metric m) {
        RunningHistogram h = e.histograms[index];
        if (h == null) {
            h = new RunningHistogram(m.groups);
            e.histograms[index] = h;
            created(e, index);
        }
        touch(e, index);
        return h;
    }

    /** A holder's first use: the partial of the same key kept apart at a restore, if any, is replaced. */
    private void created(Experiment e, int index) {
        PartialKey k = e.key(index);
        if (!orphans.isEmpty()) {
            orphans.remove(k);
        }
    }

    private void touch(Experiment e, int index) {
        if (!e.dirty[index]) {
            e.dirty[index] = true;
            if (!e.anyDirty) {
                e.anyDirty = true;
                changed.add(e);
            }
        }
    }

    // ---- what a commit writes, and what a restore reads ----------------------------------------

    /** The changed partials as immutable values; the change set is cleared. */
    List<Partial> drainChangedPartials() {
        List<Partial> out = new ArrayList<>();
        for (Experiment e : changed) {
            for (int i = 0; i < e.dirty.length; i++) {
                if (e.dirty[i]) {
                    out.add(partialOf(e, i));
                    e.dirty[i] = false;
                }
            }
            e.anyDirty = false;
        }
        changed.clear();
        return out;
    }

    /** Every partial, for tests and dumps. */
    List<Partial> partials() {
        List<Partial> out = new ArrayList<>();
        for (Experiment e : experiments) {
            for (int i = 0; i < e.keys.length; i++) {
                if (e.counts[i] != null || e.moments[i] != null || e.ratios[i] != null || e.histograms[i] != null) {
                    out.add(partialOf(e, i));
                }
            }
        }
        orphans.forEach((k, t) -> out.add(new Partial(k, t)));
        return out;
    }

    private static Partial partialOf(Experiment e, int index) {
        RunningHistogram h = e.histograms[index];
        if (h != null) {
            return new Partial(e.key(index), new Tally.Quantile(h.snapshot()));
        }
        RunningRatioMoments r = e.ratios[index];
        if (r != null) {
            return new Partial(e.key(index), new Tally.Ratio(r.snapshot()));
        }
        RunningMoments m = e.moments[index];
        if (m != null) {
            return new Partial(e.key(index), new Tally.Mean(m.snapshot()));
        }
        return new Partial(e.key(index), new Tally.Rate(e.counts[index].snapshot()));
    }

    /** Events accepted per experiment since the last call; the counts are cleared. */
    Map<String, Long> drainAccepted() {
        Map<String, Long> out = new HashMap<>();
        for (Experiment e : experiments) {
            if (e.accepted != 0) {
                out.put(e.id, e.accepted);
                e.accepted = 0;
            }
        }
        return out;
    }

    /**
     * Hands every unit changed since the last drain to {@code out}, as its key and its state by
     * name, and clears the change set. Nothing of the units is kept here: each pair is built for
     * the call and left to the caller.
     */
    void drainChangedUnits(BiConsumer<UnitKey, UnitState> out) {
        for (Experiment e : experiments) {
            UnitTable t = e.units;
            if (t == null || t.changedCount() == 0) {
                continue;
            }
            t.drainChanged(slot -> out.accept(new UnitKey(e.id, t.keyHi(slot), t.keyLo(slot)), unitState(e, t, slot)));
        }
    }

    /**
     * What a writer of unit records needs of one experiment's units: the source, the experiment, its
     * arms (by index, as the table holds them), its unit-rate metrics (name and met bit) and the names
     * of its totals columns (by column).
     */
    record UnitColumns(String source, String experiment, String[] arms, String[] rateNames, int[] rateBits,
                       String[] totalColumns) {}

    /** Visits one unit of an experiment's table. */
    @FunctionalInterface
    interface UnitVisitor {
        void unit(UnitColumns columns, UnitTable table, int slot);
    }

    /** Visits every unit changed since the last drain, and clears the change set: what a commit writes. */
    void drainChanged(UnitVisitor visitor) {
        for (Experiment e : experiments) {
            UnitTable t = e.units;
            if (t == null || t.changedCount() == 0) {
                continue;
            }
            UnitColumns c = e.columns();
            t.drainChanged(slot -> visitor.unit(c, t, slot));
        }
    }

    /** Visits every unit held, changed or not, leaving the change set as it is: what a snapshot writes. */
    void forEachUnit(UnitVisitor visitor) {
        for (Experiment e : experiments) {
            UnitTable t = e.units;
            if (t == null || t.size() == 0) {
                continue;
            }
            UnitColumns c = e.columns();
            for (int slot = 0; slot < t.capacity(); slot++) {
                if (t.occupied(slot)) {
                    visitor.unit(c, t, slot);
                }
            }
        }
    }

    /** The changed units collected in a map (tests); the change set is cleared. */
    Map<UnitKey, UnitState> drainChangedUnits() {
        Map<UnitKey, UnitState> out = new LinkedHashMap<>();
        drainChangedUnits(out::put);
        return out;
    }

    /** Forgets which units changed, when no one writes them (offline). */
    void clearChangedUnits() {
        for (Experiment e : experiments) {
            if (e.units != null) {
                e.units.clearChanged();
            }
        }
    }

    private static UnitState unitState(Experiment e, UnitTable t, int slot) {
        Set<String> met = new LinkedHashSet<>();
        for (Metric m : e.unitRates) {
            if (t.met(slot, m.column)) {
                met.add(m.name);
            }
        }
        Map<String, Double> totals = new LinkedHashMap<>();
        for (int c = 0; c < e.totalColumns.length; c++) {
            double v = t.total(slot, c);
            if (Double.doubleToRawLongBits(v) != 0) {
                totals.put(e.totalColumns[c], v);
            }
        }
        return new UnitState(e.arms[t.arm(slot)], met, totals);
    }

    /**
     * Puts back a partial as last committed. One the catalog no longer counts (its experiment, arm
     * or metric is gone, or the metric changed kind) is kept apart: listed by {@link #partials()}
     * until an event starts a partial of the same key anew (of the metric's kind now), which then
     * replaces it.
     */
    void restore(Partial partial) {
        PartialKey k = partial.key();
        Experiment e = byId.get(k.experiment());
        int a = e == null ? -1 : e.armIndex(k.arm());
        int column = -1;
        if (a >= 0) {
            if (PartialKey.EXPOSURES.equals(k.metric())) {
                column = 0;
            } else {
                Metric m = e.metrics.get(k.metric());
                column = m == null ? -1 : m.slot;
            }
        }
        if (column < 0 || e.form[column] != partial.tally().form() || !sameGroups(e, column, partial.tally())) {
            orphans.put(k, partial.tally());
            return;
        }
        int index = a * e.width + column;
        if (partial.tally() instanceof Tally.Quantile q) {
            e.histograms[index] = RunningHistogram.from(q.counts());
        } else if (partial.tally() instanceof Tally.Ratio r) {
            e.ratios[index] = RunningRatioMoments.from(r.moments());
        } else if (partial.tally() instanceof Tally.Mean m) {
            e.moments[index] = RunningMoments.from(m.moments());
        } else {
            ProportionCounts p = ((Tally.Rate) partial.tally()).counts();
            Counts c = new Counts();
            c.successes = p.successes();
            c.trials = p.trials();
            e.counts[index] = c;
        }
        e.key(index);
    }

    /** A quantile's partial counts in the groups its metric has now (the assignment may have changed). */
    private static boolean sameGroups(Experiment e, int column, Tally tally) {
        return !(tally instanceof Tally.Quantile q) || q.counts().groupCount() == e.byIndex[column - 1].groups;
    }

    /**
     * Puts back a unit as last committed (a later record of the same unit replaces an earlier one).
     * Metric names the catalog no longer has are dropped; a unit of an experiment or arm it no
     * longer has is left out, and would count as new if it came again.
     */
    void restoreUnit(UnitKey key, UnitState state) {
        Experiment e = byId.get(key.experiment());
        int a = e == null ? -1 : e.armIndex(state.arm());
        if (a < 0) {
            unitsLeftOut++;
            return;
        }
        boolean[] met = e.restoredMet;
        for (Metric m : e.unitRates) {
            met[m.column] = state.met().contains(m.name);
        }
        double[] totals = e.restoredTotals;
        for (int c = 0; c < e.totalColumns.length; c++) {
            Double v = state.totals().get(e.totalColumns[c]);
            totals[c] = v == null ? 0.0 : v;
        }
        e.units().put(key.hi(), key.lo(), a, met, totals);
    }

    /** Units held, over every experiment. */
    int unitCount() {
        int n = 0;
        for (Experiment e : experiments) {
            if (e.units != null) {
                n += e.units.size();
            }
        }
        return n;
    }

    /** The bytes of the unit tables' columns, over every experiment. */
    long unitBytes() {
        long n = 0;
        for (Experiment e : experiments) {
            if (e.units != null) {
                n += e.units.bytes();
            }
        }
        return n;
    }

    /** Restored units left out because their experiment or arm is no longer in the catalog. */
    long unitsLeftOut() {
        return unitsLeftOut;
    }

    /** A cumulative partial tally: what the tallies topic carries. */
    record Partial(PartialKey key, Tally tally) {
    }

    /**
     * Suffixes of a ratio's two totals columns on the units changelog, numerator then denominator
     * (metric names hold no '/'): short, since every changed unit's record repeats them.
     */
    static final String NUMERATOR = "/x";
    static final String DENOMINATOR = "/y";
}
