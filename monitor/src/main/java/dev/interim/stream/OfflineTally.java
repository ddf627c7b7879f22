package dev.interim.stream;

import dev.interim.events.Catalog;

import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.Tally;
import java.util.Collections;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * The tally stage without Kafka, for offline use (replaying a file of past events): one
 * {@link PartitionState} fed through {@link ObservationSink} (for example by a
 * {@link JsonEventReader}), and snapshots shaped as the judge stage hands them to
 * {@code ExperimentMonitor.look}: per metric and arm a {@link Tally}, and the exposures per arm.
 *
 * <p>It counts exactly as the daemon does — same per-event and per-unit rules, same exposures —
 * because it is the daemon's own partition state; with a single input there is nothing to merge.
 * Snapshots are immutable values. What the partition state keeps for commits (its change sets) is
 * drained at every snapshot, so memory stays bounded by the tallies and the unit tables (see
 * {@link #unitStateBytes()}).
 *
 * <p>Mutable and not thread-safe: one owner.
 */
public final class OfflineTally implements ObservationSink {
    /** The input name of the single partition, where the daemon has "topic-partition". */
    static final String SOURCE = "offline";

    private final Catalog catalog;
    private final PartitionState state;
    /** The latest partial of every key seen so far. */
    private final Map<PartialKey, Tally> latest = new HashMap<>();

    public OfflineTally(List<ExperimentDefinition> experiments) {
        this(new Catalog(experiments));
    }

    /** The tallies of the experiments of {@code catalog}, whose indices the observations name. */
    public OfflineTally(Catalog catalog) {
        this.catalog = catalog;
        this.state = new PartitionState(SOURCE, catalog);
    }

    /** What one experiment's look is given: exposures per arm and, per metric, each arm's tally. */
    public record Snapshot(Map<String, Long> exposures, Map<String, Map<String, Tally>> tallies) {
        public Snapshot {
            exposures = Map.copyOf(exposures);
            Map<String, Map<String, Tally>> copy = new LinkedHashMap<>();
            tallies.forEach((metric, byArm) -> copy.put(metric, Map.copyOf(byArm)));
            tallies = Collections.unmodifiableMap(copy);
        }
    }

    @Override
    public void exposure(int experiment, int arm, String unit) {
        state.exposure(experiment, arm, unit);
    }

    @Override
    public void outcome(int experiment, int arm, String unit, int metric, boolean success) {
        state.outcome(experiment, arm, unit, metric, success);
    }

    @Override
    public void value(int experiment, int arm, String unit, int metric, double value) {
        state.value(experiment, arm, unit, metric, value);
    }

    @Override
    public void ratio(int experiment, int arm, String unit, int metric, double numerator, double denominator) {
        state.ratio(experiment, arm, unit, metric, numerator, denominator);
    }

    /**
     * Everything tallied so far for {@code experiment}, as the judge stage merges it: every arm has an
     * exposure count (0 when none); a metric or arm without observations is absent from the tallies.
     *
     * @throws IllegalArgumentException when the experiment is not one of those given
     */
    public Snapshot snapshot(String experiment) {
        ExperimentDefinition definition = catalog.experiment(experiment);
        if (definition == null) {
            throw new IllegalArgumentException("no experiment '" + experiment + "' in this tally");
        }
        for (PartitionState.Partial p : state.drainChangedPartials()) {
            latest.put(p.key(), p.tally());
        }
        state.clearChangedUnits();
        state.drainAccepted();
        Map<String, Long> exposures = new LinkedHashMap<>();
        Map<String, Map<String, Tally>> tallies = new LinkedHashMap<>();
        for (String arm : definition.arms()) {
            Tally e = latest.get(new PartialKey(experiment, arm, PartialKey.EXPOSURES, SOURCE));
            exposures.put(arm, e == null ? 0L : e.count());
            definition.metrics().forEach(metric -> {
                Tally t = latest.get(new PartialKey(experiment, arm, metric.name(), SOURCE));
                if (t != null) {
                    tallies.computeIfAbsent(metric.name(), x -> new LinkedHashMap<>()).put(arm, t);
                }
            });
        }
        return new Snapshot(exposures, tallies);
    }

    /** Units seen so far, over every experiment. */
    public int units() {
        return state.unitCount();
    }

    /**
     * The bytes that the per-unit state's column arrays take, over every experiment (their lengths
     * times their element sizes; the few array headers not counted). This is all the heap that grows
     * with the number of units: no object is kept per unit, and what changed is a bitset of the
     * same tables, cleared at every snapshot. For a memory benchmark to compare with what it measures.
     */
    public long unitStateBytes() {
        return state.unitBytes();
    }
}
