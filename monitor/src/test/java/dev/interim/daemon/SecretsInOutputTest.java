package dev.interim.daemon;

import static org.assertj.core.api.Assertions.assertThat;

import com.sun.net.httpserver.HttpServer;
import dev.interim.embedded.EmbeddedKafka;
import dev.interim.signal.SigningKey;
import java.net.InetSocketAddress;
import java.net.ServerSocket;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Base64;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The daemon's doors: run as a separate process with a webhook signing key, an admin token and a
 * Kafka credential in its environment, at DEBUG logging, it decides a kill, calls the webhook,
 * answers the API and refuses a wrong token — and none of the three secrets appears in its output,
 * its meters, its API answers or its error messages. Its HTTP endpoint listens on 127.0.0.1 only.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class SecretsInOutputTest {
    private final HttpClient http = HttpClient.newHttpClient();

    @Test
    @Timeout(240)
    void noSecretLeavesTheDaemon(@TempDir Path dir) throws Exception {
        byte[] key = new byte[32];
        new SplittableRandom(3).nextBytes(key);
        String webhookKey = SigningKey.PREFIX + Base64.getEncoder().encodeToString(key);
        String adminToken = "admin-9c1f2e7b44a0d3e5f6";
        String kafkaPassword = "kafka-pw-5e8d1c7a2b9f";
        AtomicInteger calls = new AtomicInteger();
        HttpServer receiver = HttpServer.create(new InetSocketAddress("127.0.0.1", 0), 0);
        receiver.createContext("/kill", exchange -> {
            exchange.getRequestBody().readAllBytes();
            calls.incrementAndGet();
            exchange.sendResponseHeaders(204, -1);
            exchange.close();
        });
        receiver.start();
        Process daemon = null;
        List<String> seen = new ArrayList<>();
        try (EmbeddedKafka broker = EmbeddedKafka.start(dir.resolve("broker"))) {
            int port;
            try (ServerSocket s = new ServerSocket(0)) {
                port = s.getLocalPort();
            }
            Path config = dir.resolve("interim.yaml");
            Files.writeString(config, """
                    kafka:
                      bootstrap_servers: [%s]
                      properties:
                        ssl.key.password: ${KAFKA_KEY_PASSWORD}
                      input_topics: [vault.events]
                      commit_interval: 300ms
                    events:
                      experiment: /exp
                      arm: /arm
                    http:
                      port: %d
                      admin_token_env: INTERIM_ADMIN_TOKEN
                    webhook:
                      url: http://127.0.0.1:%d/kill
                      signing_key_env: INTERIM_WEBHOOK_KEY
                      max_attempts: 2
                      initial_backoff: 100ms
                    experiments:
                      - id: vault-canary
                        control: old
                        treatments: [new]
                        look_every: 1s
                        min_per_arm: 200
                        dry_run: false
                        metrics:
                          - name: failures
                            kind: event-rate
                            role: guardrail
                            worse: higher
                            field: /failed
                            counts_if: {equals: true}
                            max_per_arm: 20000
                            action: kill
                    """.formatted(broker.bootstrapServers(), port, receiver.getAddress().getPort()));
            daemon = InterimProcess.run(dir, "daemon", Files.readString(config), Map.of("INTERIM_WEBHOOK_KEY", webhookKey,
                    "INTERIM_ADMIN_TOKEN", adminToken, "KAFKA_KEY_PASSWORD", kafkaPassword), "-Xmx384m",
                    "-Dinterim.log.level=DEBUG");
            Path log = InterimProcess.log(dir, "daemon");

            try (KafkaProducer<String, String> producer = DaemonIntegrationTest.producer(broker.bootstrapServers())) {
                SplittableRandom random = new SplittableRandom(12);
                for (int batch = 0; batch < 40 && calls.get() == 0; batch++) {
                    for (int i = 0; i < 500; i++) {
                        for (String arm : new String[] {"old", "new"}) {
                            boolean failed = random.nextDouble() < (arm.equals("new") ? 0.06 : 0.01);
                            producer.send(new ProducerRecord<>("vault.events", "k" + i,
                                    "{\"exp\":\"vault-canary\",\"arm\":\"" + arm + "\",\"failed\":" + failed + "}"));
                        }
                    }
                    producer.flush();
                    Thread.sleep(500);
                }
            }
            assertThat(calls.get()).as("the kill webhook was called").isPositive();
            String base = "http://127.0.0.1:" + port;
            seen.add(get(base + "/metrics"));
            seen.add(get(base + "/api/experiments"));
            seen.add(get(base + "/api/experiments/vault-canary"));
            seen.add(post(base + "/api/experiments/vault-canary/hold", "wrong-" + adminToken.substring(3)));
            seen.add(post(base + "/api/experiments/vault-canary/hold", adminToken));
            seen.add(post(base + "/api/experiments/vault-canary/resume", adminToken));
            daemon.destroy();
            assertThat(daemon.waitFor(60, TimeUnit.SECONDS)).isTrue();
            seen.add(Files.readString(log));
        } finally {
            if (daemon != null) {
                daemon.destroyForcibly();
            }
            receiver.stop(0);
        }
        String everything = String.join("\n", seen);
        assertThat(everything).contains("vault-canary").contains("decision stop-harm");
        String keyBody = webhookKey.substring(SigningKey.PREFIX.length());
        assertThat(everything).doesNotContain(keyBody).doesNotContain(adminToken).doesNotContain(kafkaPassword);
        // The endpoint listens on the loopback address only.
        assertThat(String.join("\n", seen)).contains("HTTP endpoint listening on http://127.0.0.1:");
    }

    private String get(String url) throws Exception {
        return http.send(HttpRequest.newBuilder(URI.create(url)).GET().timeout(Duration.ofSeconds(30)).build(),
                HttpResponse.BodyHandlers.ofString()).body();
    }

    private String post(String url, String token) throws Exception {
        HttpResponse<String> r = http.send(HttpRequest.newBuilder(URI.create(url)).header("Authorization", "Bearer " + token)
                .POST(HttpRequest.BodyPublishers.ofString("{\"reason\":\"drill\"}")).timeout(Duration.ofSeconds(40)).build(),
                HttpResponse.BodyHandlers.ofString());
        return r.statusCode() + " " + r.body();
    }
}
