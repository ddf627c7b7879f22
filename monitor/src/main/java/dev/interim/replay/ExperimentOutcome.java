package dev.interim.replay;

import dev.interim.experiment.ExperimentView;
import java.time.Duration;
import java.time.Instant;
import java.util.List;

/**
 * One experiment at the end of a replay.
 *
 * @param events accepted events of the experiment
 * @param late events stamped before the look preceding them (counted at the next look)
 * @param looks looks run, the final one included
 * @param lookEvery the experiment's look schedule ({@code look_every})
 * @param firstEvent the time of its first accepted event, which starts its look schedule (null without events)
 * @param view the experiment's final picture, as {@code ExperimentMonitor.view()} gives it
 * @param comparisons every treatment arm on every metric, in configuration order
 */
public record ExperimentOutcome(String id, long events, long late, long looks, Duration lookEvery,
                                Instant firstEvent, ExperimentView view,
                                List<ComparisonOutcome> comparisons) {
    public ExperimentOutcome {
        comparisons = List.copyOf(comparisons);
    }
}
