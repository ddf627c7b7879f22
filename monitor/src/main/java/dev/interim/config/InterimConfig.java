package dev.interim.config;

import dev.interim.events.EventCatalog;
import dev.interim.events.EventMapping;
import dev.interim.events.MappedExperiment;

import java.util.List;
import java.util.Optional;

/**
 * A whole, validated configuration: read it with {@link ConfigLoader}. Immutable; its
 * {@link #toString()} never shows a secret (see {@link Secret} and {@link ClientProperties}).
 *
 * @param kafka the connection and topics
 * @param events where the common fields of an event are
 * @param http the HTTP endpoint
 * @param webhook the kill webhook, when configured (required by any metric whose action is kill)
 * @param experiments the experiments watched, in file order
 */
public record InterimConfig(KafkaSettings kafka, EventMapping events, HttpSettings http,
                            Optional<WebhookSettings> webhook, List<MappedExperiment> experiments) {

    public InterimConfig {
        experiments = List.copyOf(experiments);
    }

    /** The event mapping and the experiments, as the stream and replay read events with them. */
    public EventCatalog catalog() {
        return new EventCatalog(events, experiments);
    }

    /** The experiment with this id, if configured. */
    public Optional<MappedExperiment> experiment(String id) {
        return experiments.stream().filter(e -> e.definition().id().equals(id)).findFirst();
    }
}
