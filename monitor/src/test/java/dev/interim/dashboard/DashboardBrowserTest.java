package dev.interim.dashboard;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import dev.interim.config.ConfigLoader;
import dev.interim.daemon.Daemon;
import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentView;
import dev.interim.http.HttpEndpoint;
import dev.interim.http.HttpEndpoint.Response;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Clock;
import java.time.Duration;
import java.time.ZoneOffset;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Properties;
import java.util.SplittableRandom;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.StringSerializer;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The dashboard in a real headless Chromium, served over HTTP on 127.0.0.1 by a real daemon (real
 * in-process Kafka broker, invented traffic: a ferry-booking canary whose 'rushed' build fails
 * three times as many bookings) and, for the richer states (held, futility, two-sided), by an HTTP
 * endpoint over views from the real decision state machine ({@link Scenarios}).
 *
 * <p>Checked in the browser: the page loads with no console error (uncaught exception,
 * console.error, failed request, blocked content — the check is shown to catch each of those on a
 * page broken on purpose), every comparison has its chart with the statistic and boundary lines
 * actually laid out (non-zero length), the page refreshes itself, and a full-page screenshot is
 * saved as {@code target/dashboard.png} (and {@code target/dashboard-scenarios.png}); the
 * post-mortem report of the daemon's experiment opens cleanly too ({@code target/report.png}). Without a
 * chromium the browser checks are skipped with a message; {@code scripts/test} installs Debian's.
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class DashboardBrowserTest {
    static final String CONFIG = """
            kafka:
              input_topics: [ferry.events]
              commit_interval: 200ms
            events:
              experiment: /exp
              arm: /arm
            http:
              port: 0
            experiments:
              - id: ferry-booking
                control: current
                treatments: [calm, rushed]
                look_every: 1s
                min_per_arm: 200
                dry_run: true
                metrics:
                  - name: booking-failures
                    kind: event-rate
                    role: guardrail
                    worse: higher
                    field: /status
                    counts_if: {at_least: 500}
                    alpha: 0.05
                    max_per_arm: 40000
                    action: page
                  - name: seat-map-ms
                    kind: event-mean
                    role: guardrail
                    worse: higher
                    field: /ms
                    spending: pocock
                    max_per_arm: 40000
            """;
    static final String BROKEN_ON_PURPOSE = """
            <!DOCTYPE html>
            <html lang="en"><head><meta charset="utf-8"><link rel="icon" href="data:,"><title>broken on purpose</title></head>
            <body><p>This page has three errors on purpose.</p>
            <script>
            console.error('deliberate console error');
            fetch('/missing-on-purpose');
            notDefinedOnPurpose();
            </script></body></html>
            """;

    @TempDir
    static Path dir;
    private Daemon daemon;
    private HttpEndpoint scenarios;
    private Chromium browser;
    private final HttpClient http = HttpClient.newHttpClient();

    @BeforeAll
    @Timeout(180)
    void start() throws Exception {
        daemon = Daemon.start(ConfigLoader.parseWithoutSecrets(CONFIG), new Daemon.Options(dir.resolve("kafka"), null, null));
        sendTrafficUntilTheRushedBuildIsStopped();
        scenarios = HttpEndpoint.builder().port(0).start();
        Map<String, ExperimentView> invented = Scenarios.invented();
        Dashboard.install(scenarios, () -> invented, Clock.fixed(Scenarios.T0.plusSeconds(900), ZoneOffset.UTC));
        scenarios.route("GET", "/broken", r -> new Response(200, "text/html; charset=utf-8",
                BROKEN_ON_PURPOSE.getBytes(StandardCharsets.UTF_8)));
        Optional<Path> binary = Chromium.find();
        if (binary.isPresent()) {
            browser = Chromium.start(binary.get(), dir);
        }
    }

    @AfterAll
    void stop() throws Exception {
        try (Daemon d = daemon; HttpEndpoint s = scenarios) {
            if (browser != null) {
                browser.close();
            }
        }
    }

    private void assumeBrowser() {
        if (browser == null) {
            String why = "SKIPPED: no chromium found (INTERIM_CHROMIUM, /usr/bin/chromium, PATH); the dashboard's browser checks "
                    + "did not run. scripts/test installs Debian's 'chromium' package.";
            System.err.println("DashboardBrowserTest: " + why);
            Assumptions.abort(why);
        }
    }

    @Test
    @Timeout(60)
    void theDaemonServesTheDashboardAndItsFragment() throws Exception {
        HttpResponse<String> page = get("/dashboard");
        assertThat(page.statusCode()).isEqualTo(200);
        assertThat(page.headers().firstValue("Content-Type")).hasValue("text/html; charset=utf-8");
        assertThat(page.body()).contains("<section class=\"experiment\" data-experiment=\"ferry-booking\"",
                "data-arm=\"rushed\" data-metric=\"booking-failures\" data-decision=\"stop-harm\"");
        HttpResponse<String> fragment = get("/dashboard/fragment");
        assertThat(fragment.statusCode()).isEqualTo(200);
        assertThat(fragment.body()).startsWith("<div id=\"content\"").doesNotContain("<html");
    }

    @Test
    @Timeout(120)
    void theConsoleCheckCatchesAPageBrokenOnPurpose() throws Exception {
        assumeBrowser();
        browser.open(scenarios.uri().resolve("/broken"));
        long deadline = System.nanoTime() + Duration.ofSeconds(30).toNanos();
        while (browser.problems().size() < 3 && System.nanoTime() < deadline) {
            Thread.sleep(100);
        }
        List<Chromium.Problem> problems = browser.problems();
        assertThat(problems).as("%s", problems).anySatisfy(p -> {
            assertThat(p.kind()).isEqualTo("uncaught exception");
            assertThat(p.text()).contains("ReferenceError", "notDefinedOnPurpose");
        });
        assertThat(problems).anySatisfy(p -> {
            assertThat(p.kind()).isEqualTo("console.error");
            assertThat(p.text()).isEqualTo("deliberate console error");
        });
        assertThat(problems).anySatisfy(p -> {
            assertThat(p.kind()).isEqualTo("browser network");
            assertThat(p.text()).contains("404", "missing-on-purpose");
        });
    }

    @Test
    @Timeout(120)
    void theDaemonsDashboardLoadsCleanlyShowsEveryChartAndRefreshesItself() throws Exception {
        assumeBrowser();
        browser.open(uri("/dashboard"));
        // The page's own script fetches the fragment every 5 s; wait for one refresh to have landed.
        assertThat(browser.waitUntil("Number(document.body.dataset.refreshes) >= 1", Duration.ofSeconds(20)))
                .as("the page refreshed itself").isTrue();
        assertThat(browser.problems()).as("console errors").isEmpty();
        assertThat(browser.evaluate("document.getElementById('refresh-status').textContent").asText()).startsWith("updated ");

        String dom = browser.dom();
        Files.writeString(Path.of("target", "dashboard.html"), dom);
        assertThat(count(dom, "<article class=\"comparison")).isEqualTo(4);
        assertThat(count(dom, "<svg ")).isEqualTo(4);
        assertThat(dom).contains("Stopped for harm: rushed on booking-failures");
        assertLinesAreLaidOut(4);
        Files.write(Path.of("target", "dashboard.png"), browser.screenshot(1360));
    }

    @Test
    @Timeout(120)
    void theInventedScenariosRenderCleanlyWithEveryKindOfBoundary() throws Exception {
        assumeBrowser();
        browser.open(scenarios.uri().resolve("/dashboard"));
        assertThat(browser.problems()).as("console errors").isEmpty();
        long comparisons = Scenarios.invented().values().stream().mapToLong(v -> v.comparisons().size()).sum();
        String dom = browser.dom();
        assertThat(count(dom, "<article class=\"comparison")).isEqualTo((int) comparisons);
        assertThat(dom).contains("class=\"boundary boundary-lower boundary-futility\"", "class=\"boundary boundary-lower boundary-harm\"",
                "SAMPLE-RATIO MISMATCH", "no look yet");
        // Every chart with looks has its statistic drawn; the held one (no look) has none.
        JsonNode drawn = browser.evaluate("Array.from(document.querySelectorAll('svg.boundary-chart'))"
                + ".map(s => s.querySelectorAll('path.statistic').length)");
        assertThat(drawn).hasSize((int) comparisons);
        int withoutStatistic = 0;
        for (JsonNode n : drawn) {
            withoutStatistic += n.asInt() == 0 ? 1 : 0;
        }
        assertThat(withoutStatistic).isEqualTo(1);
        Files.write(Path.of("target", "dashboard-scenarios.png"), browser.screenshot(1360));
    }

    @Test
    @Timeout(120)
    void theReportOfTheDaemonsExperimentOpensCleanly() throws Exception {
        assumeBrowser();
        ExperimentView view = DaemonClient.at("http://127.0.0.1:" + daemon.httpPort()).experiment("ferry-booking");
        Path file = Path.of("target", "report-ferry-booking.html").toAbsolutePath();
        Report.write(view, file, null, java.time.Instant.now());
        browser.open(file.toUri());
        assertThat(browser.problems()).as("console errors").isEmpty();
        assertThat(browser.evaluate("document.querySelectorAll('svg.boundary-chart path.statistic').length").asInt()).isEqualTo(4);
        assertThat(browser.evaluate("document.querySelectorAll('script').length").asInt()).isZero();
        Files.write(Path.of("target", "report.png"), browser.screenshot(1360));
    }

    /**
     * Each chart has a statistic path and an upper boundary path that the browser has laid out with
     * a real length and extent (not merely present in the markup).
     */
    private void assertLinesAreLaidOut(int charts) throws Exception {
        JsonNode lines = browser.evaluate("Array.from(document.querySelectorAll('svg.boundary-chart')).map(s => {"
                + " const z = s.querySelector('path.statistic'); const b = s.querySelector('path.boundary-upper');"
                + " return { statistic: z ? z.getTotalLength() : 0, boundary: b ? b.getTotalLength() : 0,"
                + "          boundaryWidth: b ? b.getBBox().width : 0, current: s.querySelectorAll('.current-look').length }; })");
        assertThat(lines).hasSize(charts);
        for (JsonNode chart : lines) {
            assertThat(chart.path("statistic").asDouble()).as("statistic path length in %s", chart).isPositive();
            assertThat(chart.path("boundary").asDouble()).as("boundary path length in %s", chart).isPositive();
            assertThat(chart.path("boundaryWidth").asDouble()).as("boundary extent in %s", chart).isPositive();
            assertThat(chart.path("current").asInt()).isEqualTo(1);
        }
    }

    private void sendTrafficUntilTheRushedBuildIsStopped() throws Exception {
        SplittableRandom random = new SplittableRandom(2027);
        Map<String, Double> failureRate = Map.of("current", 0.01, "calm", 0.01, "rushed", 0.03);
        long deadline = System.nanoTime() + Duration.ofSeconds(90).toNanos();
        try (KafkaProducer<String, String> producer = producer(daemon.bootstrapServers())) {
            int afterStop = 0;
            while (afterStop < 4 && System.nanoTime() < deadline) {
                for (int i = 0; i < 500; i++) {
                    for (String arm : failureRate.keySet()) {
                        int status = random.nextDouble() < failureRate.get(arm) ? 503 : 200;
                        double ms = 180 + 40 * random.nextDouble();
                        producer.send(new ProducerRecord<>("ferry.events", "p" + i, "{\"exp\":\"ferry-booking\",\"arm\":\"" + arm
                                + "\",\"status\":" + status + ",\"ms\":" + ms + "}"));
                    }
                }
                producer.flush();
                Thread.sleep(600);
                if (rushedStopped()) {
                    afterStop++;
                }
            }
        }
        assertThat(rushedStopped()).as("the daemon stopped the rushed build within 90 s").isTrue();
    }

    private boolean rushedStopped() {
        ExperimentView v = daemon.views().get("ferry-booking");
        return v != null && v.comparisons().stream()
                .anyMatch(c -> c.arm().equals("rushed") && c.metric().equals("booking-failures") && c.decision() == Decision.STOP_HARM);
    }

    private static KafkaProducer<String, String> producer(String bootstrap) {
        Properties p = new Properties();
        p.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrap);
        p.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, StringSerializer.class.getName());
        p.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, StringSerializer.class.getName());
        p.put(ProducerConfig.LINGER_MS_CONFIG, 5);
        return new KafkaProducer<>(p);
    }

    private URI uri(String path) {
        return URI.create("http://127.0.0.1:" + daemon.httpPort() + path);
    }

    private HttpResponse<String> get(String path) throws Exception {
        return http.send(HttpRequest.newBuilder(uri(path)).GET().build(), HttpResponse.BodyHandlers.ofString());
    }

    private static int count(String text, String part) {
        int n = 0;
        for (int i = text.indexOf(part); i >= 0; i = text.indexOf(part, i + part.length())) {
            n++;
        }
        return n;
    }
}
