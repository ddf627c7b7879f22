package dev.interim.daemon;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.experiment.Comparison;
import java.nio.file.Path;
import java.time.Duration;
import java.util.OptionalDouble;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * A restart of the daemon (and of its embedded broker, on the same data directory) loses nothing
 * and counts nothing twice: the tallies after the restart are exactly those of every event written,
 * and the looks go on from where they were, so the α already spent is kept. Counts are checked
 * against the events the test wrote (exact ground truth; no statistical values here).
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class DaemonRestartTest {
    static final String CONFIG = """
            kafka:
              input_topics: [ledger.events]
              commit_interval: 200ms
            events:
              experiment: /exp
              arm: /arm
            http:
              port: 0
            experiments:
              - id: ledger-rollout
                control: before
                treatments: [after]
                look_every: 1s
                min_per_arm: 100
                metrics:
                  - name: slow
                    kind: event-rate
                    role: guardrail
                    worse: higher
                    field: /ms
                    counts_if: {above: 250}
                    max_per_arm: 1000000
            """;

    @Test
    @Timeout(240)
    void countsAndLooksSurviveARestart(@TempDir Path dir) throws Exception {
        InterimConfig config = ConfigLoader.parseWithoutSecrets(CONFIG);
        Path data = dir.resolve("kafka");
        int looksBefore;
        try (Daemon daemon = Daemon.start(config, new Daemon.Options(data, null, null))) {
            write(daemon, 0, 3000);
            waitForObservations(daemon, 3000);
            looksBefore = comparison(daemon).last().look().number();
        }
        try (Daemon daemon = Daemon.start(config, new Daemon.Options(data, null, null))) {
            write(daemon, 3000, 2000);
            waitForObservations(daemon, 5000);
            assertThat(observations(daemon, "before")).hasValue(5000);
            assertThat(observations(daemon, "after")).hasValue(5000);
            Comparison c = comparison(daemon);
            assertThat(c.last().look().number()).isGreaterThan(looksBefore);
            assertThat(c.snapshot().alphaSpent()).isGreaterThanOrEqualTo(0);
        }
    }

    static final String PER_UNIT = """
            kafka:
              input_topics: [ledger.visits]
              input_keyed_by_unit: true
              commit_interval: 200ms
            events:
              experiment: /exp
              arm: /arm
              unit: /user
            http:
              port: 0
            experiments:
              - id: ledger-visits
                control: before
                treatments: [after]
                look_every: 1s
                min_per_arm: 50
                metrics:
                  - {name: slow, kind: event-rate, role: guardrail, worse: higher, field: /ms,
                     counts_if: {above: 250}, max_per_arm: 100000}
                  - {name: fee-per-item, kind: ratio, role: guardrail, worse: higher, numerator: /fee,
                     denominator: /items, max_per_arm: 100000}
            """;

    /**
     * Under per-unit assignment the per-unit sums are state too: users who come back after the
     * restart add to the sums restored from the units changelog. The tallies after the restart are
     * the exact per-user sums of every event written (counted here while writing).
     */
    @Test
    @Timeout(240)
    void perUnitSumsSurviveARestart(@TempDir Path dir) throws Exception {
        InterimConfig config = ConfigLoader.parseWithoutSecrets(PER_UNIT);
        Path data = dir.resolve("kafka");
        java.util.Map<String, double[]> truth = new java.util.HashMap<>();   // user → {slow, visits, fee, items}
        try (Daemon daemon = Daemon.start(config, new Daemon.Options(data, null, null))) {
            writeVisits(daemon, 0, 3000, truth);
            waitForVisits(daemon, truth);
        }
        try (Daemon daemon = Daemon.start(config, new Daemon.Options(data, null, null))) {
            writeVisits(daemon, 3000, 2000, truth);
            waitForVisits(daemon, truth);
            java.util.Map<String, java.util.Map<String, dev.interim.experiment.Tally>> tallies =
                    daemon.experiments().get(0).view().tallies();
            for (String arm : new String[] {"before", "after"}) {
                double[] want = sums(truth, arm);
                dev.interim.stats.RatioMoments slow = ((dev.interim.experiment.Tally.Ratio) tallies.get("slow").get(arm)).moments();
                dev.interim.stats.RatioMoments fee = ((dev.interim.experiment.Tally.Ratio) tallies.get("fee-per-item").get(arm)).moments();
                assertThat(slow.count()).as("users of %s", arm).isEqualTo((long) want[4]);
                // 1e-9 relative: Welford means against exact integer sums.
                assertThat(slow.meanX() * slow.count()).isCloseTo(want[0], org.assertj.core.api.Assertions.withinPercentage(1e-7));
                assertThat(slow.meanY() * slow.count()).isCloseTo(want[1], org.assertj.core.api.Assertions.withinPercentage(1e-7));
                assertThat(fee.meanX() * fee.count()).isCloseTo(want[2], org.assertj.core.api.Assertions.withinPercentage(1e-7));
                assertThat(fee.meanY() * fee.count()).isCloseTo(want[3], org.assertj.core.api.Assertions.withinPercentage(1e-7));
            }
        }
    }

    /** Visits of 700 users (arm by user), so most users come back, some after the restart. */
    private static void writeVisits(Daemon daemon, int from, int count, java.util.Map<String, double[]> truth) {
        try (KafkaProducer<String, String> producer = DaemonIntegrationTest.producer(daemon.bootstrapServers())) {
            for (int i = from; i < from + count; i++) {
                String user = "u" + (i * 7919 % 700);
                String arm = Math.floorMod(user.hashCode(), 2) == 0 ? "before" : "after";
                int ms = 100 + (i * 37) % 300;
                int fee = (i * 13) % 90;
                int items = 1 + i % 4;
                double[] t = truth.computeIfAbsent(user, u -> new double[] {0, 0, 0, 0, arm.equals("before") ? 0 : 1});
                t[0] += ms > 250 ? 1 : 0;
                t[1] += 1;
                t[2] += fee;
                t[3] += items;
                producer.send(new ProducerRecord<>("ledger.visits", user, "{\"exp\":\"ledger-visits\",\"arm\":\"" + arm
                        + "\",\"user\":\"" + user + "\",\"ms\":" + ms + ",\"fee\":" + fee + ",\"items\":" + items + "}"));
            }
            producer.flush();
        }
    }

    /** Σslow, Σvisits, Σfee, Σitems and the users of {@code arm}. */
    private static double[] sums(java.util.Map<String, double[]> truth, String arm) {
        double[] out = new double[5];
        double code = arm.equals("before") ? 0 : 1;
        truth.values().stream().filter(t -> t[4] == code).forEach(t -> {
            for (int i = 0; i < 4; i++) {
                out[i] += t[i];
            }
            out[4]++;
        });
        return out;
    }

    private static void waitForVisits(Daemon daemon, java.util.Map<String, double[]> truth) throws InterruptedException {
        long deadline = System.nanoTime() + Duration.ofSeconds(90).toNanos();
        double want = sums(truth, "before")[1] + sums(truth, "after")[1];
        while (System.nanoTime() < deadline) {
            java.util.Map<String, dev.interim.experiment.Tally> slow =
                    daemon.experiments().isEmpty() ? null : daemon.experiments().get(0).view().tallies().get("slow");
            double seen = 0;
            if (slow != null) {
                for (dev.interim.experiment.Tally t : slow.values()) {
                    dev.interim.stats.RatioMoments m = ((dev.interim.experiment.Tally.Ratio) t).moments();
                    seen += m.meanY() * m.count();
                }
            }
            if (Math.abs(seen - want) < 0.5) {
                Thread.sleep(2500);   // a few more looks: a double count would show now
                return;
            }
            Thread.sleep(250);
        }
    }

    private static Comparison comparison(Daemon daemon) {
        return daemon.experiments().get(0).comparison("slow", "after");
    }

    private static void write(Daemon daemon, int from, int count) {
        try (KafkaProducer<String, String> producer = DaemonIntegrationTest.producer(daemon.bootstrapServers())) {
            for (int i = from; i < from + count; i++) {
                for (String arm : new String[] {"before", "after"}) {
                    producer.send(new ProducerRecord<>("ledger.events", "k" + i,
                            "{\"exp\":\"ledger-rollout\",\"arm\":\"" + arm + "\",\"ms\":" + (100 + i % 300) + "}"));
                }
            }
            producer.flush();
        }
    }

    private static void waitForObservations(Daemon daemon, long expected) throws InterruptedException {
        long deadline = System.nanoTime() + Duration.ofSeconds(90).toNanos();
        while (System.nanoTime() < deadline) {
            if (observations(daemon, "after").orElse(0) >= expected && observations(daemon, "before").orElse(0) >= expected) {
                Thread.sleep(2500);   // a few more looks: a double count would show now
                return;
            }
            Thread.sleep(250);
        }
    }

    /** The observation gauge of one arm, read from the scrape. */
    static OptionalDouble observations(Daemon daemon, String arm) {
        Matcher m = Pattern.compile("interim_observations\\{[^}]*arm=\"" + arm + "\"[^}]*metric=\"slow\"[^}]*\\} ([0-9.eE+]+)")
                .matcher(daemon.meters().scrape());
        return m.find() ? OptionalDouble.of(Double.parseDouble(m.group(1))) : OptionalDouble.empty();
    }
}
