package dev.interim.embedded;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import java.io.IOException;
import java.net.InetAddress;
import java.net.ServerSocket;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.Set;
import java.util.concurrent.TimeUnit;
import java.util.stream.Collectors;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.common.IsolationLevel;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/** Start, restart and shutdown of the embedded broker: data and cluster id kept, no thread left behind. */
@Timeout(value = 3, unit = TimeUnit.MINUTES, threadMode = Timeout.ThreadMode.SEPARATE_THREAD)
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class EmbeddedKafkaLifecycleTest {
    /** Threads end during awaitShutdown; this only absorbs the last instants of their run methods. */
    private static final Duration THREADS_END_WITHIN = Duration.ofSeconds(10);

    @TempDir
    Path dataDir;

    @Test
    void aRestartOnTheSameDataDirectoryKeepsTheClusterIdTopicsAndCommittedRecords() throws IOException {
        String clusterId;
        try (EmbeddedKafka first = EmbeddedKafka.start(dataDir)) {
            clusterId = first.clusterId();
            first.createTopics(Topic.deleting("kept", 1));
            try (KafkaProducer<String, String> producer = Clients.transactionalProducer(first, "restart-tx")) {
                Clients.commit(producer, "kept", "before-1", "before-2");
                Clients.abort(producer, "kept", "aborted-before");
            }
        }
        Path metaProperties = dataDir.resolve(BrokerSettings.LOG_DIR_NAME).resolve(StorageFormat.META_PROPERTIES);
        assertThat(metaProperties).exists();

        int fixedPort = freePort();
        try (EmbeddedKafka second = EmbeddedKafka.start(dataDir, fixedPort)) {
            assertThat(second.bootstrapServers()).isEqualTo("127.0.0.1:" + fixedPort);
            assertThat(second.clusterId()).isEqualTo(clusterId);
            assertThat(StorageFormat.clusterIdOf(metaProperties)).isEqualTo(clusterId);
            // The topic survived: creating it again is a no-op, and the same producer id resumes.
            second.createTopics(Topic.deleting("kept", 1));
            try (KafkaProducer<String, String> producer = Clients.transactionalProducer(second, "restart-tx")) {
                Clients.commit(producer, "kept", "after-1");
            }

            List<String> read = Clients.readUntil(second, "kept", IsolationLevel.READ_COMMITTED, "after-1"::equals);

            assertThat(read).containsExactly("before-1", "before-2", "after-1");
        }
    }

    @Test
    void closeEndsEveryNonDaemonThreadTheBrokerStarted() throws InterruptedException {
        Set<Thread> before = nonDaemonThreads();
        EmbeddedKafka kafka = EmbeddedKafka.start(dataDir);
        try {
            kafka.createTopics(Topic.compacted("t", 1));
            try (KafkaProducer<String, String> producer = Clients.transactionalProducer(kafka, "threads-tx")) {
                Clients.commit(producer, "t", "x");
            }
            Clients.readUntil(kafka, "t", IsolationLevel.READ_COMMITTED, "x"::equals);
            // The check below can see broker threads: while running, there are some.
            assertThat(newThreadNames(before)).isNotEmpty();
        } finally {
            kafka.close();
        }
        kafka.close(); // idempotent

        assertThat(awaitNoNewNonDaemonThreads(before)).isEmpty();
    }

    @Test
    void aTakenFixedPortFailsTheStartWithAClearMessageAndLeavesNoThreads() throws Exception {
        Set<Thread> before = nonDaemonThreads();
        QuietLoggers quiet = QuietLoggers.silence("kafka", "org.apache.kafka"); // the bind errors are expected
        try (ServerSocket taken = new ServerSocket(0, 1, InetAddress.getByName("127.0.0.1"))) {
            assertThatThrownBy(() -> EmbeddedKafka.start(dataDir, taken.getLocalPort()))
                    .isInstanceOf(IllegalStateException.class)
                    .hasMessageContaining("could not bind")
                    .hasMessageContaining("127.0.0.1:" + taken.getLocalPort());
        } finally {
            quiet.close();
        }

        assertThat(awaitNoNewNonDaemonThreads(before)).isEmpty();
    }

    @Test
    void aSecondBrokerOnADataDirectoryInUseFailsAndLeavesTheFirstServing() {
        try (EmbeddedKafka first = EmbeddedKafka.start(dataDir)) {
            first.createTopics(Topic.deleting("in-use", 1));

            // Refused before it touches the directory: Kafka's own lock would come only after the
            // second controller had written into the first one's metadata log.
            assertThatThrownBy(() -> EmbeddedKafka.start(dataDir))
                    .isInstanceOf(IllegalStateException.class)
                    .hasMessage("data directory " + dataDir.toAbsolutePath()
                            + " is in use by an embedded Kafka broker in this process");

            try (KafkaProducer<String, String> producer = Clients.transactionalProducer(first, "in-use-tx")) {
                Clients.commit(producer, "in-use", "still-here");
            }
            assertThat(Clients.readUntil(first, "in-use", IsolationLevel.READ_COMMITTED, "still-here"::equals))
                    .containsExactly("still-here");
        }
    }

    @Test
    void aNewDataDirectoryIsCreatedAndFormattedWithTheConfigurationBesideIt() throws IOException {
        Path nested = dataDir.resolve("not/yet/there");
        try (EmbeddedKafka kafka = EmbeddedKafka.start(nested)) {
            assertThat(kafka.dataDir()).isEqualTo(nested.toAbsolutePath());
            assertThat(Files.readString(nested.resolve(BrokerSettings.CONFIG_FILE_NAME)))
                    .contains("listeners=PLAINTEXT://" + kafka.bootstrapServers() + ",")
                    .contains("auto.create.topics.enable=false");
            assertThat(kafka.clusterId()).hasSize(22); // a base64 UUID, as kafka-storage random-uuid prints
        }
    }

    private static int freePort() throws IOException {
        try (ServerSocket socket = new ServerSocket(0, 1, InetAddress.getByName("127.0.0.1"))) {
            return socket.getLocalPort();
        }
    }

    private static Set<Thread> nonDaemonThreads() {
        return Thread.getAllStackTraces().keySet().stream()
                .filter(thread -> !thread.isDaemon() && thread.isAlive())
                .collect(Collectors.toSet());
    }

    private static Set<String> newThreadNames(Set<Thread> before) {
        return nonDaemonThreads().stream()
                .filter(thread -> !before.contains(thread))
                .map(Thread::getName)
                .collect(Collectors.toSet());
    }

    /** The names of non-daemon threads started since {@code before} still alive after a bounded wait. */
    private static Set<String> awaitNoNewNonDaemonThreads(Set<Thread> before) throws InterruptedException {
        long deadline = System.nanoTime() + THREADS_END_WITHIN.toNanos();
        Set<String> left = newThreadNames(before);
        while (!left.isEmpty() && System.nanoTime() < deadline) {
            Thread.sleep(50);
            left = newThreadNames(before);
        }
        return left;
    }
}
