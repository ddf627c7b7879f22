package dev.interim.stream;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.embedded.EmbeddedKafka;
import dev.interim.embedded.Topic;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.StringSerializer;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * A new owner restores its state from a compacted topic while the previous owner's last transaction
 * may still be finishing. The reader must take in every transaction that had written when it started:
 * waiting for an open one to end, then seeing it if committed and not if aborted. (Reading only to
 * the last stable offset lost one commit interval of events after a rebalance.)
 */
@Timeout(value = 3, unit = TimeUnit.MINUTES, threadMode = Timeout.ThreadMode.SEPARATE_THREAD)
// Source: expected values come from what this test itself writes (its own ground truth).
class StateReaderTest {
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
    void aTransactionOpenWhenReadingStartsIsWaitedForAndSeenOnceCommitted() throws Exception {
        kafka.createTopics(Topic.compacted("open-then-committed", 2));
        try (KafkaProducer<String, String> producer = producer("committer")) {
            producer.beginTransaction();
            producer.send(new ProducerRecord<>("open-then-committed", 0, "k1", "before")).get();
            producer.commitTransaction();
            producer.beginTransaction();
            producer.send(new ProducerRecord<>("open-then-committed", 0, "k1", "after")).get();
            producer.send(new ProducerRecord<>("open-then-committed", 1, "k2", "other")).get();

            CompletableFuture<List<String>> read = CompletableFuture.supplyAsync(() -> readAll("open-then-committed"));
            Thread.sleep(1500);
            assertThat(read).as("the reader waits for the open transaction").isNotDone();
            producer.commitTransaction();

            assertThat(read.get(60, TimeUnit.SECONDS)).containsExactlyInAnyOrder("k1=before", "k1=after", "k2=other");
        }
    }

    @Test
    void aTransactionOpenWhenReadingStartsAndThenAbortedIsNotSeen() throws Exception {
        kafka.createTopics(Topic.compacted("open-then-aborted", 1));
        try (KafkaProducer<String, String> producer = producer("aborter")) {
            producer.beginTransaction();
            producer.send(new ProducerRecord<>("open-then-aborted", 0, "k1", "kept")).get();
            producer.commitTransaction();
            producer.beginTransaction();
            producer.send(new ProducerRecord<>("open-then-aborted", 0, "k1", "dropped")).get();

            CompletableFuture<List<String>> read = CompletableFuture.supplyAsync(() -> readAll("open-then-aborted"));
            Thread.sleep(1500);
            assertThat(read).isNotDone();
            producer.abortTransaction();

            assertThat(read.get(60, TimeUnit.SECONDS)).containsExactly("k1=kept");
        }
    }

    @Test
    void anEmptyTopicAndCommittedRecordsAreReadAtOnce() throws Exception {
        kafka.createTopics(Topic.compacted("settled", 2));
        assertThat(readAll("settled")).isEmpty();
        try (KafkaProducer<String, String> producer = producer("settler")) {
            producer.beginTransaction();
            producer.send(new ProducerRecord<>("settled", 1, "k", "v")).get();
            producer.commitTransaction();
        }
        assertThat(readAll("settled")).containsExactly("k=v");
    }

    private static List<String> readAll(String topic) {
        StreamSettings settings = new StreamSettings(kafka.bootstrapServers(), Map.of(), List.of("unused"),
                "unused", "unused", "unused", "unused", Duration.ofMillis(500), 1);
        List<String> seen = new ArrayList<>();
        StateReader.readAll(settings, topic, null, (k, v) ->
                seen.add(new String(k, StandardCharsets.UTF_8) + "=" + new String(v, StandardCharsets.UTF_8)));
        return seen;
    }

    private static KafkaProducer<String, String> producer(String id) {
        Properties p = new Properties();
        p.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, kafka.bootstrapServers());
        p.put(ProducerConfig.TRANSACTIONAL_ID_CONFIG, "state-reader-test-" + id);
        p.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, StringSerializer.class.getName());
        p.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, StringSerializer.class.getName());
        KafkaProducer<String, String> producer = new KafkaProducer<>(p);
        producer.initTransactions();
        return producer;
    }
}
