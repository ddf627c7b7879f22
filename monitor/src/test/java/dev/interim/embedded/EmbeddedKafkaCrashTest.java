package dev.interim.embedded;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.common.IsolationLevel;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * A broker killed without shutdown (its JVM halted, as by kill -9) and started again on the same
 * directory: what the daemon relies on after a crash. The committed transaction survives, the one
 * left open is aborted when the same transactional id starts again, and the address is the same.
 */
@Timeout(value = 3, unit = TimeUnit.MINUTES, threadMode = Timeout.ThreadMode.SEPARATE_THREAD)
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class EmbeddedKafkaCrashTest {
    @TempDir
    Path dataDir;

    @Test
    void aRestartAfterACrashKeepsCommittedRecordsAndAbortsTheOpenTransaction() throws Exception {
        String addressBeforeCrash = crashABrokerIn(dataDir);
        Path logDir = dataDir.resolve(BrokerSettings.LOG_DIR_NAME);
        String clusterId = StorageFormat.clusterIdOf(logDir.resolve(StorageFormat.META_PROPERTIES));
        assertThat(StorageFormat.stoppedCleanly(logDir)).isFalse();

        try (EmbeddedKafka kafka = EmbeddedKafka.start(dataDir)) {
            assertThat(kafka.clusterId()).isEqualTo(clusterId);
            assertThat(kafka.bootstrapServers()).isEqualTo(addressBeforeCrash);
            try (KafkaProducer<String, String> producer =
                         Clients.transactionalProducer(kafka, CrashingBroker.TRANSACTIONAL_ID)) {
                Clients.commit(producer, CrashingBroker.TOPIC, "committed-after-restart");
            }

            List<String> committed = Clients.readUntil(kafka, CrashingBroker.TOPIC,
                    IsolationLevel.READ_COMMITTED, "committed-after-restart"::equals);
            List<String> written = Clients.readUntil(kafka, CrashingBroker.TOPIC,
                    IsolationLevel.READ_UNCOMMITTED, "committed-after-restart"::equals);

            assertThat(committed).containsExactly("committed-before-crash", "committed-after-restart");
            // The open transaction's record reached the log before the crash: only the abort hides it.
            assertThat(written).containsExactly("committed-before-crash", "open-at-crash", "committed-after-restart");
        }
        assertThat(StorageFormat.stoppedCleanly(logDir)).isTrue();
    }

    /** Runs {@link CrashingBroker} in a child JVM and returns the address it listened on. */
    private static String crashABrokerIn(Path dataDir) throws IOException, InterruptedException {
        Files.createDirectories(dataDir);
        Path output = dataDir.resolve("child-output.log"); // beside the broker's files, removed with them
        String java = Path.of(System.getProperty("java.home"), "bin", "java").toString();
        Process child = new ProcessBuilder(java, "-Xmx256m", "-cp", System.getProperty("java.class.path"),
                CrashingBroker.class.getName(), dataDir.toString())
                .redirectErrorStream(true)
                .redirectOutput(output.toFile())
                .start();
        try {
            assertThat(child.waitFor(Clients.WAIT.toSeconds() * 2, TimeUnit.SECONDS))
                    .as("the child broker halts by itself").isTrue();
        } finally {
            child.destroyForcibly();
        }
        List<String> lines = Files.readAllLines(output, StandardCharsets.UTF_8);
        assertThat(child.exitValue()).as("exit code of the halted child; its output: %s", lines).isEqualTo(137);
        return lines.stream()
                .filter(line -> line.startsWith(CrashingBroker.ADDRESS_LINE))
                .map(line -> line.substring(CrashingBroker.ADDRESS_LINE.length()))
                .findFirst()
                .orElseThrow(() -> new AssertionError("the child printed no address: " + lines));
    }
}
