package dev.interim.replay;

import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentView;
import java.time.Duration;
import java.util.Collections;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * What a replay found: the counts, every decision record in the order they happened, and each
 * experiment's final state. Immutable.
 *
 * @param events lines that held an event (blank lines are skipped and not counted)
 * @param accepted events counted
 * @param rejected refused events by reason (the dead-letter reason labels), in a fixed order, only
 *     reasons that occurred
 * @param firstRejections for each reason in {@code rejected}, where it first happened and why:
 *     "line N: detail"
 * @param looks looks run over all experiments
 * @param decisions every decision record, in order
 * @param experiments every configured experiment, in configuration order
 * @param elapsed how long the replay took
 */
public record ReplayResult(long events, long accepted, Map<String, Long> rejected, Map<String, String> firstRejections,
                           long looks, List<DecisionRecord> decisions, List<ExperimentOutcome> experiments,
                           Duration elapsed) {
    public ReplayResult {
        rejected = Collections.unmodifiableMap(new LinkedHashMap<>(rejected));
        firstRejections = Collections.unmodifiableMap(new LinkedHashMap<>(firstRejections));
        decisions = List.copyOf(decisions);
        experiments = List.copyOf(experiments);
    }

    /** Events refused, all reasons together. */
    public long rejectedTotal() {
        return rejected.values().stream().mapToLong(Long::longValue).sum();
    }

    /**
     * The final picture of every experiment ({@code ExperimentMonitor.view()}: arms, exposures,
     * sample-ratio status, and each comparison's design, decision and look history), by id in
     * configuration order: what a post-mortem report is made from.
     */
    public Map<String, ExperimentView> views() {
        Map<String, ExperimentView> views = new LinkedHashMap<>();
        experiments.forEach(e -> views.put(e.id(), e.view()));
        return Collections.unmodifiableMap(views);
    }
}
