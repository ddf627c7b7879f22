package dev.interim.experiment;

import dev.interim.stats.Probabilities;
import dev.interim.text.UserText;
import java.time.Duration;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.regex.Pattern;

/**
 * An experiment or rollout: its arms, their expected split, when to look, and the metrics watched.
 * Every treatment arm is compared with control on every metric; a metric's α is shared equally
 * over the treatment arms (Bonferroni), so the chance of any false stop on that metric stays at or
 * below α. Guardrails and the primary metric each have their own α.
 *
 * @param id experiment id as it appears in events
 * @param control the control arm
 * @param treatments the treatment arms (at least one)
 * @param split expected share of exposures per arm (any positive weights; normalised)
 * @param lookEvery time between looks
 * @param minPerArm observations every arm needs before the first look
 * @param mode live, or dry-run: decide and record, but never call the kill webhook
 * @param sampleRatioThreshold p-value below which the split is judged broken and decisions held
 * @param metrics the metrics watched (at least one)
 * @param assignment how arms were assigned: per unit (event metrics are then analysed as ratios of
 *                   per-unit sums, with delta-method variances) or per event
 */
public record ExperimentDefinition(String id, String control, List<String> treatments, Map<String, Double> split,
                                   Duration lookEvery, long minPerArm, RunMode mode, double sampleRatioThreshold,
                                   List<MetricDefinition> metrics, Assignment assignment) {

    /** An experiment whose arms were assigned per event (each event an independent observation). */
    public ExperimentDefinition(String id, String control, List<String> treatments, Map<String, Double> split,
                                Duration lookEvery, long minPerArm, RunMode mode, double sampleRatioThreshold,
                                List<MetricDefinition> metrics) {
        this(id, control, treatments, split, lookEvery, minPerArm, mode, sampleRatioThreshold, metrics, Assignment.EVENT);
    }

    /** True in dry-run mode: decisions are recorded, nothing acts on them. */
    public boolean dryRun() {
        return mode == RunMode.DRY_RUN;
    }

    private static final Pattern ID = Pattern.compile("[A-Za-z0-9_.-]{1,128}");

    public ExperimentDefinition {
        require(mode != null, "mode is required: live or dry-run");
        require(id != null && ID.matcher(id).matches(), "id must be 1 to 128 letters, digits, '_', '-' or '.', got " + UserText.quoted(id));
        require(control != null && ID.matcher(control).matches(), "control must name an arm, got " + UserText.quoted(control));
        require(treatments != null && !treatments.isEmpty(), "treatments must list at least one arm");
        Set<String> arms = new HashSet<>();
        arms.add(control);
        for (String t : treatments) {
            require(t != null && ID.matcher(t).matches(), "treatments: an arm name must be 1 to 128 letters, digits, '_', '-' or '.', got " + UserText.quoted(t));
            require(arms.add(t), "arm " + UserText.quoted(t) + " is listed twice (control and treatments must differ)");
        }
        treatments = List.copyOf(treatments);
        if (split == null || split.isEmpty()) {
            Map<String, Double> equal = new LinkedHashMap<>();
            equal.put(control, 1.0);
            treatments.forEach(t -> equal.put(t, 1.0));
            split = equal;
        }
        require(split.keySet().equals(arms), "split must give a share for each arm and only those: " + arms + ", got " + split.keySet());
        for (Map.Entry<String, Double> e : split.entrySet()) {
            require(e.getValue() != null && e.getValue() > 0 && Double.isFinite(e.getValue()),
                    "split." + e.getKey() + " must be a positive number, got " + e.getValue());
        }
        split = Map.copyOf(split);
        require(lookEvery != null && !lookEvery.isNegative() && lookEvery.compareTo(Duration.ofSeconds(1)) >= 0,
                "look_every must be at least 1s, got " + lookEvery);
        require(minPerArm >= 2, "min_per_arm must be at least 2, got " + minPerArm);
        Probabilities.requireOpen(sampleRatioThreshold, "sample_ratio_threshold");
        require(metrics != null && !metrics.isEmpty(), "metrics must list at least one metric");
        Set<String> names = new HashSet<>();
        for (MetricDefinition m : metrics) {
            require(names.add(m.name()), "metric " + UserText.quoted(m.name()) + " is defined twice");
        }
        metrics = List.copyOf(metrics);
        require(assignment != null, "assignment is required: unit or event");
    }

    /** What {@code metric}'s tally holds in this experiment (its kind under this assignment). */
    public TallyForm form(MetricDefinition metric) {
        return TallyForm.of(metric.kind(), assignment);
    }

    /** All arms, control first. */
    public List<String> arms() {
        List<String> all = new java.util.ArrayList<>();
        all.add(control);
        all.addAll(treatments);
        return all;
    }

    /** The α of one treatment-versus-control comparison on {@code metric}: α / number of treatments. */
    public double comparisonAlpha(MetricDefinition metric) {
        return metric.alpha() / treatments.size();
    }

    /**
     * True when events need a unit: arms assigned per unit, or some metric counting per unit (the
     * input must then be keyed by unit, so that each unit's events meet in one partition).
     */
    public boolean needsUnits() {
        return assignment == Assignment.UNIT || metrics.stream().anyMatch(m -> m.kind().perUnit());
    }

    private static void require(boolean ok, String message) {
        if (!ok) {
            throw new IllegalArgumentException(message);
        }
    }
}
