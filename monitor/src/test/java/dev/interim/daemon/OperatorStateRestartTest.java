package dev.interim.daemon;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.interim.dashboard.DaemonClient;
import dev.interim.embedded.EmbeddedKafka;
import dev.interim.experiment.ExperimentView;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;
import java.util.function.Predicate;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * What operators set stays set: the daemon runs as a separate OS process against a broker in this
 * JVM, and an operator holds an experiment, the daemon is killed with SIGKILL and started again — the
 * experiment is still held, its look history is complete, and nothing was published that nobody did
 * (regression: a restart used to undo the hold and publish a resume at look 0). Then resume works
 * from the last look; a stop for harm pages, an acknowledgement clears the page and is published,
 * and after a SIGTERM and a start the page stays cleared. A fresh state of the same experiment is a
 * new run: its decision ids differ from the first run's, while a restart keeps the run.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class OperatorStateRestartTest {
    static final String EXPERIMENT = "tamsel-rollout";
    static final String TOKEN = "tamsel-operator-token-5521";

    private final ObjectMapper json = new ObjectMapper();
    private final HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(2)).build();

    @Test
    @Timeout(600)
    void holdsAcknowledgementsAndLookHistorySurviveRestarts(@TempDir Path dir) throws Exception {
        try (EmbeddedKafka broker = EmbeddedKafka.start(dir.resolve("broker"))) {
            String bootstrap = broker.bootstrapServers();
            Daemon daemon = new Daemon(bootstrap, dir.resolve("first"), "tamsel.state", "tamsel", "tamsel.decisions");
            daemon.start();
            produce(bootstrap, 0, 6000, 0.01, 1);
            JsonNode before = waitFor(daemon, e -> looks(e) >= 3, "three looks");

            // An operator holds the experiment, and the daemon dies without a last commit.
            JsonNode held = daemon.post("hold", "{\"reason\": \"incident 42\"}");
            assertThat(held.path(0).path("decision").asText()).isEqualTo("held");
            JsonNode atHold = waitFor(daemon, e -> e.path("held").asBoolean(), "the hold");
            String run = atHold.path("run").asText();
            assertThat(run).isNotEmpty();
            int looksAtHold = looks(atHold);
            int lastLook = atHold.path("comparisons").path(0).path("last").path("look").asInt();
            assertThat(lastLook).isPositive();
            daemon.kill();
            daemon.start();

            JsonNode after = waitFor(daemon, e -> looks(e) > 0, "the restarted daemon to own the experiment");
            assertThat(after.path("held").asBoolean()).as("still held after SIGKILL").isTrue();
            assertThat(after.path("hold_reason").asText()).isEqualTo("incident 42");
            assertThat(after.path("run").asText()).as("a restart keeps the run").isEqualTo(run);
            assertThat(looks(after)).as("the look history is complete").isEqualTo(looksAtHold);
            assertThat(after.path("comparisons").path(0).path("last").path("look").asInt()).isEqualTo(lastLook);
            ExperimentView report = DaemonClient.at(daemon.address()).experiment(EXPERIMENT);
            assertThat(report.comparisons().get(0).looks()).as("what the report draws").hasSize(looksAtHold);
            Thread.sleep(4000);   // several looks are due meanwhile: none may write a record
            assertThat(decisions(bootstrap, "tamsel.decisions")).extracting(r -> r.path("decision").asText())
                    .as("a restart publishes nothing").containsExactly("held");

            // Resume picks up from the last look before the hold.
            JsonNode resumed = daemon.post("resume", "");
            assertThat(resumed).hasSize(1);
            assertThat(resumed.path(0).path("previous").asText()).isEqualTo("held");
            assertThat(resumed.path(0).path("decision").asText()).isEqualTo("continue");
            assertThat(resumed.path(0).path("look").asInt()).isEqualTo(lastLook);
            assertThat(resumed.path(0).path("fraction").isNumber()).isTrue();

            // A harmful build is stopped for harm and pages; the acknowledgement clears the page.
            produce(bootstrap, 6000, 30_000, 0.10, 2);
            waitFor(daemon, e -> "stop-harm".equals(e.path("comparisons").path(0).path("decision").asText()), "the stop");
            assertThat(daemon.paging()).isEqualTo(1.0);
            daemon.post("acknowledge", "");
            assertThat(daemon.paging()).isEqualTo(0.0);
            List<JsonNode> acknowledgements = decisions(bootstrap, "tamsel.decisions").stream()
                    .filter(r -> r.path("type").asText().equals("interim.acknowledgement")).toList();
            assertThat(acknowledgements).hasSize(1);
            assertThat(acknowledgements.get(0).path("stops").path(0).path("arm").asText()).isEqualTo("skiff");
            int looksAtStop = looks(waitFor(daemon, e -> true, "the experiment"));

            daemon.stop();   // SIGTERM
            daemon.start();
            JsonNode again = waitFor(daemon, e -> looks(e) > 0, "the restarted daemon to own the experiment");
            assertThat(again.path("comparisons").path(0).path("decision").asText()).isEqualTo("stop-harm");
            assertThat(looks(again)).isEqualTo(looksAtStop);
            Thread.sleep(2000);
            assertThat(daemon.paging()).as("an acknowledged stop does not page again after a restart").isEqualTo(0.0);
            assertThat(again.path("run").asText()).isEqualTo(run);
            daemon.kill();
            String firstStop = stopId(decisions(bootstrap, "tamsel.decisions"));
            checkChain(decisions(bootstrap, "tamsel.decisions"));

            // The same experiment on a fresh state (another state prefix): a new run, new decision ids.
            Daemon fresh = new Daemon(bootstrap, dir.resolve("second"), "tamsel.fresh", "tamsel-fresh", "tamsel.decisions.fresh");
            fresh.start();
            JsonNode rerun = waitFor(fresh, e -> "stop-harm".equals(e.path("comparisons").path(0).path("decision").asText()),
                    "the rerun's stop");
            assertThat(rerun.path("run").asText()).isNotEmpty().isNotEqualTo(run);
            fresh.kill();
            String secondStop = stopId(decisions(bootstrap, "tamsel.decisions.fresh"));
            assertThat(secondStop).as("decision ids are unique per run").isNotEqualTo(firstStop);
        }
    }

    private static int looks(JsonNode experiment) {
        return experiment.path("comparisons").path(0).path("looks").size();
    }

    private static String stopId(List<JsonNode> records) {
        return records.stream().filter(r -> "stop-harm".equals(r.path("decision").asText())).findFirst().orElseThrow()
                .path("decision_id").asText();
    }

    /** Every decision once, each comparison's records a chain from continue. */
    private static void checkChain(List<JsonNode> records) {
        Set<String> ids = new HashSet<>();
        String state = "continue";
        for (JsonNode r : records) {
            if (r.path("type").asText().equals("interim.acknowledgement")) {
                assertThat(ids.add(r.path("id").asText())).isTrue();
                continue;
            }
            assertThat(ids.add(r.path("decision_id").asText())).as("duplicate %s", r).isTrue();
            assertThat(r.path("previous").asText()).as("chain at %s", r).isEqualTo(state);
            state = r.path("decision").asText();
        }
        assertThat(state).isEqualTo("stop-harm");
    }

    static List<JsonNode> decisions(String bootstrap, String topic) throws Exception {
        List<JsonNode> out = new ArrayList<>();
        for (JsonNode r : DaemonIntegrationTest.readAll(bootstrap, topic)) {
            if (EXPERIMENT.equals(r.path("experiment").asText())) {
                out.add(r);
            }
        }
        return out;
    }

    /** Events at a steady pace: both arms at 1% errors, the treatment at {@code treatmentRate}. */
    static void produce(String bootstrap, int from, int to, double treatmentRate, long seed) {
        SplittableRandom random = new SplittableRandom(seed);
        try (KafkaProducer<String, String> p = DaemonIntegrationTest.producer(bootstrap)) {
            for (int i = from; i < to; i++) {
                String arm = random.nextBoolean() ? "berth" : "skiff";
                boolean error = random.nextDouble() < (arm.equals("skiff") ? treatmentRate : 0.01);
                p.send(new ProducerRecord<>("tamsel.events", "u" + i,
                        "{\"exp\":\"" + EXPERIMENT + "\",\"arm\":\"" + arm + "\",\"status\":" + (error ? 503 : 200) + "}"));
            }
            p.flush();
        }
    }

    /** Polls the experiment's API until {@code done} holds (a daemon starting or not owning yet is waited for). */
    JsonNode waitFor(Daemon daemon, Predicate<JsonNode> done, String what) throws Exception {
        long deadline = System.nanoTime() + Duration.ofSeconds(150).toNanos();
        JsonNode last = null;
        while (System.nanoTime() < deadline) {
            try {
                HttpResponse<String> r = http.send(HttpRequest.newBuilder(URI.create(daemon.address() + "/api/experiments/"
                        + EXPERIMENT)).timeout(Duration.ofSeconds(5)).GET().build(), HttpResponse.BodyHandlers.ofString());
                if (r.statusCode() == 200) {
                    last = json.readTree(r.body());
                    if (done.test(last)) {
                        return last;
                    }
                }
            } catch (IOException notUpYet) {
                // the daemon is starting
            }
            Thread.sleep(300);
        }
        throw new AssertionError("timed out waiting for " + what + "; last answer: " + last);
    }

    /** The daemon as a separate JVM, started with `interim run` and stopped with SIGKILL or SIGTERM. */
    final class Daemon {
        private final String bootstrap;
        private final Path dir;
        private final String statePrefix;
        private final String groupPrefix;
        private final String decisionsTopic;
        private Process process;
        private int port;
        private int starts;

        Daemon(String bootstrap, Path dir, String statePrefix, String groupPrefix, String decisionsTopic) {
            this.bootstrap = bootstrap;
            this.dir = dir;
            this.statePrefix = statePrefix;
            this.groupPrefix = groupPrefix;
            this.decisionsTopic = decisionsTopic;
        }

        void start() throws IOException {
            port = InterimProcess.freePort();
            process = InterimProcess.run(dir, "daemon-" + starts, """
                    kafka:
                      bootstrap_servers: [%s]
                      properties:
                        session.timeout.ms: "6000"
                        heartbeat.interval.ms: "1000"
                      input_topics: [tamsel.events]
                      decisions_topic: %s
                      dead_letter_topic: tamsel.dead
                      state_topic_prefix: %s
                      consumer_group_prefix: %s
                      commit_interval: 300ms
                    events:
                      experiment: /exp
                      arm: /arm
                    http:
                      port: %d
                      admin_token_env: TAMSEL_ADMIN_TOKEN
                    experiments:
                      - id: %s
                        control: berth
                        treatments: [skiff]
                        look_every: 1s
                        min_per_arm: 200
                        metrics:
                          - name: errors
                            kind: event-rate
                            role: guardrail
                            worse: higher
                            field: /status
                            counts_if: {at_least: 500}
                            max_per_arm: 200000
                            action: page
                    """.formatted(bootstrap, decisionsTopic, statePrefix, groupPrefix, port, EXPERIMENT),
                    Map.of("TAMSEL_ADMIN_TOKEN", TOKEN), "-Xmx384m");
            starts++;
        }

        String address() {
            return "http://127.0.0.1:" + port;
        }

        JsonNode post(String action, String body) throws Exception {
            HttpResponse<String> r = http.send(HttpRequest.newBuilder(URI.create(address() + "/api/experiments/" + EXPERIMENT
                    + "/" + action)).timeout(Duration.ofSeconds(40)).header("Authorization", "Bearer " + TOKEN)
                    .header("Content-Type", "application/json")
                    .POST(HttpRequest.BodyPublishers.ofString(body)).build(), HttpResponse.BodyHandlers.ofString());
            assertThat(r.statusCode()).as("%s: %s", action, r.body()).isEqualTo(200);
            return json.readTree(r.body());
        }

        /** The paging meter of the experiment, as Prometheus scrapes it. */
        double paging() throws Exception {
            String text = http.send(HttpRequest.newBuilder(URI.create(address() + "/metrics")).timeout(Duration.ofSeconds(5))
                    .GET().build(), HttpResponse.BodyHandlers.ofString()).body();
            Matcher m = Pattern.compile("(?m)^interim_paging\\{[^}]*experiment=\"" + EXPERIMENT + "\"[^}]*} (\\S+)$")
                    .matcher(text);
            assertThat(m.find()).as("interim_paging in %s", text).isTrue();
            return Double.parseDouble(m.group(1));
        }

        void kill() throws InterruptedException {
            process.destroyForcibly();   // SIGKILL on Unix: no shutdown hook, no last commit
            assertThat(process.waitFor(30, TimeUnit.SECONDS)).isTrue();
        }

        void stop() throws InterruptedException {
            process.destroy();   // SIGTERM: the orderly shutdown
            assertThat(process.waitFor(60, TimeUnit.SECONDS)).isTrue();
        }
    }
}
