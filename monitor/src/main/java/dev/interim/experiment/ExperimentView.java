package dev.interim.experiment;

import dev.interim.text.Numbers;
import java.time.Instant;
import java.util.List;
import java.util.Map;

/**
 * An immutable picture of one experiment after a look: safe to hand to other threads (the HTTP API,
 * the dashboard) while the judge goes on looking.
 *
 * @param exposures exposures per arm at the last look
 * @param tallies the sufficient statistics at the last look, metric → arm → tally (every event counted once)
 * @param lastLook when the last look ran (null before the first)
 * @param assignment how arms were assigned (per unit: event metrics are ratios of per-unit sums)
 * @param run the run of the experiment whose state this is (part of its decision ids), empty offline
 */
public record ExperimentView(String id, String control, List<String> treatments, boolean dryRun, boolean held,
                             String holdReason, SampleRatio sampleRatio, Instant lastLook, Map<String, Long> exposures,
                             Map<String, Map<String, Tally>> tallies, List<ComparisonView> comparisons,
                             Assignment assignment, String run) {

    /** A view that names no run. */
    public ExperimentView(String id, String control, List<String> treatments, boolean dryRun, boolean held,
                          String holdReason, SampleRatio sampleRatio, Instant lastLook, Map<String, Long> exposures,
                          Map<String, Map<String, Tally>> tallies, List<ComparisonView> comparisons,
                          Assignment assignment) {
        this(id, control, treatments, dryRun, held, holdReason, sampleRatio, lastLook, exposures, tallies, comparisons,
                assignment, "");
    }

    /** A view of an experiment assigned per event. */
    public ExperimentView(String id, String control, List<String> treatments, boolean dryRun, boolean held,
                          String holdReason, SampleRatio sampleRatio, Instant lastLook, Map<String, Long> exposures,
                          Map<String, Map<String, Tally>> tallies, List<ComparisonView> comparisons) {
        this(id, control, treatments, dryRun, held, holdReason, sampleRatio, lastLook, exposures, tallies, comparisons,
                Assignment.EVENT);
    }

    public ExperimentView {
        treatments = List.copyOf(treatments);
        exposures = Map.copyOf(exposures);
        Map<String, Map<String, Tally>> copy = new java.util.HashMap<>();
        tallies.forEach((metric, byArm) -> copy.put(metric, Map.copyOf(byArm)));
        tallies = Map.copyOf(copy);
        comparisons = List.copyOf(comparisons);
        run = run == null ? "" : run;
    }

    /**
     * One treatment on one metric: its design and its looks so far (the most recent ones; older looks
     * are thinned once there are more than {@link Comparison#KEPT_POINTS}), and why the last look due
     * found nothing to look at (too few observations, no variance yet), or null; {@code quantile} is
     * the probability of an event-quantile metric (0.99 for its 99th percentile), NaN for other kinds.
     */
    public record ComparisonView(String arm, String metric, String kind, String role, String worse, String action,
                                 double alpha, String alternative, String spending, Decision decision,
                                 List<LookPoint> looks, String skipped, double quantile) {
        public ComparisonView {
            looks = List.copyOf(looks);
        }

        /** A view of a metric that is not a quantile. */
        public ComparisonView(String arm, String metric, String kind, String role, String worse, String action,
                              double alpha, String alternative, String spending, Decision decision, List<LookPoint> looks,
                              String skipped) {
            this(arm, metric, kind, role, worse, action, alpha, alternative, spending, decision, looks, skipped, Double.NaN);
        }

        /** True for an event-quantile metric. */
        public boolean isQuantile() {
            return !Double.isNaN(quantile);
        }

        /** The metric as people read it: its name, preceded by its percentile for a quantile ({@code p99 latency-ms}). */
        public String label() {
            return isQuantile() ? Numbers.percentileLabel(quantile, metric) : metric;
        }

        /** A view whose last look due was not skipped. */
        public ComparisonView(String arm, String metric, String kind, String role, String worse, String action,
                              double alpha, String alternative, String spending, Decision decision, List<LookPoint> looks) {
            this(arm, metric, kind, role, worse, action, alpha, alternative, spending, decision, looks, null);
        }
    }
}
