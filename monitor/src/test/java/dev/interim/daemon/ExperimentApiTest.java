package dev.interim.daemon;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Path;
import java.time.Duration;
import java.util.Map;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The JSON API and the operator actions on a running daemon (real broker): the experiments with
 * their state, one experiment's look history, and hold/resume behind a bearer token. An invented
 * experiment; no statistical values here.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class ExperimentApiTest {
    static final String TOKEN = "op-token-7f3a9c21d4e5b6a8";
    static final String CONFIG = """
            kafka:
              input_topics: [atlas.events]
              commit_interval: 200ms
            events:
              experiment: /exp
              arm: /arm
            http:
              port: 0
              admin_token_env: TEST_ADMIN_TOKEN
            experiments:
              - id: atlas-tiles
                control: old
                treatments: [new]
                look_every: 1s
                min_per_arm: 100
                metrics:
                  - name: tile-errors
                    kind: event-rate
                    role: guardrail
                    worse: higher
                    field: /ok
                    counts_if: {equals: false}
                    max_per_arm: 100000
                    action: page
            """;
    private final HttpClient client = HttpClient.newHttpClient();
    private final ObjectMapper json = new ObjectMapper();

    @Test
    @Timeout(120)
    void theApiShowsTheExperimentsAndOperatorsCanHoldAndResume(@TempDir Path dir) throws Exception {
        InterimConfig config = ConfigLoader.parse(CONFIG, Map.of("TEST_ADMIN_TOKEN", TOKEN));
        try (Daemon daemon = Daemon.start(config, new Daemon.Options(dir.resolve("kafka"), null, null))) {
            try (KafkaProducer<String, String> producer = DaemonIntegrationTest.producer(daemon.bootstrapServers())) {
                for (int i = 0; i < 2000; i++) {
                    for (String arm : new String[] {"old", "new"}) {
                        producer.send(new ProducerRecord<>("atlas.events", "k" + i,
                                "{\"exp\":\"atlas-tiles\",\"arm\":\"" + arm + "\",\"ok\":" + (i % 50 != 0) + "}"));
                    }
                }
            }
            String base = "http://127.0.0.1:" + daemon.httpPort();
            JsonNode one = null;
            long deadline = System.nanoTime() + Duration.ofSeconds(60).toNanos();
            while (System.nanoTime() < deadline) {
                one = json.readTree(get(base + "/api/experiments/atlas-tiles").body());
                if (one.path("comparisons").path(0).path("looks").size() > 0) {
                    break;
                }
                Thread.sleep(300);
            }
            JsonNode comparison = one.path("comparisons").path(0);
            assertThat(comparison.path("arm").asText()).isEqualTo("new");
            assertThat(comparison.path("decision").asText()).isEqualTo("continue");
            JsonNode look = comparison.path("looks").path(0);
            assertThat(look.path("fraction").asDouble()).isPositive();
            assertThat(look.has("statistic")).isTrue();
            assertThat(look.path("estimate").has("value")).isTrue();

            HttpResponse<String> list = get(base + "/api/experiments");
            assertThat(list.statusCode()).isEqualTo(200);
            assertThat(json.readTree(list.body()).path(0).path("id").asText()).isEqualTo("atlas-tiles");
            assertThat(get(base + "/api/experiments/nope").statusCode()).isEqualTo(404);

            assertThat(post(base + "/api/experiments/atlas-tiles/hold", null).statusCode()).isEqualTo(401);
            assertThat(post(base + "/api/experiments/atlas-tiles/hold", "not-the-token").statusCode()).isEqualTo(401);
            HttpResponse<String> held = post(base + "/api/experiments/atlas-tiles/hold", TOKEN);
            assertThat(held.statusCode()).isEqualTo(200);
            assertThat(json.readTree(held.body()).path(0).path("decision").asText()).isEqualTo("held");
            assertThat(json.readTree(get(base + "/api/experiments/atlas-tiles").body()).path("held").asBoolean()).isTrue();
            HttpResponse<String> resumed = post(base + "/api/experiments/atlas-tiles/resume", TOKEN);
            assertThat(resumed.statusCode()).isEqualTo(200);
            assertThat(json.readTree(resumed.body()).path(0).path("decision").asText()).isEqualTo("continue");
            HttpResponse<String> unknownArm = post(base + "/api/experiments/atlas-tiles/arms/nobody/stop", TOKEN);
            assertThat(unknownArm.statusCode()).isEqualTo(409);
            assertThat(unknownArm.body()).contains("no treatment arm 'nobody'");
            HttpResponse<String> stopped = post(base + "/api/experiments/atlas-tiles/arms/new/stop", TOKEN);
            assertThat(stopped.statusCode()).isEqualTo(200);
            assertThat(json.readTree(stopped.body()).path(0).path("decision").asText()).isEqualTo("stop-harm");
            assertThat(daemon.meters().scrape()).containsPattern("interim_paging\\{[^}]*\\} 1(\\.0)?\\b");
            assertThat(post(base + "/api/experiments/atlas-tiles/acknowledge", TOKEN).statusCode()).isEqualTo(200);
            assertThat(daemon.meters().scrape()).containsPattern("interim_paging\\{[^}]*\\} 0(\\.0)?\\b");
            assertThat(json.readTree(get(base + "/api/experiments/atlas-tiles").body()).path("comparisons").path(0)
                    .path("decision").asText()).isEqualTo("stop-harm");
            assertThat(held.body() + resumed.body() + daemon.meters().scrape()).doesNotContain(TOKEN);
        }
    }

    private HttpResponse<String> get(String url) throws Exception {
        return client.send(HttpRequest.newBuilder(URI.create(url)).GET().build(), HttpResponse.BodyHandlers.ofString());
    }

    private HttpResponse<String> post(String url, String token) throws Exception {
        HttpRequest.Builder b = HttpRequest.newBuilder(URI.create(url))
                .POST(HttpRequest.BodyPublishers.ofString("{\"reason\":\"incident drill\"}"))
                .header("Content-Type", "application/json");
        if (token != null) {
            b.header("Authorization", "Bearer " + token);
        }
        return client.send(b.build(), HttpResponse.BodyHandlers.ofString());
    }
}
