package dev.interim.events;

import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.MetricDefinition;
import java.util.Map;

/**
 * One configured experiment: its definition, and where each of its metrics is read in the events.
 *
 * @param definition the experiment and its metrics
 * @param sources the source of each metric, by metric name
 */
public record MappedExperiment(ExperimentDefinition definition, Map<String, MetricSource> sources) {

    public MappedExperiment {
        sources = Map.copyOf(sources);
        for (MetricDefinition m : definition.metrics()) {
            if (!sources.containsKey(m.name())) {
                throw new IllegalArgumentException("metric '" + m.name() + "' has no source");
            }
        }
    }

    /** Where {@code metric} (one of this experiment's) is read. */
    public MetricSource source(MetricDefinition metric) {
        MetricSource s = sources.get(metric.name());
        if (s == null) {
            throw new IllegalArgumentException("metric '" + metric.name() + "' is not one of experiment '"
                    + definition.id() + "'");
        }
        return s;
    }
}
