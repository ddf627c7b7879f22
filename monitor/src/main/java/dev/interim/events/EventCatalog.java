package dev.interim.events;

import java.util.List;
import java.util.Optional;

/**
 * What the readers of events need of the configuration, and nothing else: where the experiment,
 * arm, unit and time are found in an event ({@link EventMapping}), and each experiment with where
 * its metrics are read ({@link MappedExperiment}). The stream and replay take this, not the whole
 * configuration (no broker, HTTP or webhook settings).
 */
public record EventCatalog(EventMapping mapping, List<MappedExperiment> experiments) {

    public EventCatalog {
        experiments = List.copyOf(experiments);
    }

    /** The experiment with this id, if configured. */
    public Optional<MappedExperiment> experiment(String id) {
        return experiments.stream().filter(e -> e.definition().id().equals(id)).findFirst();
    }
}
