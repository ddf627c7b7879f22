package dev.interim.embedded;

import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.function.Predicate;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.IsolationLevel;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.serialization.StringDeserializer;
import org.apache.kafka.common.serialization.StringSerializer;

/** Real Kafka clients for the embedded broker tests, with every wait bounded. */
final class Clients {
    /** Long enough for a loaded 2-core machine, short enough that a broken broker fails the test. */
    static final Duration WAIT = Duration.ofSeconds(30);

    private Clients() {
    }

    static KafkaProducer<String, String> transactionalProducer(EmbeddedKafka kafka, String transactionalId) {
        KafkaProducer<String, String> producer = new KafkaProducer<>(Map.of(
                ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, kafka.bootstrapServers(),
                ProducerConfig.TRANSACTIONAL_ID_CONFIG, transactionalId,
                ProducerConfig.MAX_BLOCK_MS_CONFIG, (int) WAIT.toMillis(),
                ProducerConfig.DELIVERY_TIMEOUT_MS_CONFIG, (int) WAIT.toMillis(),
                ProducerConfig.REQUEST_TIMEOUT_MS_CONFIG, (int) WAIT.toMillis() / 2,
                ProducerConfig.LINGER_MS_CONFIG, 0),
                new StringSerializer(), new StringSerializer());
        try {
            producer.initTransactions();
        } catch (RuntimeException e) {
            producer.close(Duration.ZERO);
            throw e;
        }
        return producer;
    }

    /** Sends the values in one transaction and commits it. */
    static void commit(KafkaProducer<String, String> producer, String topic, String... values) {
        producer.beginTransaction();
        for (String value : values) {
            producer.send(new ProducerRecord<>(topic, value, value));
        }
        producer.commitTransaction();
    }

    /** Sends the values in one transaction and aborts it after they reached the broker. */
    static void abort(KafkaProducer<String, String> producer, String topic, String... values) {
        producer.beginTransaction();
        for (String value : values) {
            producer.send(new ProducerRecord<>(topic, value, value));
        }
        producer.flush();
        producer.abortTransaction();
    }

    /**
     * Reads partition 0 of {@code topic} from the beginning until a value matches {@code last},
     * and returns the values read; fails if none matches within {@link #WAIT}.
     */
    static List<String> readUntil(EmbeddedKafka kafka, String topic, IsolationLevel isolation, Predicate<String> last) {
        TopicPartition partition = new TopicPartition(topic, 0);
        List<String> values = new ArrayList<>();
        try (KafkaConsumer<String, String> consumer = new KafkaConsumer<>(Map.of(
                ConsumerConfig.BOOTSTRAP_SERVERS_CONFIG, kafka.bootstrapServers(),
                ConsumerConfig.ISOLATION_LEVEL_CONFIG, isolation.toString().toLowerCase(java.util.Locale.ROOT),
                ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, false,
                ConsumerConfig.DEFAULT_API_TIMEOUT_MS_CONFIG, (int) WAIT.toMillis()),
                new StringDeserializer(), new StringDeserializer())) {
            consumer.assign(List.of(partition));
            consumer.seekToBeginning(List.of(partition));
            long deadline = System.nanoTime() + WAIT.toNanos();
            while (System.nanoTime() < deadline) {
                for (ConsumerRecord<String, String> record : consumer.poll(Duration.ofMillis(200))) {
                    values.add(record.value());
                    if (last.test(record.value())) {
                        return values;
                    }
                }
            }
        }
        throw new AssertionError("no record matching the end marker on " + topic + " within " + WAIT
                + "; read " + values);
    }
}
