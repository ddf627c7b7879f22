package dev.interim.embedded;

import static org.assertj.core.api.Assertions.assertThat;

import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.admin.Config;
import org.apache.kafka.clients.admin.TopicDescription;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.common.IsolationLevel;
import org.apache.kafka.common.config.ConfigResource;
import org.apache.kafka.common.config.TopicConfig;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * Kafka's exactly-once machinery on the embedded broker, with real clients: what the stream stages
 * rely on. One broker for the class; each test uses topics and transactional ids of its own.
 */
@Timeout(value = 3, unit = TimeUnit.MINUTES, threadMode = Timeout.ThreadMode.SEPARATE_THREAD)
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class EmbeddedKafkaTransactionsTest {
    @TempDir
    static Path dataDir;
    static EmbeddedKafka kafka;

    @BeforeAll
    static void startBroker() {
        kafka = EmbeddedKafka.start(dataDir);
    }

    @AfterAll
    static void stopBroker() {
        if (kafka != null) {
            kafka.close();
        }
    }

    @Test
    void committedTransactionsAreReadBackByAReadCommittedConsumer() {
        kafka.createTopics(Topic.deleting("committed", 1));
        try (KafkaProducer<String, String> producer = Clients.transactionalProducer(kafka, "committed-tx")) {
            Clients.commit(producer, "committed", "a1", "a2", "a3");
            Clients.commit(producer, "committed", "b1");
        }

        List<String> read = Clients.readUntil(kafka, "committed", IsolationLevel.READ_COMMITTED, "b1"::equals);

        assertThat(read).containsExactly("a1", "a2", "a3", "b1");
    }

    @Test
    void anAbortedTransactionIsInvisibleToReadCommittedYetWasWritten() {
        kafka.createTopics(Topic.deleting("aborted", 1));
        try (KafkaProducer<String, String> producer = Clients.transactionalProducer(kafka, "aborted-tx")) {
            Clients.commit(producer, "aborted", "kept-1");
            Clients.abort(producer, "aborted", "dropped-1", "dropped-2");
            Clients.commit(producer, "aborted", "kept-2");
        }

        List<String> committed = Clients.readUntil(kafka, "aborted", IsolationLevel.READ_COMMITTED, "kept-2"::equals);
        List<String> everything = Clients.readUntil(kafka, "aborted", IsolationLevel.READ_UNCOMMITTED, "kept-2"::equals);

        assertThat(committed).containsExactly("kept-1", "kept-2");
        // The aborted records did reach the log: only the isolation level hides them.
        assertThat(everything).containsExactly("kept-1", "dropped-1", "dropped-2", "kept-2");
    }

    @Test
    void createTopicsAcceptsExistingTopicsAndSetsPartitionsAndCleanupPolicy() throws Exception {
        kafka.createTopics(Topic.compacted("state", 3), Topic.deleting("events", 2));
        kafka.createTopics(Topic.compacted("state", 3), Topic.deleting("events", 2), Topic.deleting("more", 1));

        try (Admin admin = Admin.create(Map.of(AdminClientConfig.BOOTSTRAP_SERVERS_CONFIG, kafka.bootstrapServers()))) {
            Map<String, TopicDescription> topics = admin.describeTopics(List.of("state", "events", "more"))
                    .allTopicNames().get(30, TimeUnit.SECONDS);
            ConfigResource state = new ConfigResource(ConfigResource.Type.TOPIC, "state");
            ConfigResource events = new ConfigResource(ConfigResource.Type.TOPIC, "events");
            Map<ConfigResource, Config> configs = admin.describeConfigs(List.of(state, events))
                    .all().get(30, TimeUnit.SECONDS);

            assertThat(topics.get("state").partitions()).hasSize(3);
            assertThat(topics.get("events").partitions()).hasSize(2);
            assertThat(topics.get("more").partitions()).hasSize(1);
            assertThat(configs.get(state).get(TopicConfig.CLEANUP_POLICY_CONFIG).value()).isEqualTo("compact");
            assertThat(configs.get(events).get(TopicConfig.CLEANUP_POLICY_CONFIG).value()).isEqualTo("delete");
        }
    }
}
