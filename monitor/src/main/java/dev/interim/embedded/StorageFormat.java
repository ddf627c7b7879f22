package dev.interim.embedded;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Properties;
import kafka.tools.StorageTool;
import org.apache.kafka.common.Uuid;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Formats the broker's storage once, as {@code kafka-storage.sh format} does, and reads the
 * cluster id back on every later start. A formatted directory is never formatted again: that
 * would give it a new cluster id, and the broker would refuse its own data.
 */
final class StorageFormat {
    /** Written by the format into every log directory; its presence means "formatted". */
    static final String META_PROPERTIES = "meta.properties";
    /** Written by a broker that stopped in order; removed once a broker has started. */
    static final String CLEAN_SHUTDOWN_MARKER = ".kafka_cleanshutdown";

    private static final Logger log = LoggerFactory.getLogger(StorageFormat.class);

    private StorageFormat() {
    }

    /** Returns the cluster id of the storage under {@code logDir}, formatting it first if needed. */
    static String ensureFormatted(Path configFile, Path logDir) throws IOException {
        Path meta = logDir.resolve(META_PROPERTIES);
        if (Files.exists(meta)) {
            return clusterIdOf(meta);
        }
        String clusterId = Uuid.randomUuid().toString();
        format(configFile, clusterId);
        log.info("Formatted new Kafka storage in {} (cluster id {})", logDir, clusterId);
        return clusterId;
    }

    private static void format(Path configFile, String clusterId) {
        ByteArrayOutputStream output = new ByteArrayOutputStream();
        String[] arguments = {"format", "--config", configFile.toString(), "--cluster-id", clusterId};
        int exitCode;
        try (PrintStream printStream = new PrintStream(output, true, StandardCharsets.UTF_8)) {
            exitCode = StorageTool.execute(arguments, printStream);
        } catch (RuntimeException e) {
            throw new IllegalStateException("formatting Kafka storage failed: " + e.getMessage()
                    + describe(output), e);
        }
        if (exitCode != 0) {
            throw new IllegalStateException("formatting Kafka storage failed with exit code " + exitCode
                    + describe(output));
        }
        log.debug("Storage tool: {}", output.toString(StandardCharsets.UTF_8).strip());
    }

    /** Whether the last broker on formatted storage stopped in order (true for new storage). */
    static boolean stoppedCleanly(Path logDir) {
        return !Files.exists(logDir.resolve(META_PROPERTIES)) || Files.exists(logDir.resolve(CLEAN_SHUTDOWN_MARKER));
    }

    static String clusterIdOf(Path metaProperties) throws IOException {
        Properties meta = new Properties();
        try (var reader = Files.newBufferedReader(metaProperties, StandardCharsets.UTF_8)) {
            meta.load(reader);
        }
        String clusterId = meta.getProperty("cluster.id");
        if (clusterId == null || clusterId.isBlank()) {
            throw new IllegalStateException(metaProperties + " has no cluster.id");
        }
        return clusterId;
    }

    private static String describe(ByteArrayOutputStream output) {
        String text = output.toString(StandardCharsets.UTF_8).strip();
        return text.isEmpty() ? "" : " (" + text + ")";
    }
}
