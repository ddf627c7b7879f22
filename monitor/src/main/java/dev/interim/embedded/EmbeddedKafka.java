package dev.interim.embedded;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.net.BindException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Properties;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import java.util.concurrent.atomic.AtomicBoolean;
import kafka.server.KafkaConfig;
import kafka.server.KafkaRaftServer;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.common.KafkaFuture;
import org.apache.kafka.common.config.TopicConfig;
import org.apache.kafka.common.errors.TopicExistsException;
import org.apache.kafka.common.errors.UnknownTopicOrPartitionException;
import org.apache.kafka.common.utils.Time;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * A real single-node Kafka broker (KRaft, broker and controller in one) running inside this JVM:
 * the default when no bootstrap servers are configured, and the broker of the integration tests.
 *
 * <p>Its data lives under {@link #dataDir()}: {@code broker.properties} (the configuration of the
 * last start), {@code kafka-logs/} (the topics and the metadata log) and {@code interim.lock} (one
 * broker per directory at a time). Storage is formatted on the first start only, so closing and
 * starting again on the same directory keeps the cluster id, the topics and their records. It
 * listens on 127.0.0.1 only, without TLS or authentication.
 *
 * <p>The broker's threads are not daemon threads: {@link #close()} it (try-with-resources or a
 * shutdown hook), or the JVM will not exit. A fatal fault inside the broker (for instance a disk
 * that cannot be written) ends the JVM, as it would end a standalone broker.
 *
 * <p>Thread-safe: {@link #createTopics} may be called from any thread; {@link #close()} is
 * idempotent.
 */
public final class EmbeddedKafka implements AutoCloseable {
    /** How long {@link #start} waits for the broker to answer, and {@link #createTopics} for the controller. */
    static final Duration READY_TIMEOUT = Duration.ofSeconds(60);
    private static final int START_ATTEMPTS_ON_PORT_CLASH = 3;
    private static final Duration METADATA_RETRY = Duration.ofMillis(20);
    private static final Logger log = LoggerFactory.getLogger(EmbeddedKafka.class);

    private final Path dataDir;
    private final String bootstrapServers;
    private final String clusterId;
    private final KafkaRaftServer server;
    private final DataDirLock lock;
    private final AtomicBoolean closed = new AtomicBoolean();

    private EmbeddedKafka(Path dataDir, String bootstrapServers, String clusterId, KafkaRaftServer server,
                          DataDirLock lock) {
        this.dataDir = dataDir;
        this.bootstrapServers = bootstrapServers;
        this.clusterId = clusterId;
        this.server = server;
        this.lock = lock;
    }

    /**
     * Starts a broker on 127.0.0.1, with its data in {@code dataDir} (created if missing,
     * formatted if new, reused otherwise), and returns once it serves requests. It listens on the
     * port of its last start in that directory when that port is free, otherwise on any free port.
     *
     * @throws IllegalStateException if another embedded broker uses the directory, or the broker
     *     does not start or answer within a minute
     * @throws UncheckedIOException if the data directory cannot be prepared
     */
    public static EmbeddedKafka start(Path dataDir) {
        return start(dataDir, FreePorts.ANY);
    }

    /**
     * Starts a broker listening on {@code 127.0.0.1:port}; otherwise as {@link #start(Path)}.
     *
     * @param port the client port, 1 to 65535 (the controller's own port is always chosen free)
     */
    public static EmbeddedKafka start(Path dataDir, int port) {
        Objects.requireNonNull(dataDir, "dataDir");
        if (port != FreePorts.ANY && (port < 1 || port > 65_535)) {
            throw new IllegalArgumentException("port must be between 1 and 65535, got " + port);
        }
        Path directory = dataDir.toAbsolutePath().normalize();
        DataDirLock lock = lock(directory);
        try {
            for (int attempt = 1; ; attempt++) {
                try {
                    int[] preferred = attempt == 1 ? BrokerSettings.previousPorts(directory) : new int[2];
                    return startOnce(directory, port, preferred, lock);
                } catch (PortTakenException e) {
                    if (e.port == port || attempt >= START_ATTEMPTS_ON_PORT_CLASH) {
                        throw new IllegalStateException("embedded Kafka broker could not bind its port ("
                                + e.getMessage() + ")", e.getCause());
                    }
                    log.debug("Port {} was taken between choosing and binding it; trying other ports", e.port);
                }
            }
        } catch (RuntimeException e) {
            lock.close();
            throw e;
        }
    }

    private static DataDirLock lock(Path directory) {
        try {
            Files.createDirectories(directory);
            return DataDirLock.acquire(directory);
        } catch (IOException e) {
            throw new UncheckedIOException("cannot prepare the Kafka data directory " + directory, e);
        }
    }

    private static EmbeddedKafka startOnce(Path directory, int requestedPort, int[] preferred, DataDirLock lock) {
        long startedAt = System.nanoTime();
        int[] ports = choosePorts(requestedPort, preferred);
        int brokerPort = ports[0];
        int controllerPort = ports[1];
        Properties settings = BrokerSettings.of(directory, brokerPort, controllerPort);
        String clusterId = prepareStorage(directory, settings);

        KafkaRaftServer server = new KafkaRaftServer(KafkaConfig.fromProps(settings, false), Time.SYSTEM);
        String bootstrapServers = BrokerSettings.HOST + ":" + brokerPort;
        try {
            server.startup();
            awaitReady(bootstrapServers);
        } catch (RuntimeException e) {
            try {
                stop(server);
            } catch (RuntimeException whileStopping) {
                e.addSuppressed(whileStopping);
            }
            Throwable bindFailure = bindFailure(e);
            if (bindFailure != null) {
                String message = String.valueOf(bindFailure.getMessage());
                int taken = message.contains(BrokerSettings.HOST + ":" + brokerPort + ":") ? brokerPort : controllerPort;
                throw new PortTakenException(taken, message, e);
            }
            throw new IllegalStateException("embedded Kafka broker did not start in " + directory
                    + ": " + e.getMessage(), e);
        }
        long millis = TimeUnit.NANOSECONDS.toMillis(System.nanoTime() - startedAt);
        log.info("Embedded Kafka broker ready at {} in {} ms (data directory {}, cluster id {})",
                bootstrapServers, millis, directory, clusterId);
        return new EmbeddedKafka(directory, bootstrapServers, clusterId, server, lock);
    }

    /** The broker and controller ports: the requested one, else the preferred ones if free, else any. */
    private static int[] choosePorts(int requestedPort, int[] preferred) {
        if (requestedPort == FreePorts.ANY) {
            return FreePorts.pick(preferred[0], preferred[1]);
        }
        int controllerPreferred = preferred[1] == requestedPort ? FreePorts.ANY : preferred[1];
        return new int[] {requestedPort, FreePorts.pick(controllerPreferred)[0]};
    }

    /** Writes the configuration, formats new storage, and returns the cluster id. */
    private static String prepareStorage(Path directory, Properties settings) {
        Path logDir = BrokerSettings.logDir(directory);
        if (!StorageFormat.stoppedCleanly(logDir)) {
            log.info("The last broker on {} did not stop in order: Kafka recovers its logs, and the broker "
                    + "registers once the old registration expires (up to {} ms)", directory,
                    BrokerSettings.SESSION_TIMEOUT_MS);
        }
        try {
            Path configFile = BrokerSettings.write(settings, directory);
            return StorageFormat.ensureFormatted(configFile, logDir);
        } catch (IOException e) {
            throw new UncheckedIOException("cannot prepare the Kafka data directory " + directory, e);
        }
    }

    /** {@code host:port} for the {@code bootstrap.servers} client setting. */
    public String bootstrapServers() {
        return bootstrapServers;
    }

    /** The absolute data directory: the broker configuration and its logs. */
    public Path dataDir() {
        return dataDir;
    }

    /** The cluster id written when the storage was formatted; the same after every restart. */
    public String clusterId() {
        return clusterId;
    }

    /**
     * Creates the topics that do not exist yet, each with one replica; a topic that already
     * exists is left as it is (its partitions and configuration are not compared). Returns once
     * the broker serves them all, so clients can use them at once.
     *
     * @return this broker, so that start and topic creation read as one statement
     * @throws IllegalStateException if the broker does not create and serve them within a minute
     */
    public EmbeddedKafka createTopics(Topic... topics) {
        return createTopics(List.of(topics));
    }

    /** As {@link #createTopics(Topic...)}. */
    public EmbeddedKafka createTopics(List<Topic> topics) {
        List<NewTopic> requests = new ArrayList<>();
        for (Topic topic : topics) {
            requests.add(new NewTopic(topic.name(), topic.partitions(), (short) 1)
                    .configs(Map.of(TopicConfig.CLEANUP_POLICY_CONFIG, topic.cleanup().policy())));
        }
        long deadline = System.nanoTime() + READY_TIMEOUT.toNanos();
        try (Admin admin = admin(bootstrapServers)) {
            for (Map.Entry<String, KafkaFuture<Void>> created : admin.createTopics(requests).values().entrySet()) {
                awaitCreated(created.getKey(), created.getValue());
            }
            awaitServed(admin, requests.stream().map(NewTopic::name).toList(), deadline);
        }
        return this;
    }

    /**
     * Stops the broker, waits until its threads have ended and unlocks the data directory. Later
     * calls do nothing. The data directory is kept.
     */
    @Override
    public void close() {
        if (closed.compareAndSet(false, true)) {
            long startedAt = System.nanoTime();
            try {
                stop(server);
            } finally {
                lock.close();
            }
            log.info("Embedded Kafka broker at {} stopped in {} ms", bootstrapServers,
                    TimeUnit.NANOSECONDS.toMillis(System.nanoTime() - startedAt));
        }
    }

    private static void stop(KafkaRaftServer server) {
        try {
            server.shutdown();
        } finally {
            server.awaitShutdown();
        }
    }

    /** Startup returns once the broker is unfenced; a cluster description proves it answers clients. */
    private static void awaitReady(String bootstrapServers) {
        try (Admin admin = admin(bootstrapServers)) {
            if (admin.describeCluster().nodes().get(READY_TIMEOUT.toMillis(), TimeUnit.MILLISECONDS).isEmpty()) {
                throw new IllegalStateException("the broker reports no nodes");
            }
        } catch (ExecutionException e) {
            throw new IllegalStateException("the broker does not answer: " + e.getCause(), e.getCause());
        } catch (TimeoutException e) {
            throw new IllegalStateException("the broker did not answer within " + READY_TIMEOUT, e);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException("interrupted while waiting for the broker", e);
        }
    }

    private static void awaitCreated(String name, KafkaFuture<Void> creation) {
        try {
            creation.get(READY_TIMEOUT.toMillis(), TimeUnit.MILLISECONDS);
            log.debug("Created topic {}", name);
        } catch (ExecutionException e) {
            if (!(e.getCause() instanceof TopicExistsException)) {
                throw new IllegalStateException("cannot create topic " + name + ": " + e.getCause(), e.getCause());
            }
        } catch (TimeoutException e) {
            throw new IllegalStateException("topic " + name + " was not created within " + READY_TIMEOUT, e);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException("interrupted while creating topic " + name, e);
        }
    }

    /**
     * The controller acknowledges a creation before the broker's metadata cache has the topic; a
     * client that comes at once could be told it does not exist. Returns once the broker serves them.
     */
    private static void awaitServed(Admin admin, List<String> names, long deadline) {
        while (true) {
            try {
                admin.describeTopics(names).allTopicNames()
                        .get(Math.max(0, deadline - System.nanoTime()), TimeUnit.NANOSECONDS);
                return;
            } catch (ExecutionException e) {
                if (!(e.getCause() instanceof UnknownTopicOrPartitionException) || System.nanoTime() > deadline) {
                    throw new IllegalStateException("topics " + names + " are not served: " + e.getCause(), e.getCause());
                }
            } catch (TimeoutException e) {
                throw new IllegalStateException("topics " + names + " not served within " + READY_TIMEOUT, e);
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                throw new IllegalStateException("interrupted while waiting for topics " + names, e);
            }
            pause(METADATA_RETRY);
        }
    }

    private static void pause(Duration duration) {
        try {
            Thread.sleep(duration.toMillis());
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException("interrupted while waiting for the broker", e);
        }
    }

    private static Admin admin(String bootstrapServers) {
        int timeoutMs = (int) READY_TIMEOUT.toMillis();
        return Admin.create(Map.of(
                AdminClientConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers,
                AdminClientConfig.CLIENT_ID_CONFIG, "interim-embedded-admin",
                AdminClientConfig.DEFAULT_API_TIMEOUT_MS_CONFIG, timeoutMs,
                AdminClientConfig.REQUEST_TIMEOUT_MS_CONFIG, Math.min(timeoutMs, 30_000)));
    }

    /**
     * The exception that reports a port already in use, or null. Kafka wraps the {@link BindException}
     * in one that names the address ("Socket server failed to bind to 127.0.0.1:9092: ..."): that
     * one is returned when present.
     */
    private static Throwable bindFailure(Throwable thrown) {
        for (Throwable t = thrown; t != null; t = t.getCause()) {
            if (t.getCause() instanceof BindException || t instanceof BindException) {
                return t;
            }
        }
        return null;
    }

    /** A port the broker was to listen on is in use. */
    private static final class PortTakenException extends RuntimeException {
        private static final long serialVersionUID = 1L;
        final int port;

        PortTakenException(int port, String message, Throwable cause) {
            super(message, cause);
            this.port = port;
        }
    }
}
