package dev.interim.config;

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
                            Optional<WebhookSettings> webhook, List<ExperimentConfig> experiments) {

    public InterimConfig {
        experiments = List.copyOf(experiments);
    }

    /** The experiment with this id, if configured. */
    public Optional<ExperimentConfig> experiment(String id) {
        return experiments.stream().filter(e -> e.definition().id().equals(id)).findFirst();
    }
}
