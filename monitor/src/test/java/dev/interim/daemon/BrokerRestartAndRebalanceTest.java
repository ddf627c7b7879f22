package dev.interim.daemon;

import com.fasterxml.jackson.databind.JsonNode;
import dev.interim.embedded.EmbeddedKafka;
import java.nio.file.Path;
import java.time.Duration;
import java.util.HashMap;
import java.util.Map;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The same exactness as {@link CrashRecoveryTest} when the broker goes away mid-stream (the daemon
 * waits and resumes), and when two daemon processes share the consumer groups and one of them is
 * stopped mid-stream (the other takes over its partitions and experiments after the rebalance).
 * Ground truth is the stream the test writes; no statistical values here.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class BrokerRestartAndRebalanceTest {
    private final CrashRecoveryTest checks = new CrashRecoveryTest();

    @Test
    @Timeout(600)
    void theBrokerRestartsMidStream(@TempDir Path dir) throws Exception {
        Path brokerDir = dir.resolve("broker");
        EmbeddedKafka broker = EmbeddedKafka.start(brokerDir);
        String bootstrap = broker.bootstrapServers();
        int port = Integer.parseInt(bootstrap.substring(bootstrap.lastIndexOf(':') + 1));
        Map<String, double[]> truth = new HashMap<>();
        CrashRecoveryTest.DaemonProcess daemon = new CrashRecoveryTest.DaemonProcess(bootstrap, dir.resolve("daemon"));
        daemon.start();
        // First half of the stream, then the broker goes down for a few seconds, then the rest.
        CrashRecoveryTest.produce(bootstrap, truth, new SplittableRandom(5), 0, CrashRecoveryTest.EVENTS / 2);
        Thread.sleep(3000);
        broker.close();
        Thread.sleep(4000);
        broker = EmbeddedKafka.start(brokerDir, port);
        try {
            CrashRecoveryTest.produce(bootstrap, truth, new SplittableRandom(6), CrashRecoveryTest.EVENTS / 2,
                    CrashRecoveryTest.EVENTS);
            JsonNode experiments = checks.waitForTruth(daemon, truth, Duration.ofSeconds(240));
            CrashRecoveryTest.checkTallies(experiments, truth);
            daemon.kill();
            checks.checkDecisionChains(bootstrap);
        } finally {
            broker.close();
        }
    }

    @Test
    @Timeout(600)
    void twoDaemonsShareTheWorkAndOneStopsMidStream(@TempDir Path dir) throws Exception {
        try (EmbeddedKafka broker = EmbeddedKafka.start(dir.resolve("broker"))) {
            String bootstrap = broker.bootstrapServers();
            Map<String, double[]> truth = new HashMap<>();
            CrashRecoveryTest.DaemonProcess first = new CrashRecoveryTest.DaemonProcess(bootstrap, dir.resolve("first"));
            CrashRecoveryTest.DaemonProcess second = new CrashRecoveryTest.DaemonProcess(bootstrap, dir.resolve("second"));
            first.start();
            second.start();
            CrashRecoveryTest.produce(bootstrap, truth, new SplittableRandom(8), 0, CrashRecoveryTest.EVENTS / 2);
            checks.checkSharedOwnership(first, second);
            Thread.sleep(4000);
            second.stop();
            CrashRecoveryTest.produce(bootstrap, truth, new SplittableRandom(9), CrashRecoveryTest.EVENTS / 2,
                    CrashRecoveryTest.EVENTS);
            JsonNode experiments = checks.waitForTruth(first, truth, Duration.ofSeconds(240));
            CrashRecoveryTest.checkTallies(experiments, truth);
            first.kill();
            checks.checkDecisionChains(bootstrap);
        }
    }
}
