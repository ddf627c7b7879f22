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
