package dev.interim.daemon;

import dev.interim.signal.DeliveryLog;
import dev.interim.stream.StreamSettings;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.time.Instant;
import java.util.Properties;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.ByteArraySerializer;

/**
 * The decisions whose kill webhook was delivered, kept in a compacted topic (key: decision id) so
 * that a restarted daemon neither calls the webhook again for them nor forgets the ones it never
 * delivered. Loaded once at start; each delivery is written and flushed before it counts.
 */
final class KafkaDeliveryLog implements DeliveryLog, AutoCloseable {
    private final String topic;
    private final Set<String> delivered = ConcurrentHashMap.newKeySet();
    private final KafkaProducer<byte[], byte[]> producer;

    KafkaDeliveryLog(StreamSettings settings, String topic) {
        this.topic = topic;
        dev.interim.stream.StateReader.readAll(settings, topic, null, (key, value) -> {
            if (key != null && value != null) {
                delivered.add(new String(key, StandardCharsets.UTF_8));
            }
        });
        Properties p = new Properties();
        p.putAll(settings.clientProperties());
        p.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, settings.bootstrapServers());
        p.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
        p.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
        p.put(ProducerConfig.ACKS_CONFIG, "all");
        this.producer = new KafkaProducer<>(p);
    }

    @Override
    public boolean delivered(String decisionId) {
        return delivered.contains(decisionId);
    }

    @Override
    public void recordDelivered(String decisionId, Instant at) {
        delivered.add(decisionId);
        try {
            producer.send(new ProducerRecord<>(topic, decisionId.getBytes(StandardCharsets.UTF_8),
                    at.toString().getBytes(StandardCharsets.UTF_8))).get(30, TimeUnit.SECONDS);
        } catch (Exception e) {
            throw new IllegalStateException("could not record the delivery of " + decisionId + ": " + e.getMessage(), e);
        }
    }

    int size() {
        return delivered.size();
    }

    @Override
    public void close() {
        producer.close(Duration.ofSeconds(5));
    }
}
