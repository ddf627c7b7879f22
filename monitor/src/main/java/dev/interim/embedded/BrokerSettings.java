package dev.interim.embedded;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import java.util.Properties;
import java.util.TreeMap;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * The configuration of the embedded single-node KRaft broker: one process that is both broker and
 * its own controller, with a static quorum of one voter. A static quorum (not the dynamic
 * {@code --standalone} one) because the controller port may change between starts (when the last
 * one is taken), and a dynamic quorum would remember the old endpoint in its log.
 */
final class BrokerSettings {
    static final String HOST = "127.0.0.1";
    static final int NODE_ID = 1;
    static final String LOG_DIR_NAME = "kafka-logs";
    static final String CONFIG_FILE_NAME = "broker.properties";

    /**
     * How long the controller keeps a broker registration without heartbeats (Kafka: 9 s). After a
     * crash the restarted broker cannot register until its previous registration has expired, so
     * this is how much longer such a start takes. The broker beats every second to a controller in
     * the same JVM, which leaves room for three missed beats.
     */
    static final int SESSION_TIMEOUT_MS = 4_000;

    private static final int MIB = 1024 * 1024;
    private static final Pattern BROKER_PORT = Pattern.compile("PLAINTEXT://[^,]*:(\\d+)");
    private static final Pattern CONTROLLER_PORT = Pattern.compile("CONTROLLER://[^,]*:(\\d+)");

    private BrokerSettings() {
    }

    static Path logDir(Path dataDir) {
        return dataDir.resolve(LOG_DIR_NAME);
    }

    static Properties of(Path dataDir, int brokerPort, int controllerPort) {
        Map<String, String> settings = new TreeMap<>();
        settings.put("process.roles", "broker,controller");
        settings.put("node.id", Integer.toString(NODE_ID));
        settings.put("controller.quorum.voters", NODE_ID + "@" + HOST + ":" + controllerPort);
        settings.put("listeners", "PLAINTEXT://" + HOST + ":" + brokerPort + ",CONTROLLER://" + HOST + ":" + controllerPort);
        settings.put("advertised.listeners", "PLAINTEXT://" + HOST + ":" + brokerPort);
        settings.put("listener.security.protocol.map", "PLAINTEXT:PLAINTEXT,CONTROLLER:PLAINTEXT");
        settings.put("controller.listener.names", "CONTROLLER");
        settings.put("inter.broker.listener.name", "PLAINTEXT");
        settings.put("log.dirs", logDir(dataDir).toString());

        // One node: every internal topic has one replica, and one in-sync replica is enough.
        settings.put("offsets.topic.replication.factor", "1");
        settings.put("offsets.topic.num.partitions", "1");
        settings.put("transaction.state.log.replication.factor", "1");
        settings.put("transaction.state.log.min.isr", "1");
        settings.put("transaction.state.log.num.partitions", "1");
        settings.put("share.coordinator.state.topic.replication.factor", "1");
        settings.put("share.coordinator.state.topic.min.isr", "1");
        settings.put("min.insync.replicas", "1");
        settings.put("default.replication.factor", "1");

        // The cleaner allocates its dedupe buffer up front (128 MiB by default): too much in-process.
        settings.put("log.cleaner.dedupe.buffer.size", Integer.toString(2 * MIB));
        // Small segments, so compacted state topics are cleaned during a run, not only after 1 GiB.
        settings.put("log.segment.bytes", Integer.toString(8 * MIB));

        // Topics are created on purpose, never by a typo in a consumer.
        settings.put("auto.create.topics.enable", "false");
        settings.put("num.partitions", "1");
        // A consumer group starts at once instead of waiting 3 s for more members.
        settings.put("group.initial.rebalance.delay.ms", "0");
        // A crashed client's open transaction is aborted within about a second of its timeout.
        settings.put("transaction.abort.timed.out.transaction.cleanup.interval.ms", "1000");

        settings.put("broker.session.timeout.ms", Integer.toString(SESSION_TIMEOUT_MS));
        settings.put("broker.heartbeat.interval.ms", "1000");
        // Controlled shutdown stays on (the default), though there is no other broker to hand
        // leadership to: without it the controller keeps the old registration after a restart, and
        // the transaction coordinator spends ~10 s calling the previous port.

        // Fewer threads: the broker shares the JVM (and usually a small machine) with the daemon.
        settings.put("num.network.threads", "2");
        settings.put("num.io.threads", "4");
        settings.put("background.threads", "4");
        settings.put("num.recovery.threads.per.data.dir", "1");

        Properties properties = new Properties();
        properties.putAll(settings);
        return properties;
    }

    /**
     * The broker and controller ports of the last start in {@code dataDir}, {@link FreePorts#ANY}
     * where unknown. Listening on them again keeps the address stable across restarts, for the
     * clients and tools an operator pointed at it, and for the metadata, which still names the
     * old address until the restarted broker has registered.
     */
    static int[] previousPorts(Path dataDir) {
        Path file = dataDir.resolve(CONFIG_FILE_NAME);
        Properties previous = new Properties();
        try (var reader = Files.newBufferedReader(file, StandardCharsets.UTF_8)) {
            previous.load(reader);
        } catch (IOException | IllegalArgumentException unreadable) {
            return new int[] {FreePorts.ANY, FreePorts.ANY};
        }
        String listeners = previous.getProperty("listeners", "");
        return new int[] {port(BROKER_PORT, listeners), port(CONTROLLER_PORT, listeners)};
    }

    private static int port(Pattern pattern, String listeners) {
        Matcher matcher = pattern.matcher(listeners);
        if (!matcher.find()) {
            return FreePorts.ANY;
        }
        int port = Integer.parseInt(matcher.group(1));
        return port >= 1 && port <= 65_535 ? port : FreePorts.ANY;
    }

    /**
     * Writes the settings as a properties file: the storage tool reads its configuration from a
     * file, and an operator can see in the data directory what the broker ran with.
     */
    static Path write(Properties settings, Path dataDir) throws IOException {
        StringBuilder text = new StringBuilder("# Written by Interim at every start of the embedded broker.\n");
        new TreeMap<>(settings).forEach((key, value) ->
                text.append(key).append('=').append(value.toString().replace("\\", "\\\\")).append('\n'));
        Path file = dataDir.resolve(CONFIG_FILE_NAME);
        Files.writeString(file, text, StandardCharsets.UTF_8);
        return file;
    }
}
