package dev.interim.stream;

import java.time.Duration;
import java.util.List;
import java.util.Map;

/**
 * What the two stages need to know about Kafka: where it is, the client settings passed through
 * (TLS, SASL), the topics and the consumer groups.
 *
 * @param bootstrapServers the brokers
 * @param clientProperties passed to every client as they are (secrets already resolved)
 * @param inputTopics the event topics
 * @param decisionsTopic where decision records go (JSON, keyed by experiment)
 * @param deadLetterTopic where unreadable events go, with their reason in a header
 * @param statePrefix prefix of the state topics (tallies, units, looks)
 * @param groupPrefix prefix of the consumer groups and transactional ids
 * @param commitInterval how often the tally stage commits
 * @param statePartitions partitions of the tallies and looks topics (the judge's unit of ownership)
 */
public record StreamSettings(String bootstrapServers, Map<String, Object> clientProperties, List<String> inputTopics,
                             String decisionsTopic, String deadLetterTopic, String statePrefix, String groupPrefix,
                             Duration commitInterval, int statePartitions) {

    public StreamSettings {
        clientProperties = Map.copyOf(clientProperties);
        inputTopics = List.copyOf(inputTopics);
        if (inputTopics.isEmpty()) {
            throw new IllegalArgumentException("at least one input topic is needed");
        }
        if (statePartitions < 1) {
            throw new IllegalArgumentException("state topics need at least one partition, got " + statePartitions);
        }
    }

    /** Compacted: the latest cumulative partial per (experiment, arm, metric, input partition). */
    public String talliesTopic() {
        return statePrefix + "-tallies";
    }

    /** Compacted: per-unit state, partitioned like the input. */
    public String unitsTopic() {
        return statePrefix + "-units";
    }

    /** Compacted: the look history per (experiment, arm, metric): fractions and decision. */
    public String looksTopic() {
        return statePrefix + "-looks";
    }

    /** Compacted: ids of the decisions whose kill webhook was delivered. */
    public String deliveriesTopic() {
        return statePrefix + "-deliveries";
    }

    public String tallyGroup() {
        return groupPrefix + "-tally";
    }

    public String judgeGroup() {
        return groupPrefix + "-judge";
    }

    /**
     * Checks the client properties ({@code kafka.properties}) as the Kafka clients will read them.
     *
     * @throws org.apache.kafka.common.config.ConfigException naming the property and the problem
     */
    public void checkClientProperties() {
        Clients.check(this);
    }

    /** The tallies (and looks) partition that owns {@code experiment}: one owner per experiment. */
    public int stateFor(String experiment) {
        return Math.floorMod(experiment.hashCode(), statePartitions);
    }
}
