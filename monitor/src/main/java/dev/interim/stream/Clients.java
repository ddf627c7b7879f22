package dev.interim.stream;

import java.util.Properties;
import java.util.UUID;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.slf4j.Logger;

/** The Kafka clients of the two stages, configured one way. */
final class Clients {
    private Clients() {}

    /**
     * A transactional producer, initialised. Its transactional id is unique per instance: fencing of a
     * stale member is by the consumer group's generation ({@code sendOffsetsToTransaction} with the
     * group metadata, KIP-447), not by a fixed id.
     */
    static KafkaProducer<byte[], byte[]> transactionalProducer(StreamSettings settings, String role) {
        Properties p = new Properties();
        p.putAll(settings.clientProperties());
        p.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, settings.bootstrapServers());
        p.put(ProducerConfig.TRANSACTIONAL_ID_CONFIG, settings.groupPrefix() + "-" + role + "-" + UUID.randomUUID());
        p.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
        p.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
        p.put(ProducerConfig.LINGER_MS_CONFIG, 5);
        // A commit can write a record per changed unit: larger batches, fewer requests.
        p.putIfAbsent(ProducerConfig.BATCH_SIZE_CONFIG, 128 * 1024);
        // A crashed member's open transaction holds back every read_committed reader of the state
        // topics (and a new owner's restore) until the broker aborts it: keep that short, but well
        // above the time a stage's transaction is legitimately open (one commit interval).
        p.putIfAbsent(ProducerConfig.TRANSACTION_TIMEOUT_CONFIG,
                (int) Math.max(10_000, 4 * settings.commitInterval().toMillis()));
        // The broker's default record limit is 1 MiB; ours stay far below (dead letters are capped).
        p.putIfAbsent(ProducerConfig.MAX_REQUEST_SIZE_CONFIG, 1024 * 1024);
        KafkaProducer<byte[], byte[]> producer = new KafkaProducer<>(p);
        producer.initTransactions();
        return producer;
    }

    /** A consumer of a stage's group: committed records only, offsets committed by the stage's transactions. */
    static Properties groupConsumer(StreamSettings settings, String group) {
        Properties p = new Properties();
        p.putAll(settings.clientProperties());
        p.put(ConsumerConfig.BOOTSTRAP_SERVERS_CONFIG, settings.bootstrapServers());
        p.put(ConsumerConfig.GROUP_ID_CONFIG, group);
        p.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
        p.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, false);
        p.put(ConsumerConfig.AUTO_OFFSET_RESET_CONFIG, "earliest");
        p.put(ConsumerConfig.MAX_POLL_RECORDS_CONFIG, 5000);
        p.put(ConsumerConfig.KEY_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
        p.put(ConsumerConfig.VALUE_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
        return p;
    }

    /** Runs a clean-up step whose failure must not hide the reason for stopping. */
    static void quietly(Logger log, Runnable action) {
        try {
            action.run();
        } catch (RuntimeException e) {
            log.debug("ignored while stopping: {}", e.toString());
        }
    }
}
