package dev.interim.embedded;

import java.nio.file.Path;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;

/**
 * Run in a child JVM by {@link EmbeddedKafkaCrashTest}: starts a broker, commits one transaction,
 * leaves a second one open, prints the broker's address and halts the JVM as a kill -9 would: no
 * shutdown hook, no clean shutdown of the broker.
 */
final class CrashingBroker {
    static final String TOPIC = "crash";
    static final String TRANSACTIONAL_ID = "crash-tx";
    static final String ADDRESS_LINE = "bootstrap.servers=";

    private CrashingBroker() {
    }

    public static void main(String[] args) {
        EmbeddedKafka kafka = EmbeddedKafka.start(Path.of(args[0]));
        kafka.createTopics(Topic.deleting(TOPIC, 1));
        KafkaProducer<String, String> producer = Clients.transactionalProducer(kafka, TRANSACTIONAL_ID);
        Clients.commit(producer, TOPIC, "committed-before-crash");
        producer.beginTransaction();
        producer.send(new ProducerRecord<>(TOPIC, "open-at-crash", "open-at-crash"));
        producer.flush();
        System.out.println(ADDRESS_LINE + kafka.bootstrapServers());
        System.out.flush();
        Runtime.getRuntime().halt(137);
    }
}
