package dev.interim.cli;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.config.ConfigLoader;
import dev.interim.daemon.Daemon;
import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentView;
import dev.interim.http.HttpEndpoint;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.Map;
import java.util.Properties;
import java.util.SplittableRandom;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.StringSerializer;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@code interim report} against a real daemon (real in-process broker, invented traffic: a
 * render-service canary whose 'v2' fails three times as many renders): the report of the
 * experiment is written with its final decision and a chart per comparison; an unknown experiment
 * and an unreachable daemon are bad input (exit 2, one line that says what to do).
 */
// Source: expected values come from what this test itself writes (its own ground truth); no published
// statistical values are checked here.
class ReportCommandTest {
    static final String CONFIG = """
            kafka:
              input_topics: [kolvane.events]
              commit_interval: 200ms
            events:
              experiment: /exp
              arm: /arm
            http:
              port: 0
            experiments:
              - id: kolvane-render
                control: v1
                treatments: [v2]
                look_every: 1s
                min_per_arm: 200
                metrics:
                  - name: render-failures
                    kind: event-rate
                    role: guardrail
                    worse: higher
                    field: /ok
                    counts_if: {equals: false}
                    max_per_arm: 40000
                  - name: render-ms
                    kind: event-mean
                    role: guardrail
                    worse: higher
                    field: /ms
                    spending: pocock
                    max_per_arm: 40000
            """;

    @Test
    @Timeout(180)
    void theReportOfARunningExperimentIsWrittenAndMistakesExitWithTwo(@TempDir Path dir) throws Exception {
        try (Daemon daemon = Daemon.start(ConfigLoader.parseWithoutSecrets(CONFIG), new Daemon.Options(dir.resolve("kafka"), null, null))) {
            sendTrafficUntilV2IsStopped(daemon);
            String from = "http://127.0.0.1:" + daemon.httpPort();
            Path out = dir.resolve("kolvane.html");

            Cli.Result ok = Cli.run("report", "--experiment", "kolvane-render", "--from", from, "--out", out.toString());
            assertThat(ok.exit()).as(ok.err()).isZero();
            assertThat(ok.out()).startsWith("report of kolvane-render written to " + out.toAbsolutePath())
                    .contains("v2 render-failures: stop-harm");
            String html = Files.readString(out, StandardCharsets.UTF_8);
            assertThat(html).contains("<title>Interim report · kolvane-render</title>", "from " + from,
                    "data-decision=\"stop-harm\"", "<h3>Outcome</h3>", "<h3>Design</h3>", "<h3>Look history</h3>");
            assertThat(html.split("<svg ", -1)).hasSize(1 + 2);

            Cli.Result unknown = Cli.run("report", "--experiment", "kolvane-rendr", "--from", from, "--out", dir.resolve("x.html").toString());
            assertThat(unknown.exit()).isEqualTo(2);
            assertThat(unknown.errLines()).containsExactly("interim: the daemon at " + from
                    + " decides no experiment 'kolvane-rendr'; it decides: kolvane-render; see 'interim report --help'");
            assertThat(dir.resolve("x.html")).doesNotExist();
        }
    }

    @Test
    void anUnreachableDaemonIsBadInput(@TempDir Path dir) {
        String from;
        try (HttpEndpoint gone = HttpEndpoint.builder().port(0).start()) {
            from = gone.uri().toString();
        }
        Cli.Result r = Cli.run("report", "--experiment", "kolvane-render", "--from", from, "--out", dir.resolve("r.html").toString());
        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines()).containsExactly("interim: cannot reach the daemon at " + from + " (connection refused): start it, "
                + "or give its HTTP address (the 'http' section of its configuration) with --from; see 'interim report --help'");
        assertThat(r.out()).isEmpty();
    }

    @Test
    void theExperimentMustBeNamedAndTheAddressWellFormed() {
        Cli.Result missing = Cli.run("report");
        assertThat(missing.exit()).isEqualTo(2);
        assertThat(missing.err()).contains("--experiment");
        Cli.Result bad = Cli.run("report", "--experiment", "kolvane-render", "--from", "127.0.0.1:8080");
        assertThat(bad.exit()).isEqualTo(2);
        assertThat(bad.errLines()).singleElement().asString().startsWith("interim: the daemon's address must be http://HOST:PORT");
    }

    @Test
    void theDefaultFileIsNamedAfterTheExperiment() {
        assertThat(ReportCommand.defaultFileName("kolvane-render")).isEqualTo("report-kolvane-render.html");
        assertThat(ReportCommand.defaultFileName("a/b c")).isEqualTo("report-a_b_c.html");
    }

    private static void sendTrafficUntilV2IsStopped(Daemon daemon) throws Exception {
        SplittableRandom random = new SplittableRandom(4242);
        Map<String, Double> failures = Map.of("v1", 0.01, "v2", 0.03);
        Properties p = new Properties();
        p.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, daemon.bootstrapServers());
        p.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, StringSerializer.class.getName());
        p.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, StringSerializer.class.getName());
        p.put(ProducerConfig.LINGER_MS_CONFIG, 5);
        long deadline = System.nanoTime() + Duration.ofSeconds(90).toNanos();
        try (KafkaProducer<String, String> producer = new KafkaProducer<>(p)) {
            while (!stopped(daemon) && System.nanoTime() < deadline) {
                for (int i = 0; i < 600; i++) {
                    for (String arm : failures.keySet()) {
                        boolean ok = random.nextDouble() >= failures.get(arm);
                        producer.send(new ProducerRecord<>("kolvane.events", "r" + i, "{\"exp\":\"kolvane-render\",\"arm\":\"" + arm
                                + "\",\"ok\":" + ok + ",\"ms\":" + (300 + 50 * random.nextDouble()) + "}"));
                    }
                }
                producer.flush();
                Thread.sleep(600);
            }
        }
        assertThat(stopped(daemon)).as("the daemon stopped v2 within 90 s").isTrue();
    }

    private static boolean stopped(Daemon daemon) {
        ExperimentView v = daemon.views().get("kolvane-render");
        return v != null && v.comparisons().stream()
                .anyMatch(c -> c.arm().equals("v2") && c.metric().equals("render-failures") && c.decision() == Decision.STOP_HARM);
    }
}
