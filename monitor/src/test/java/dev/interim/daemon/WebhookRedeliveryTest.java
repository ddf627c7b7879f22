package dev.interim.daemon;

import static org.assertj.core.api.Assertions.assertThat;

import com.sun.net.httpserver.HttpServer;
import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.experiment.DecisionRecord;
import dev.interim.signal.SigningKey;
import dev.interim.signal.WebhookSignature;
import java.net.InetSocketAddress;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.Base64;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import java.util.concurrent.CopyOnWriteArrayList;
import java.util.concurrent.atomic.AtomicInteger;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The kill webhook's receiver is down when the kill is decided: the daemon retries up to its bound
 * and gives up, the decision stays on the decisions topic, and after a restart the undelivered kill
 * is delivered — once, with the same decision id and a valid signature; a third start delivers
 * nothing more. An invented rollout; the receiver verifies signatures as a real one would.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class WebhookRedeliveryTest {
    static final String CONFIG = """
            kafka:
              input_topics: [orbit.events]
              commit_interval: 200ms
            events:
              experiment: /exp
              arm: /arm
            http:
              port: 0
            webhook:
              url: %s
              signing_key_env: TEST_WEBHOOK_KEY
              timeout: 2s
              max_attempts: 3
              initial_backoff: 100ms
            experiments:
              - id: orbit-canary
                control: old
                treatments: [new]
                look_every: 1s
                min_per_arm: 200
                dry_run: false
                metrics:
                  - name: crashes
                    kind: event-rate
                    role: guardrail
                    worse: higher
                    field: /crashed
                    counts_if: {equals: true}
                    max_per_arm: 30000
                    action: kill
            """;

    @Test
    @Timeout(240)
    void anUndeliveredKillIsDeliveredOnceAfterARestart(@TempDir Path dir) throws Exception {
        byte[] key = new byte[32];
        new SplittableRandom(9).nextBytes(key);
        String secretText = SigningKey.PREFIX + Base64.getEncoder().encodeToString(key);
        SigningKey secret = SigningKey.parse(secretText);
        AtomicInteger status = new AtomicInteger(503);
        AtomicInteger refused = new AtomicInteger();
        List<String> accepted = new CopyOnWriteArrayList<>();
        HttpServer receiver = HttpServer.create(new InetSocketAddress("127.0.0.1", 0), 0);
        receiver.createContext("/kill", exchange -> {
            byte[] body = exchange.getRequestBody().readAllBytes();
            boolean valid = WebhookSignature.verify(secret, exchange.getRequestHeaders(), body, Instant.now(),
                    Duration.ofMinutes(5)).valid();
            int answer = valid ? status.get() : 401;
            if (answer == 200) {
                accepted.add(exchange.getRequestHeaders().getFirst(WebhookSignature.ID));
            } else {
                refused.incrementAndGet();
            }
            exchange.sendResponseHeaders(answer, -1);
            exchange.close();
        });
        receiver.start();
        try {
            String yaml = CONFIG.formatted("http://127.0.0.1:" + receiver.getAddress().getPort() + "/kill");
            InterimConfig config = ConfigLoader.parse(yaml, Map.of("TEST_WEBHOOK_KEY", secretText));
            Path data = dir.resolve("kafka");
            List<DecisionRecord> decided = new CopyOnWriteArrayList<>();
            try (Daemon daemon = Daemon.start(config, new Daemon.Options(data, null, decided::add))) {
                try (KafkaProducer<String, String> producer = DaemonIntegrationTest.producer(daemon.bootstrapServers())) {
                    SplittableRandom random = new SplittableRandom(31);
                    for (int batch = 0; batch < 30 && decided.stream().noneMatch(DecisionRecord::killRequested); batch++) {
                        for (int i = 0; i < 500; i++) {
                            for (String arm : new String[] {"old", "new"}) {
                                boolean crashed = random.nextDouble() < (arm.equals("new") ? 0.05 : 0.01);
                                producer.send(new ProducerRecord<>("orbit.events", "k" + i,
                                        "{\"exp\":\"orbit-canary\",\"arm\":\"" + arm + "\",\"crashed\":" + crashed + "}"));
                            }
                        }
                        producer.flush();
                        Thread.sleep(500);
                    }
                }
                waitFor(() -> refused.get() >= 3, Duration.ofSeconds(60));
                Thread.sleep(1000);
            }
            assertThat(decided).filteredOn(DecisionRecord::killRequested).hasSize(1);
            String id = decided.stream().filter(DecisionRecord::killRequested).findFirst().orElseThrow().decisionId();
            assertThat(refused.get()).as("attempts while the receiver was down (max_attempts)").isEqualTo(3);
            assertThat(accepted).isEmpty();

            status.set(200);
            try (Daemon daemon = Daemon.start(config, new Daemon.Options(data, null, null))) {
                waitFor(() -> !accepted.isEmpty(), Duration.ofSeconds(60));
                Thread.sleep(2000);
            }
            assertThat(accepted).containsExactly(id);

            try (Daemon daemon = Daemon.start(config, new Daemon.Options(data, null, null))) {
                Thread.sleep(4000);
            }
            assertThat(accepted).as("a delivered kill is never sent again").containsExactly(id);
        } finally {
            receiver.stop(0);
        }
    }

    private static void waitFor(java.util.function.BooleanSupplier condition, Duration limit) throws InterruptedException {
        long deadline = System.nanoTime() + limit.toNanos();
        while (!condition.getAsBoolean() && System.nanoTime() < deadline) {
            Thread.sleep(100);
        }
    }
}
