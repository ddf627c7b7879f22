package dev.interim.experiment;

import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;

/**
 * The looks of one experiment: every treatment arm against control on every metric, a sample-ratio
 * check first, and the decision records of whatever changed. Time is passed in: the daemon calls
 * {@link #look} when {@link #due} says so, tests call it with any instant they like.
 *
 * <p>Holding: a sample-ratio mismatch, or an operator's hold, suspends every comparison that has not
 * already reached a final decision; when the split recovers (and no operator hold remains) they
 * continue. Each hold and resume is a decision record too.
 *
 * <p>What operators set (a hold, an acknowledgement) and the run the experiment belongs to are its
 * {@link OperatorState}: with each comparison's state, all that a restart needs to carry on exactly
 * where it stopped, without a record of anything that did not happen.
 *
 * <p>Mutable and not thread-safe: one owner per experiment.
 */
public final class ExperimentMonitor {
    private final ExperimentDefinition definition;
    /** The run this state belongs to: part of every decision id (empty for offline tools: see {@link DecisionRecord}). */
    private String run;
    /** metric name → arm → comparison, in configuration order. */
    private final Map<String, Map<String, Comparison>> comparisons = new LinkedHashMap<>();
    private Instant lastLook;
    private SampleRatio sampleRatio = SampleRatio.UNKNOWN;
    private String operatorHold;
    private boolean acknowledged;
    private Map<String, Long> lastExposures = Map.of();
    private Map<String, Map<String, Tally>> lastTallies = Map.of();

    /**
     * What operators set and the run of the experiment, persisted by the daemon with the comparisons'
     * state and restored on a restart.
     *
     * @param run the id of this run of the experiment, created when its state was first written
     * @param hold the operator's hold reason, or null when no operator holds it
     * @param acknowledged whether an operator has acknowledged the stops for harm so far
     */
    public record OperatorState(String run, String hold, boolean acknowledged) {
        public OperatorState {
            java.util.Objects.requireNonNull(run, "run");
        }
    }

    /** A monitor whose decision ids name no run (replay, simulation, tests): the same looks give the same ids. */
    public ExperimentMonitor(ExperimentDefinition definition) {
        this(definition, "");
    }

    /** A monitor of one run of the experiment: its decision ids differ from those of every other run. */
    public ExperimentMonitor(ExperimentDefinition definition, String run) {
        this.definition = definition;
        this.run = java.util.Objects.requireNonNull(run, "run");
        for (MetricDefinition metric : definition.metrics()) {
            Map<String, Comparison> byArm = new LinkedHashMap<>();
            for (String arm : definition.treatments()) {
                byArm.put(arm, new Comparison(definition, metric, arm));
            }
            comparisons.put(metric.name(), byArm);
        }
    }

    public ExperimentDefinition definition() {
        return definition;
    }

    /** Every comparison, metric by metric, arm by arm. */
    public List<Comparison> comparisons() {
        List<Comparison> all = new ArrayList<>();
        comparisons.values().forEach(m -> all.addAll(m.values()));
        return all;
    }

    /** The comparison of {@code arm} on {@code metric}. */
    public Comparison comparison(String metric, String arm) {
        Map<String, Comparison> byArm = comparisons.get(metric);
        Comparison c = byArm == null ? null : byArm.get(arm);
        if (c == null) {
            throw new IllegalArgumentException("experiment " + definition.id() + " has no comparison of arm '" + arm
                    + "' on metric '" + metric + "'");
        }
        return c;
    }

    /** The run of the experiment this monitor decides (empty for offline tools). */
    public String run() {
        return run;
    }

    /** What operators set, and the run: to be persisted whenever it changes. */
    public OperatorState operatorState() {
        return new OperatorState(run, operatorHold, acknowledged);
    }

    /**
     * Restores what operators had set before a restart. Writes no record: the comparisons' own states
     * (a hold included) are restored with them, so nothing changes here.
     */
    public void restore(OperatorState state) {
        run = state.run();
        operatorHold = state.hold();
        acknowledged = state.acknowledged();
    }

    public SampleRatio sampleRatio() {
        return sampleRatio;
    }

    /** Whether a look is due at {@code now}: the first one at once, then every look interval. */
    public boolean due(Instant now) {
        return lastLook == null || !now.isBefore(lastLook.plus(definition.lookEvery()));
    }

