package dev.interim.events;

import java.util.List;
import java.util.Optional;

/**
 * What the readers of events need of the configuration, and nothing else: where the experiment,
 * arm, unit and time are found in an event ({@link EventMapping}), each experiment with where its
 * metrics are read ({@link MappedExperiment}), and the {@link Catalog} of their definitions, compiled
 * once: its indices are the positions in {@link #experiments()}. The stream and replay take this, not
 * the whole configuration (no broker, HTTP or webhook settings).
 *
 * <p>Immutable.
 */
public final class EventCatalog {
    private final EventMapping mapping;
    private final List<MappedExperiment> experiments;
    private final Catalog catalog;

    public EventCatalog(EventMapping mapping, List<MappedExperiment> experiments) {
        this.mapping = mapping;
        this.experiments = List.copyOf(experiments);
        this.catalog = new Catalog(this.experiments.stream().map(MappedExperiment::definition).toList());
    }

    public EventMapping mapping() {
        return mapping;
    }

    /** The experiments, in the catalog's index order. */
    public List<MappedExperiment> experiments() {
        return experiments;
    }

    /** The compiled catalog of the experiments' definitions (the same instance every time). */
    public Catalog catalog() {
        return catalog;
    }

    /** The experiment with this id, if configured. */
    public Optional<MappedExperiment> experiment(String id) {
        int e = catalog.index(id);
        return e < 0 ? Optional.empty() : Optional.of(experiments.get(e));
    }
}
