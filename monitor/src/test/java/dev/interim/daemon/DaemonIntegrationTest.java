package dev.interim.daemon;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.experiment.DecisionRecord;
import dev.interim.stream.TallyStage;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.SplittableRandom;
import java.util.concurrent.CopyOnWriteArrayList;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.StringSerializer;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The daemon end to end on a real in-process Kafka broker (no mocked Kafka): events in, decisions
 * out. An invented canary of a fictional parcel-routing service with three arms: the current
 * router, a healthy candidate, and one that triples the error rate and sends one request in ten to a
 * slow path. The harmful arm must be stopped for harm on the error guardrail and on the p95 latency
 * guardrail (its histograms summed across the input partitions), with its records on the decisions
 * topic; the healthy one not;
 * unreadable events must land in the dead-letter topic with their reason and be counted.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class DaemonIntegrationTest {
    static final String CONFIG = """
            kafka:
              input_topics: [routing.events]
              commit_interval: 200ms
            events:
              experiment: /exp
              arm: /arm
            http:
              port: 0
            experiments:
              - id: router-canary
                control: current
                treatments: [steady, flaky]
                look_every: 1s
                min_per_arm: 200
                dry_run: true
                metrics:
                  - name: failures
                    kind: event-rate
                    role: guardrail
                    worse: higher
                    field: /status
                    counts_if: {at_least: 500}
                    alpha: 0.05
                    max_per_arm: 40000
                    action: page
                  - name: latency
                    kind: event-mean
                    role: guardrail
                    worse: higher
                    field: /ms
                    max_per_arm: 40000
                  - name: latency-p95
                    kind: event-quantile
                    quantile: 0.95
                    role: guardrail
                    worse: higher
                    field: /ms
                    max_per_arm: 40000
              - id: lopsided
                control: current
                treatments: [next]
                look_every: 1s
                min_per_arm: 200
                metrics:
                  - name: failures
                    kind: event-rate
                    role: guardrail
                    worse: higher
                    field: /status
                    counts_if: {at_least: 500}
                    max_per_arm: 40000
            """ + nullExperiments();

    /** Three A/A experiments (no true difference), each drawn from its own generator. */
    static String nullExperiments() {
        StringBuilder b = new StringBuilder();
        for (int i = 1; i <= 3; i++) {
            b.append("""
                      - id: null-%d
                        control: current
                        treatments: [same]
                        look_every: 1s
                        min_per_arm: 200
                        metrics:
                          - name: failures
                            kind: event-rate
                            role: guardrail
                            worse: higher
                            field: /status
                            counts_if: {at_least: 500}
                            max_per_arm: 40000
                    """.formatted(i));
        }
        return b.toString();
    }

    @Test
    @Timeout(180)
    void aHarmfulArmIsStoppedAndAHealthyOneIsNot(@TempDir Path dir) throws Exception {
        InterimConfig config = ConfigLoader.parseWithoutSecrets(CONFIG);
        List<DecisionRecord> seen = new CopyOnWriteArrayList<>();
        try (Daemon daemon = Daemon.start(config, new Daemon.Options(dir.resolve("kafka"), null, seen::add))) {
            SplittableRandom random = new SplittableRandom(2026);
            Map<String, Double> errorRate = Map.of("current", 0.01, "steady", 0.01, "flaky", 0.03);
            try (KafkaProducer<String, String> producer = producer(daemon.bootstrapServers())) {
                for (int batch = 0; batch < 40 && !(stopped(seen, "flaky", "failures")
                        && stopped(seen, "flaky", "latency-p95")); batch++) {
                    for (int i = 0; i < 600; i++) {
                        for (String arm : errorRate.keySet()) {
                            int status = random.nextDouble() < errorRate.get(arm) ? 503 : 200;
                            double ms = 80 + 30 * random.nextDouble()
                                    + (arm.equals("flaky") && random.nextDouble() < 0.1 ? 200 : 0);
                            producer.send(new ProducerRecord<>("routing.events", "u" + i,
                                    "{\"exp\":\"router-canary\",\"arm\":\"" + arm + "\",\"status\":" + status + ",\"ms\":" + ms + "}"));
                        }
                    }
                    // A broken split: the 'next' arm gets a third of the traffic it should.
                    for (int i = 0; i < 600; i++) {
                        String arm = i % 4 == 0 ? "next" : "current";
                        producer.send(new ProducerRecord<>("routing.events", "l" + i,
                                "{\"exp\":\"lopsided\",\"arm\":\"" + arm + "\",\"status\":200}"));
                    }
                    // Null experiments: both arms the same.
                    for (int k = 1; k <= 3; k++) {
                        for (int i = 0; i < 600; i++) {
                            for (String arm : new String[] {"current", "same"}) {
                                int status = random.nextDouble() < 0.02 ? 500 : 200;
                                producer.send(new ProducerRecord<>("routing.events", "n" + i,
                                        "{\"exp\":\"null-" + k + "\",\"arm\":\"" + arm + "\",\"status\":" + status + "}"));
                            }
                        }
                    }
                    producer.send(new ProducerRecord<>("routing.events", "x", "this is not json"));
                    producer.send(new ProducerRecord<>("routing.events", "x", "{\"exp\":\"router-canary\",\"arm\":\"nobody\"}"));
                    producer.flush();
                    Thread.sleep(700);
                }
            }
            long deadline = System.nanoTime() + Duration.ofSeconds(60).toNanos();
            while (!(stopped(seen, "flaky", "failures") && stopped(seen, "flaky", "latency-p95"))
                    && System.nanoTime() < deadline) {
                Thread.sleep(200);
            }
            assertThat(seen).filteredOn(d -> d.arm().equals("flaky") && d.metric().equals("failures"))
                    .extracting(DecisionRecord::decision).contains("stop-harm");
            // The slow path moves flaky's p95 from about 108.5 ms to above 280 ms.
            assertThat(seen).filteredOn(d -> d.arm().equals("flaky") && d.metric().equals("latency-p95"))
                    .extracting(DecisionRecord::decision).contains("stop-harm");
            assertThat(seen).filteredOn(d -> d.arm().equals("steady")).extracting(DecisionRecord::decision)
                    .doesNotContain("stop-harm");
            // Seeded null runs: no stop at all (each false stop has probability below 0.05).
            assertThat(seen).filteredOn(d -> d.experiment().startsWith("null-")).extracting(DecisionRecord::decision)
                    .doesNotContain("stop-harm", "stop-benefit");
            // The broken split holds the experiment.
            assertThat(seen).filteredOn(d -> d.experiment().equals("lopsided")).extracting(DecisionRecord::decision)
                    .contains("held");

            List<JsonNode> published = readAll(daemon.bootstrapServers(), "interim.decisions");
            assertThat(published).anySatisfy(n -> {
                assertThat(n.path("arm").asText()).isEqualTo("flaky");
                assertThat(n.path("decision").asText()).isEqualTo("stop-harm");
                assertThat(n.path("dry_run").asBoolean()).isTrue();
            });
            List<String> reasons = deadLetterReasons(daemon.bootstrapServers(), "interim.dead-letters");
            assertThat(reasons).contains("not-json", "unknown-arm");
            String scrape = daemon.meters().scrape();
            assertThat(scrape).contains("interim_events_rejected_total{reason=\"not-json\"}");
            assertThat(scrape).contains("router-canary");
            // The decision gauge of the stopped comparison reads 1 (stop-harm), of the healthy one 0.
            assertThat(scrape).containsPattern("interim_decision\\{[^}]*arm=\"flaky\"[^}]*metric=\"failures\"[^}]*\\} 1(\\.0)?\\b");
            assertThat(scrape).containsPattern("interim_decision\\{[^}]*arm=\"steady\"[^}]*metric=\"failures\"[^}]*\\} 0(\\.0)?\\b");
        }
    }

    static boolean stopped(List<DecisionRecord> seen, String arm) {
        return seen.stream().anyMatch(d -> d.arm().equals(arm) && d.decision().equals("stop-harm"));
    }

    static boolean stopped(List<DecisionRecord> seen, String arm, String metric) {
        return seen.stream().anyMatch(d -> d.arm().equals(arm) && d.metric().equals(metric)
                && d.decision().equals("stop-harm"));
    }

    static KafkaProducer<String, String> producer(String bootstrap) {
        Properties p = new Properties();
        p.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrap);
        p.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, StringSerializer.class.getName());
        p.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, StringSerializer.class.getName());
        p.put(ProducerConfig.LINGER_MS_CONFIG, 5);
        // Test writers are plain (not idempotent) producers: a producer id handed out again by a
        // restarted embedded broker must not turn the test's own writes into sequence errors.
        p.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, false);
        p.put(ProducerConfig.ACKS_CONFIG, "all");
        p.put(ProducerConfig.MAX_IN_FLIGHT_REQUESTS_PER_CONNECTION, 1);
        return new KafkaProducer<>(p);
    }

    static List<ConsumerRecord<byte[], byte[]>> records(String bootstrap, String topic) {
        Properties p = new Properties();
        p.put(ConsumerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrap);
        p.put(ConsumerConfig.GROUP_ID_CONFIG, "test-reader-" + System.nanoTime());
        p.put(ConsumerConfig.AUTO_OFFSET_RESET_CONFIG, "earliest");
        p.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
        p.put(ConsumerConfig.KEY_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
        p.put(ConsumerConfig.VALUE_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
        List<ConsumerRecord<byte[], byte[]>> out = new ArrayList<>();
        try (KafkaConsumer<byte[], byte[]> c = new KafkaConsumer<>(p)) {
            c.subscribe(List.of(topic));
            long deadline = System.nanoTime() + Duration.ofSeconds(15).toNanos();
            int quiet = 0;
            while (System.nanoTime() < deadline && quiet < 5) {
                var batch = c.poll(Duration.ofMillis(500));
                batch.forEach(out::add);
                quiet = batch.isEmpty() && !out.isEmpty() ? quiet + 1 : 0;
            }
        }
        return out;
    }

    static List<JsonNode> readAll(String bootstrap, String topic) throws Exception {
        ObjectMapper json = new ObjectMapper();
        List<JsonNode> out = new ArrayList<>();
        for (var r : records(bootstrap, topic)) {
            out.add(json.readTree(r.value()));
        }
        return out;
    }

    static List<String> deadLetterReasons(String bootstrap, String topic) {
        List<String> out = new ArrayList<>();
        for (var r : records(bootstrap, topic)) {
            var h = r.headers().lastHeader(TallyStage.REASON_HEADER);
            out.add(h == null ? "" : new String(h.value(), StandardCharsets.UTF_8));
        }
        return out;
    }
}
