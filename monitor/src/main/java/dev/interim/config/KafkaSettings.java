package dev.interim.config;

import java.time.Duration;
import java.util.List;
import java.util.Optional;

/**
 * How the daemon reaches Kafka and which topics it uses.
 *
 * @param bootstrapServers {@code host:port} of the brokers; empty to start the embedded broker
 * @param properties client properties passed through as written (TLS, SASL, ...)
 * @param inputTopics the topics carrying experiment events
 * @param decisionsTopic where decision records go
 * @param deadLetterTopic where unreadable events go, with their reason
 * @param stateTopicPrefix prefix of the daemon's own compacted state topics
 * @param consumerGroupPrefix prefix of the consumer group ids of the two stages
 * @param commitInterval how often the tally stage commits its transaction
 * @param inputKeyedByUnit the producers key input records by unit id (per-unit metrics need it)
 * @param tallyThreads tally stages in this process, each a member of the tally group with its share
 *                     of the input partitions
 * @param instanceId this daemon's stable identity in the consumer groups (static membership); empty:
 *                   derived from the host name and the HTTP port
 * @param startupTimeout how long {@code run} keeps trying to reach the brokers at start before it
 *                       gives up
 */
public record KafkaSettings(List<String> bootstrapServers, ClientProperties properties, List<String> inputTopics,
                            String decisionsTopic, String deadLetterTopic, String stateTopicPrefix,
                            String consumerGroupPrefix, Duration commitInterval, boolean inputKeyedByUnit,
                            int tallyThreads, Optional<String> instanceId, Duration startupTimeout) {

    public KafkaSettings {
        bootstrapServers = List.copyOf(bootstrapServers);
        inputTopics = List.copyOf(inputTopics);
    }

    /** True when no bootstrap servers are configured: the daemon starts its embedded broker. */
    public boolean embedded() {
        return bootstrapServers.isEmpty();
    }
}
