package dev.interim.stream;

import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.Set;
import java.util.function.BiConsumer;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.PartitionInfo;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;

/**
 * Reads a compacted state topic from the beginning to its current end, committed records only, and
 * hands every (key, value) to a callback in offset order per partition (so the last value of a key
 * wins). Used when a stage takes over partitions after a start, a crash or a rebalance.
 *
 * <p>"Current end" is the high watermark, every record written so far, not the last stable offset.
 * A previous owner's last transaction can be committed (its {@code commitTransaction} returned, its
 * consumer offsets about to become visible) while the commit markers on this topic are still being
 * written; the last stable offset then still stands before that transaction. Reading only to it would
 * restore the state before the transaction while consuming on from the offsets after it: the events
 * of one commit interval lost. So the reader waits until every transaction that had written here
 * when it started has ended (committed, aborted, or timed out and aborted by the broker).
 */
public final class StateReader {
    private static final Duration DEADLINE = Duration.ofMinutes(2);

    private StateReader() {}

    /**
     * @param partitions the partitions to read, or null for all of them
     */
    public static void readAll(StreamSettings settings, String topic, Set<Integer> partitions, BiConsumer<byte[], byte[]> sink) {
        Properties p = new Properties();
        p.putAll(settings.clientProperties());
        p.put(ConsumerConfig.BOOTSTRAP_SERVERS_CONFIG, settings.bootstrapServers());
        p.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
        p.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, false);
        p.put(ConsumerConfig.MAX_POLL_RECORDS_CONFIG, 10_000);
        p.put(ConsumerConfig.KEY_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
        p.put(ConsumerConfig.VALUE_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
        try (KafkaConsumer<byte[], byte[]> consumer = new KafkaConsumer<>(p)) {
            List<TopicPartition> assigned = new ArrayList<>();
            List<PartitionInfo> infos = consumer.partitionsFor(topic, Duration.ofSeconds(30));
            if (infos == null) {
                return;
            }
            for (PartitionInfo info : infos) {
                if (partitions == null || partitions.contains(info.partition())) {
                    assigned.add(new TopicPartition(topic, info.partition()));
                }
            }
            if (assigned.isEmpty()) {
                return;
            }
            consumer.assign(assigned);
            consumer.seekToBeginning(assigned);
            Map<TopicPartition, Long> end = new HashMap<>(highWatermarks(p, assigned));
            end.entrySet().removeIf(e -> e.getValue() == 0);
            long deadline = System.nanoTime() + DEADLINE.toNanos();
            while (!end.isEmpty()) {
                if (System.nanoTime() > deadline) {
                    throw new IllegalStateException("could not read state topic " + topic + " to its end within " + DEADLINE
                            + ": a transaction on it stayed open that long; look for a stuck producer, or lower the"
                            + " producers' transaction.timeout.ms so the broker aborts such transactions sooner");
                }
                for (ConsumerRecord<byte[], byte[]> r : consumer.poll(Duration.ofMillis(200))) {
                    sink.accept(r.key(), r.value());
                }
                end.entrySet().removeIf(e -> consumer.position(e.getKey()) >= e.getValue());
            }
        }
    }

    /** End offsets including records of transactions still open (a read_committed consumer reports the stable end). */
    private static Map<TopicPartition, Long> highWatermarks(Properties committedReader, List<TopicPartition> partitions) {
        Properties p = new Properties();
        p.putAll(committedReader);
        p.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_uncommitted");
        try (KafkaConsumer<byte[], byte[]> consumer = new KafkaConsumer<>(p)) {
            return consumer.endOffsets(partitions, Duration.ofSeconds(30));
        }
    }
}
