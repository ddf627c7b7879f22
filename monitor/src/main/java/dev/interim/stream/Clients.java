package dev.interim.stream;

import java.util.Properties;
import java.util.UUID;
import org.apache.kafka.clients.admin.AdminClientConfig;
import java.time.Duration;
import org.apache.kafka.clients.consumer.CloseOptions;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.slf4j.Logger;

/** The Kafka clients of the two stages, configured one way. */
final class Clients {
    private Clients() {}

    /**
     * How long the group waits for a member that stopped sending heartbeats before it hands the
     * member's partitions to the others, unless {@code kafka.properties} sets it. With static
     * membership a restarted member takes its partitions back at once whatever this is, so it only
     * bounds how long the work of a daemon that is gone for good (or a host that died) waits for
     * another daemon: longer than a supervised restart (a few seconds), so that a restart does not
     * move the work twice, and shorter than Kafka's default of 45 s.
     */
    static final int SESSION_TIMEOUT_MS = 30_000;

    /**
     * A transactional producer, initialised. Fencing of a stale member is by the consumer group's
     * generation ({@code sendOffsetsToTransaction} with the group metadata, KIP-447). With a static
     * member id the transactional id is derived from it, so that a restarted instance's
     * {@code initTransactions} aborts the transaction its crashed predecessor left open at once,
     * instead of every {@code read_committed} reader waiting for the transaction timeout; without
     * one it is unique per producer.
     *
     * @param member the static member id ({@code group.instance.id}) of the stage, or null
     */
    static KafkaProducer<byte[], byte[]> transactionalProducer(StreamSettings settings, String role, String member) {
        Properties p = producerProperties(settings, role, member);
        KafkaProducer<byte[], byte[]> producer = new KafkaProducer<>(p);
        producer.initTransactions();
        return producer;
    }

    static Properties producerProperties(StreamSettings settings, String role, String member) {
        Properties p = new Properties();
        p.putAll(settings.clientProperties());
        p.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, settings.bootstrapServers());
        p.put(ProducerConfig.TRANSACTIONAL_ID_CONFIG, member != null ? settings.groupPrefix() + "-" + member
                : settings.groupPrefix() + "-" + role + "-" + UUID.randomUUID());
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
        return p;
    }

    /**
     * A consumer of a stage's group: committed records only, offsets committed by the stage's
     * transactions. With a member id it is a static member (KIP-345): a restarted instance with the
     * same id gets its partitions back without waiting for the session of its predecessor to expire,
     * and without moving anyone else's.
     *
     * @param member the static member id ({@code group.instance.id}), or null for a dynamic member
     */
    static Properties groupConsumer(StreamSettings settings, String group, String member) {
        Properties p = new Properties();
        p.putAll(settings.clientProperties());
        p.put(ConsumerConfig.BOOTSTRAP_SERVERS_CONFIG, settings.bootstrapServers());
        p.put(ConsumerConfig.GROUP_ID_CONFIG, group);
        if (member != null) {
            p.put(ConsumerConfig.GROUP_INSTANCE_ID_CONFIG, member);
            p.putIfAbsent(ConsumerConfig.SESSION_TIMEOUT_MS_CONFIG, SESSION_TIMEOUT_MS);
        }
        p.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
        p.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, false);
        p.put(ConsumerConfig.AUTO_OFFSET_RESET_CONFIG, "earliest");
        p.put(ConsumerConfig.MAX_POLL_RECORDS_CONFIG, 5000);
        p.put(ConsumerConfig.KEY_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
        p.put(ConsumerConfig.VALUE_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
        return p;
    }

    /**
     * Checks the client properties as the clients will read them (types, ranges, combinations), so
     * that a bad value is refused before anything starts rather than in a stage's thread.
     *
     * @throws org.apache.kafka.common.config.ConfigException naming the property
     */
    static void check(StreamSettings settings) {
        // As written (the deliveries log's producer), and as the stages' producers amend them.
        Properties plain = new Properties();
        plain.putAll(settings.clientProperties());
        plain.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, settings.bootstrapServers());
        plain.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
        plain.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
        new ProducerConfig(plain);
        new ProducerConfig(producerProperties(settings, "check", null));
        new ConsumerConfig(groupConsumer(settings, "check", "check"));
        Properties admin = new Properties();
        admin.putAll(settings.clientProperties());
        admin.put(AdminClientConfig.BOOTSTRAP_SERVERS_CONFIG, settings.bootstrapServers());
        new AdminClientConfig(admin);
    }

    /**
     * Closes a stage's consumer. A static member stays in its group by default when it closes, so
     * that its restart takes its partitions straight back; one whose id will not come back (it was
     * not stable) leaves at once, so that the others need not wait for its session to expire.
     */
    static void close(KafkaConsumer<?, ?> consumer, boolean leaveGroup) {
        CloseOptions options = CloseOptions.timeout(Duration.ofSeconds(5));
        if (leaveGroup) {
            options = options.withGroupMembershipOperation(CloseOptions.GroupMembershipOperation.LEAVE_GROUP);
        }
        consumer.close(options);
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