    /**
     * One look at {@code at}.
     *
     * @param exposures units (or events) exposed per arm, for the sample-ratio check
     * @param tallies metric name → arm → tally; metrics or arms missing here are not looked at
     */
    public LookReport look(Instant at, Map<String, Long> exposures, Map<String, Map<String, Tally>> tallies) {
        lastLook = at;
        lastExposures = Map.copyOf(exposures);
        lastTallies = tallies;
        sampleRatio = SampleRatio.check(definition, exposures);
        List<DecisionRecord> records = new ArrayList<>(applyHold(at));
        List<Task> tasks = new ArrayList<>();
        for (MetricDefinition metric : definition.metrics()) {
            Map<String, Tally> byArm = tallies.getOrDefault(metric.name(), Map.of());
            Tally control = byArm.get(definition.control());
            for (Comparison c : comparisons.get(metric.name()).values()) {
                Tally treatment = byArm.get(c.arm());
                if (treatment == null || (control == null && metric.baseline() == null)) {
                    continue;
                }
                tasks.add(new Task(metric, c, treatment, control));
            }
        }
        // Comparisons share nothing, so they look in parallel (the caller takes part); the results
        // come back in configuration order, and everything after is sequential.
        List<Optional<LookResult>> outcomes = tasks.size() < 2
                ? tasks.stream().map(t -> t.run(at)).toList()
                : tasks.parallelStream().map(t -> t.run(at)).toList();
        List<LookResult> results = new ArrayList<>();
        for (int i = 0; i < tasks.size(); i++) {
            Optional<LookResult> r = outcomes.get(i);
            MetricDefinition metric = tasks.get(i).metric();
            r.ifPresent(results::add);
            r.filter(LookResult::changed).ifPresent(x -> records.add(DecisionRecord.of(run, x, metric, definition.mode())));
            if (r.isPresent() && r.get().changed() && r.get().decision() == Decision.STOP_HARM) {
                acknowledged = false;
            }
        }
        return new LookReport(definition.id(), at, sampleRatio, results, records);
    }

    /** One comparison's part of a look. */
    private record Task(MetricDefinition metric, Comparison comparison, Tally treatment, Tally control) {
        Optional<LookResult> run(Instant at) {
            return comparison.look(treatment, control, at);
        }
    }

    /** An operator's hold: suspends every comparison not yet final. */
    public List<DecisionRecord> hold(Instant at, String reason) {
        operatorHold = reason == null || reason.isBlank() ? "operator" : reason;
        return applyHold(at);
    }

    /**
     * An operator stops {@code arm} for harm on every metric not yet decided: the records carry the
     * metrics' actions, so a kill action calls the webhook (outside dry-run) as a boundary crossing
     * would.
     */
    public List<DecisionRecord> forceStop(Instant at, String arm, String reason) {
        if (!definition.treatments().contains(arm)) {
            throw new IllegalArgumentException("experiment " + definition.id() + " has no treatment arm '" + arm
                    + "'; its treatments are " + definition.treatments());
        }
        acknowledged = false;
        List<DecisionRecord> records = new ArrayList<>();
        for (Comparison c : comparisons()) {
            Decision before = c.decision();
            if (c.arm().equals(arm) && c.forceStop()) {
                records.add(DecisionRecord.ofStateChange(run, definition.id(), c, before, at, definition.mode(),
                        reason == null || reason.isBlank() ? "operator stop" : reason));
            }
        }
        return records;
    }

    /**
     * An operator has seen the stops for harm: the paging signal clears until a new stop. Returns
     * what was acknowledged (the comparisons stopped for harm so far), or empty when it already was.
     */
    public Optional<Acknowledgement> acknowledge(Instant at) {
        if (acknowledged) {
            return Optional.empty();
        }
        acknowledged = true;
        List<Acknowledgement.Stop> stops = new ArrayList<>();
        for (Comparison c : comparisons()) {
            if (c.decision() == Decision.STOP_HARM) {
                stops.add(new Acknowledgement.Stop(c.arm(), c.metric().name()));
            }
        }
        return Optional.of(Acknowledgement.of(run, definition.id(), at, stops, definition.mode()));
    }

    public boolean acknowledged() {
        return acknowledged;
    }

    /** Ends an operator's hold; comparisons stay held while the split is broken. */
    public List<DecisionRecord> resume(Instant at) {
        operatorHold = null;
        return applyHold(at);
    }

    /** An immutable picture of the experiment now (call on the owning thread). */
    public ExperimentView view() {
        List<ExperimentView.ComparisonView> views = new ArrayList<>();
        for (Comparison c : comparisons()) {
            views.add(c.view());
        }
        String reason = operatorHold != null ? operatorHold : sampleRatio.mismatch() ? "sample-ratio mismatch" : null;
        return new ExperimentView(definition.id(), definition.control(), definition.treatments(), definition.dryRun(),
                held(), reason, sampleRatio, lastLook, lastExposures, lastTallies, views, definition.assignment(), run);
    }

    public boolean held() {
        return operatorHold != null || sampleRatio.mismatch();
    }

    private List<DecisionRecord> applyHold(Instant at) {
        boolean hold = held();
        String reason = operatorHold != null ? operatorHold : "sample-ratio mismatch";
        List<DecisionRecord> records = new ArrayList<>();
        for (Comparison c : comparisons()) {
            Decision before = c.decision();
            boolean changed = hold ? c.hold() : c.resume();
            if (changed) {
                records.add(DecisionRecord.ofStateChange(run, definition.id(), c, before, at, definition.mode(),
                        hold ? reason : "resume"));
            }
        }
        return records;
    }
}
