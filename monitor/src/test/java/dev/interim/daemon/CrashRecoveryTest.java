package dev.interim.daemon;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.interim.embedded.EmbeddedKafka;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * Nothing lost, nothing counted twice: the daemon runs as a separate OS process (two tally threads
 * sharing the input partitions) against a broker in this JVM while a producer writes a known stream
 * of 300,000 events (three invented experiments, two metrics each); the daemon is killed with SIGKILL at three random moments and restarted each time.
 * At the end its tallies, read through its JSON API, equal the ground truth computed here while
 * writing (counts exactly, sums within 1e-9 relative), and the decisions topic holds no duplicate
 * decision id and no gap in any comparison's chain of states.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class CrashRecoveryTest {
    static final int EVENTS = 300_000;
    static final String[] EXPERIMENTS = {"varrow-a", "varrow-b", "varrow-c"};
    static final String[] ARMS = {"base", "trial"};

    private final ObjectMapper json = new ObjectMapper();
    private final HttpClient http = HttpClient.newHttpClient();

    @Test
    @Timeout(600)
    void sigkilledDaemonsLoseNothingAndCountNothingTwice(@TempDir Path dir) throws Exception {
        try (EmbeddedKafka broker = EmbeddedKafka.start(dir.resolve("broker"))) {
            Map<String, double[]> truth = new HashMap<>();   // experiment/arm/metric → {count, successes or sum}
            SplittableRandom random = new SplittableRandom(4242);
            Thread producer = new Thread(() -> produce(broker.bootstrapServers(), truth, new SplittableRandom(77), 0, EVENTS));
            DaemonProcess daemon = new DaemonProcess(broker.bootstrapServers(), dir);
            daemon.start();
            producer.start();
            int kills = 0;
            while (kills < 3) {
                Thread.sleep(3000 + random.nextInt(4000));
                daemon.kill();
                kills++;
                daemon.start();
            }
            producer.join();
            JsonNode experiments = waitForTruth(daemon, truth, Duration.ofSeconds(180));
            checkTallies(experiments, truth);
            daemon.kill();
            checkDecisionChains(broker.bootstrapServers());
        }
    }

    /**
     * Issue 10, defect 4: after SIGKILL the restarted daemon owned nothing for 45–49 s (8–14 s after
     * SIGTERM), and its API answered 200 [] meanwhile. With static membership (a stable
     * kafka.instance_id) it owns its experiments again as soon as it has started and rejoined. Kafka's
     * and Interim's own session settings here (30 s), not the short ones of the other tests: a dynamic
     * member would get the partitions only once the killed member's session had expired, 30 s after
     * the kill, so the check is that ownership comes back before that (measured from the kill and from
     * SIGTERM, until GET /api/experiments lists all three experiments). The seconds from the restarted
     * process's start are printed (JVM start-up included; 3–8 s here, more on a loaded machine): they
     * are a figure, not a check. Meanwhile the API never answers 200 with fewer than the three
     * experiments (it answers 503 with Retry-After until it owns them), and the tallies stay exact.
     */
    @Test
    @Timeout(400)
    void aRestartedDaemonOwnsItsExperimentsAgainWithinSeconds(@TempDir Path dir) throws Exception {
        try (EmbeddedKafka broker = EmbeddedKafka.start(dir.resolve("broker"))) {
            Map<String, double[]> truth = new HashMap<>();
            DaemonProcess daemon = new DaemonProcess(broker.bootstrapServers(), dir, "");
            Trickle trickle = new Trickle(broker.bootstrapServers(), truth);
            daemon.start();
            trickle.start();
            Ownership first = awaitOwned(daemon, Duration.ofSeconds(120));
            assertThat(first.owned()).as("the first start owns the experiments; log %s", daemon.log()).isTrue();
            Thread.sleep(3000);   // events keep coming: the tally stage has a transaction open most of the time

            long killedAt = System.nanoTime();
            daemon.kill();
            long restartedAt = System.nanoTime();
            daemon.start();
            Ownership afterKill = awaitOwned(daemon, Duration.ofSeconds(120));
            double killOwned = seconds(afterKill.at() - restartedAt);
            trickle.stop();
            long countedAt = waitUntilCounted(daemon, truth, Duration.ofSeconds(120));
            double killCounted = seconds(countedAt - restartedAt);
            checkTallies(json.readTree(get(daemon.api()).body()), truth);

            daemon.stop();   // SIGTERM: the orderly shutdown
            long stoppedAt = System.nanoTime();
            daemon.start();
            Ownership afterTerm = awaitOwned(daemon, Duration.ofSeconds(120));
            double termOwned = seconds(afterTerm.at() - stoppedAt);
            HttpResponse<String> health = get(daemon.health());
            daemon.kill();
            assertThat(health.statusCode()).isEqualTo(200);
            assertThat(health.body()).isEqualTo("ok: decides 3 of 3 configured experiment(s)");

            System.out.printf(java.util.Locale.ROOT, "restart ownership: after SIGKILL the restarted process owned its 3 experiments "
                            + "%.1f s after it was started (%.1f s after the kill), counted every event again after %.1f s; "
                            + "after SIGTERM %.1f s; API answers while not owning: %d x 503, %d x 200 with fewer than 3%n",
                    killOwned, seconds(afterKill.at() - killedAt), killCounted, termOwned,
                    afterKill.unavailable() + afterTerm.unavailable(), afterKill.partial() + afterTerm.partial());
            assertThat(afterKill.owned()).as("owned after SIGKILL; log %s", daemon.log()).isTrue();
            assertThat(afterTerm.owned()).as("owned after SIGTERM; log %s", daemon.log()).isTrue();
            assertThat(afterKill.partial() + afterTerm.partial()).as("200 answers listing fewer than the 3 experiments").isZero();
            double session = 30;   // Interim's default session.timeout.ms for its groups (stream.Clients), which this test keeps
            assertThat(seconds(afterKill.at() - killedAt)).as("seconds from SIGKILL to owning again: before the killed member's "
                    + "session (%.0f s) expires, which a dynamic member would have to wait for", session).isLessThan(session);
            assertThat(termOwned).as("seconds from SIGTERM to owning again after the restart: before the stopped member's "
                    + "session (%.0f s) expires", session).isLessThan(session);
        }
    }

    /**
     * Two daemons sharing the work: each experiment is listed by exactly one of them; the other
     * counts it in Interim-Decided-Elsewhere and answers 404 naming the member that decides it (the
     * judge group's static member id, kafka.instance_id + "-judge").
     */
    void checkSharedOwnership(DaemonProcess a, DaemonProcess b) throws Exception {
        long deadline = System.nanoTime() + Duration.ofSeconds(60).toNanos();
        JsonNode listA = null;
        JsonNode listB = null;
        while (System.nanoTime() < deadline) {
            HttpResponse<String> ra = get(a.api());
            HttpResponse<String> rb = get(b.api());
            if (ra.statusCode() == 200 && rb.statusCode() == 200) {
                listA = json.readTree(ra.body());
                listB = json.readTree(rb.body());
                if (listA.size() + listB.size() == EXPERIMENTS.length) {
                    assertThat(ra.headers().firstValue("Interim-Decided-Elsewhere")).contains(Integer.toString(listB.size()));
                    break;
                }
            }
            Thread.sleep(200);
        }
        assertThat(listA.size() + listB.size()).as("each experiment decided by one of the two").isEqualTo(EXPERIMENTS.length);
        for (String e : EXPERIMENTS) {
            HttpResponse<String> fromA = get(a.api() + "/" + e);
            HttpResponse<String> fromB = get(b.api() + "/" + e);
            assertThat(List.of(fromA.statusCode(), fromB.statusCode())).as(e).containsExactlyInAnyOrder(200, 404);
            HttpResponse<String> elsewhere = fromA.statusCode() == 404 ? fromA : fromB;
            assertThat(json.readTree(elsewhere.body()).path("error").asText()).as(e)
                    .startsWith("experiment '" + e + "' is decided by another instance (member '").contains("-judge' on ");
        }
    }

    /** What a wait for ownership saw: when it ended, and the answers meanwhile. */
    record Ownership(boolean owned, long at, int unavailable, int partial) {}

    /** Polls GET /api/experiments until it lists the three experiments; 503s and short lists are counted. */
    Ownership awaitOwned(DaemonProcess daemon, Duration limit) throws Exception {
        long deadline = System.nanoTime() + limit.toNanos();
        int unavailable = 0;
        int partial = 0;
        while (System.nanoTime() < deadline) {
            try {
                HttpResponse<String> r = get(daemon.api());
                if (r.statusCode() == 503) {
                    unavailable++;
                    assertThat(r.headers().firstValue("Retry-After")).as("Retry-After of a 503").isPresent();
                    assertThat(json.readTree(r.body()).path("error").asText()).startsWith("this instance owns no experiments yet: ");
                } else if (r.statusCode() == 200) {
                    JsonNode list = json.readTree(r.body());
                    if (list.size() == EXPERIMENTS.length) {
                        return new Ownership(true, System.nanoTime(), unavailable, partial);
                    }
                    partial++;
                }
            } catch (IOException notUpYet) {
                // the process is starting: nothing listens yet
            }
            Thread.sleep(50);
        }
        return new Ownership(false, System.nanoTime(), unavailable, partial);
    }

    private long waitUntilCounted(DaemonProcess daemon, Map<String, double[]> truth, Duration limit) throws Exception {
        long deadline = System.nanoTime() + limit.toNanos();
        while (System.nanoTime() < deadline) {
            HttpResponse<String> r = get(daemon.api());
            if (r.statusCode() == 200 && complete(json.readTree(r.body()), truth)) {
                return System.nanoTime();
            }
            Thread.sleep(100);
        }
        throw new AssertionError("not every event counted within " + limit + "; log " + daemon.log());
    }

    private HttpResponse<String> get(String uri) throws IOException, InterruptedException {
        return http.send(HttpRequest.newBuilder(URI.create(uri)).timeout(Duration.ofSeconds(5)).GET().build(),
                HttpResponse.BodyHandlers.ofString());
    }

    private static double seconds(long nanos) {
        return nanos / 1e9;
    }

    /** Writes events at a steady pace on its own thread (about 2,000 a second) until stopped, recording them. */
    static final class Trickle {
        private final String bootstrap;
        private final Map<String, double[]> truth;
        private final java.util.concurrent.atomic.AtomicBoolean running = new java.util.concurrent.atomic.AtomicBoolean(true);
        private Thread thread;

        Trickle(String bootstrap, Map<String, double[]> truth) {
            this.bootstrap = bootstrap;
            this.truth = truth;
        }

        void start() {
            thread = new Thread(() -> {
                SplittableRandom random = new SplittableRandom(31);
                int from = 0;
                while (running.get()) {
                    produce(bootstrap, truth, random, from, from + 200);
                    from += 200;
                    sleep(100);
                }
            }, "trickle");
            thread.start();
        }

        void stop() throws InterruptedException {
            running.set(false);
            thread.join();
        }
    }

    /** Counts equal, successes equal, sums within 1e-9 relative. */
    static void checkTallies(JsonNode experiments, Map<String, double[]> truth) {
            for (String e : EXPERIMENTS) {
                JsonNode tallies = find(experiments, e).path("tallies");
                for (String arm : ARMS) {
                    double[] errors = truth.get(e + "/" + arm + "/errors");
                    double[] latency = truth.get(e + "/" + arm + "/latency");
                    assertThat(tallies.path("errors").path(arm).path("count").asLong()).isEqualTo((long) errors[0]);
                    assertThat(tallies.path("errors").path(arm).path("successes").asLong()).isEqualTo((long) errors[1]);
                    assertThat(tallies.path("latency").path(arm).path("count").asLong()).isEqualTo((long) latency[0]);
                    assertThat(tallies.path("latency").path(arm).path("sum").asDouble())
                            .isCloseTo(latency[1], within(1e-9 * latency[1]));
                }
            }
    }

    /** Writes the stream at a steady pace (about 20 s) and records what it wrote. */
    static void produce(String bootstrap, Map<String, double[]> truth, SplittableRandom random, int from, int to) {
        try (KafkaProducer<String, String> p = DaemonIntegrationTest.producer(bootstrap)) {
            for (int i = from; i < to; i++) {
                String e = EXPERIMENTS[i % 3];
                String arm = ARMS[random.nextInt(2)];
                boolean error = random.nextDouble() < (e.equals("varrow-b") && arm.equals("trial") ? 0.03 : 0.01);
                double ms = Math.round((50 + 100 * random.nextDouble()) * 8) / 8.0;   // exact in binary
                p.send(new ProducerRecord<>("varrow.events", "u" + i,
                        "{\"exp\":\"" + e + "\",\"arm\":\"" + arm + "\",\"status\":" + (error ? 500 : 200) + ",\"ms\":" + ms + "}"));
                synchronized (truth) {
                    double[] er = truth.computeIfAbsent(e + "/" + arm + "/errors", k -> new double[2]);
                    er[0]++;
                    er[1] += error ? 1 : 0;
                    double[] la = truth.computeIfAbsent(e + "/" + arm + "/latency", k -> new double[2]);
                    la[0]++;
                    la[1] += ms;
                }
                if (i % 1500 == 0) {
                    p.flush();
                    sleep(100);
                }
            }
            p.flush();
        }
    }

    JsonNode waitForTruth(DaemonProcess daemon, Map<String, double[]> truth, Duration limit) throws Exception {
        long deadline = System.nanoTime() + limit.toNanos();
        JsonNode last = null;
        while (System.nanoTime() < deadline) {
            try {
                last = json.readTree(http.send(HttpRequest.newBuilder(URI.create(daemon.api())).GET().build(),
                        HttpResponse.BodyHandlers.ofString()).body());
                if (complete(last, truth)) {
                    Thread.sleep(3000);   // more looks: a double count would show now
                    return json.readTree(http.send(HttpRequest.newBuilder(URI.create(daemon.api())).GET().build(),
                            HttpResponse.BodyHandlers.ofString()).body());
                }
            } catch (IOException notUpYet) {
                // the daemon is starting
            }
            Thread.sleep(500);
        }
        return last;
    }

    private static boolean complete(JsonNode experiments, Map<String, double[]> truth) {
        long want = 0;
        long have = 0;
        for (String e : EXPERIMENTS) {
            JsonNode t = find(experiments, e).path("tallies").path("errors");
            for (String arm : ARMS) {
                want += (long) truth.get(e + "/" + arm + "/errors")[0];
                have += t.path(arm).path("count").asLong();
            }
        }
        return have >= want;
    }

    private static JsonNode find(JsonNode experiments, String id) {
        for (JsonNode e : experiments) {
            if (e.path("id").asText().equals(id)) {
                return e;
            }
        }
        return json0().createObjectNode();
    }

    private static ObjectMapper json0() {
        return new ObjectMapper();
    }

    /** Every decision once; each comparison's records form a chain (each one's previous is the last one's decision). */
    void checkDecisionChains(String bootstrap) throws Exception {
        List<JsonNode> records = DaemonIntegrationTest.readAll(bootstrap, "varrow.decisions");
        Set<String> ids = new HashSet<>();
        Map<String, String> state = new HashMap<>();
        for (JsonNode r : records) {
            assertThat(ids.add(r.path("decision_id").asText())).as("duplicate decision %s", r).isTrue();
            String key = r.path("experiment").asText() + "/" + r.path("arm").asText() + "/" + r.path("metric").asText();
            assertThat(r.path("previous").asText()).as("chain of %s", key).isEqualTo(state.getOrDefault(key, "continue"));
            state.put(key, r.path("decision").asText());
        }
        assertThat(state).as("the harmful trial arm of varrow-b is stopped").containsEntry("varrow-b/trial/errors", "stop-harm");
    }

    private static void sleep(long ms) {
        try {
            Thread.sleep(ms);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }

    /**
     * The daemon as a separate JVM: started with `interim run`, killed with SIGKILL. It keeps its HTTP
     * port across restarts, as a deployed daemon keeps its configuration, and so its default
     * kafka.instance_id (host name and port).
     */
    static final class DaemonProcess {
        /** Short group sessions: a dynamic member that crashed is noticed in seconds. */
        static final String SHORT_SESSIONS = """
                      properties:
                        session.timeout.ms: "6000"
                        heartbeat.interval.ms: "1000"
                    """;
        private final String bootstrap;
        private final Path dir;
        private final String properties;
        private Process process;
        private int port;
        private int starts;

        DaemonProcess(String bootstrap, Path dir) {
            this(bootstrap, dir, SHORT_SESSIONS);
        }

        /** @param properties the kafka.properties block of the configuration, or "" for the defaults */
        DaemonProcess(String bootstrap, Path dir, String properties) {
            this.bootstrap = bootstrap;
            this.dir = dir;
            this.properties = properties;
        }

        boolean alive() {
            return process != null && process.isAlive();
        }

        /** SIGTERM: the daemon's orderly shutdown (commits, leaves the groups). */
        void stop() throws InterruptedException {
            process.destroy();
            assertThat(process.waitFor(60, TimeUnit.SECONDS)).isTrue();
        }

        void start() throws IOException {
            if (port == 0) {
                port = InterimProcess.freePort();
            }
            process = InterimProcess.run(dir, "daemon-" + starts, """
                    kafka:
                      bootstrap_servers: [%s]
                    """.formatted(bootstrap) + properties + """
                      input_topics: [varrow.events]
                      decisions_topic: varrow.decisions
                      dead_letter_topic: varrow.dead
                      state_topic_prefix: varrow.state
                      consumer_group_prefix: varrow
                      commit_interval: 300ms
                      tally_threads: 2
                    events:
                      experiment: /exp
                      arm: /arm
                    http:
                      port: %d
                    experiments:
                    """.formatted(port) + experiments(), Map.of(), "-Xmx384m");
            starts++;
        }

        private static String experiments() {
            StringBuilder b = new StringBuilder();
            for (String e : EXPERIMENTS) {
                b.append("""
                          - id: %s
                            control: base
                            treatments: [trial]
                            look_every: 1s
                            min_per_arm: 500
                            dry_run: true
                            metrics:
                              - name: errors
                                kind: event-rate
                                role: guardrail
                                worse: higher
                                field: /status
                                counts_if: {at_least: 500}
                                max_per_arm: 60000
                              - name: latency
                                kind: event-mean
                                role: guardrail
                                worse: higher
                                field: /ms
                                max_per_arm: 60000
                        """.formatted(e));
            }
            return b.toString();
        }

        String api() {
            return "http://127.0.0.1:" + port + "/api/experiments";
        }

        String health() {
            return "http://127.0.0.1:" + port + "/health";
        }

        Path log() {
            return dir.resolve("daemon-" + (starts - 1) + ".log");
        }

        void kill() throws InterruptedException {
            process.destroyForcibly();   // SIGKILL on Unix: no shutdown hook, no last commit
            assertThat(process.waitFor(30, TimeUnit.SECONDS)).isTrue();
        }
    }
}
