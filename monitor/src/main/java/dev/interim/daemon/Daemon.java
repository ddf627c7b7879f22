package dev.interim.daemon;

import dev.interim.config.HttpSettings;
import dev.interim.events.MappedExperiment;
import dev.interim.text.Durations;
import dev.interim.config.InterimConfig;
import dev.interim.config.KafkaSettings;
import dev.interim.embedded.EmbeddedKafka;
import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.LookReport;
import dev.interim.experiment.Tally;
import dev.interim.experiment.ExperimentView;
import dev.interim.http.ExperimentApi;
import dev.interim.http.HttpEndpoint;
import dev.interim.signal.DecisionJson;
import dev.interim.signal.Meters;
import dev.interim.signal.WebhookSender;
import dev.interim.stream.BadEventException;
import dev.interim.events.Catalog;
import dev.interim.stream.JsonEventReader;
import dev.interim.stream.JudgeStage;
import dev.interim.stream.StageEvents;
import dev.interim.stream.StreamSettings;
import dev.interim.stream.TallyStage;
import java.io.IOException;
import java.net.BindException;
import java.net.InetAddress;
import java.net.NetworkInterface;
import java.net.SocketException;
import java.net.UnknownHostException;
import java.nio.file.Path;
import java.time.Clock;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Properties;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.TimeUnit;
import java.util.function.Consumer;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.admin.CreateTopicsResult;
import org.apache.kafka.clients.admin.ConsumerGroupDescription;
import org.apache.kafka.clients.admin.DescribeClusterOptions;
import org.apache.kafka.clients.admin.MemberDescription;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.clients.admin.TopicDescription;
import org.apache.kafka.common.config.TopicConfig;
import org.apache.kafka.common.errors.AuthenticationException;
import org.apache.kafka.common.errors.FencedInstanceIdException;
import org.apache.kafka.common.errors.TopicExistsException;
import org.apache.kafka.common.errors.UnreleasedInstanceIdException;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The monitor daemon, wired: the HTTP endpoint first (so that {@code /health} can say what the
 * daemon waits for), the embedded broker when no bootstrap servers are configured, the brokers
 * reached, the topics, the tally and judge stages on their own threads, meters on {@code /metrics},
 * the kill webhook, and one log line per decision. {@link #close()} stops everything in order.
 *
 * <p>Each stage is a static member of its consumer group (KIP-345): its {@code group.instance.id}
 * is {@code <kafka.instance_id>-judge} or {@code <kafka.instance_id>-tally-<n>}, stable across
 * restarts of the same daemon, so that a restarted daemon gets its partitions back at once instead
 * of after the session timeout of its predecessor. Ordinary problems of the environment (the port
 * in use, an address not of this machine, brokers out of reach, an instance id claimed by another
 * running daemon) are {@link EnvironmentException}s with one line saying what to do.
 */
public final class Daemon implements AutoCloseable {
    private static final Logger LOG = LoggerFactory.getLogger(Daemon.class);
    /** Partitions of the state topics, and of input topics the daemon creates itself. */
    static final int STATE_PARTITIONS = 3;
    /** How long one attempt to reach the brokers waits, and how often an unreachable broker is logged. */
    static final Duration BROKER_ATTEMPT = Duration.ofSeconds(5);
    /** How long the instance that decides an experiment elsewhere is remembered (API answers). */
    private static final Duration OWNERS_TTL = Duration.ofSeconds(5);

    private final InterimConfig config;
    /** The event mapping and the compiled catalog, made once: every reader, tally stage and the judge share it. */
    private final dev.interim.events.EventCatalog eventCatalog;
    private final Catalog catalog;
    private final java.util.Set<String> configuredIds;
    private final Meters meters;
    private final HttpEndpoint http;
    private final String instanceId;
    private final List<TallyStage> tallies = new ArrayList<>();
    private final List<Thread> threads = new ArrayList<>();
    private final CompletableFuture<RuntimeException> failure = new CompletableFuture<>();
    private volatile EmbeddedKafka broker;
    private volatile StreamSettings settings;
    private volatile Admin admin;
    private volatile JudgeStage judge;
    private volatile ExecutorService webhooks;
    private volatile KafkaDeliveryLog deliveries;
    private volatile boolean closing;
    /** What the daemon is doing, for /health and the API's 503 answers. */
    private volatile Phase phase = new Phase(Phase.Kind.STARTING, "starting");
    private volatile Owners owners = new Owners(Map.of(), 0);

    private record Phase(Kind kind, String detail) {
        enum Kind { STARTING, BROKER_UNREACHABLE, RUNNING, STOPPED }
    }

    /** Judge-group member by tallies partition, as the group coordinator described it, and when. */
    private record Owners(Map<Integer, String> byPartition, long at) {}

    /** What a caller may watch besides the records on the decisions topic. */
    public record Options(Path dataDir, Clock clock, Consumer<DecisionRecord> onDecision) {
        public Options {
            clock = clock == null ? Clock.systemUTC() : clock;
            onDecision = onDecision == null ? d -> { } : onDecision;
        }
    }

    private Daemon(InterimConfig config, Options options) {
        this.config = config;
        KafkaSettings kafka = config.kafka();
        Map<String, Object> client = new HashMap<>(kafka.properties().forClients());
        checkClientProperties(kafka, client);
        List<ExperimentDefinition> definitions = config.experiments().stream().map(MappedExperiment::definition).toList();
        eventCatalog = config.catalog();
        catalog = eventCatalog.catalog();
        configuredIds = java.util.Set.copyOf(definitions.stream().map(ExperimentDefinition::id).toList());
        meters = new Meters();
        definitions.forEach(meters::expect);
        meters.assignment(() -> judge != null && judge.assigned());
        http = startHttp(config.http(), meters);
        try {
            instanceId = kafka.instanceId().orElseGet(() -> defaultInstanceId(http.port()));
            installRoutes(options.clock());
            if (kafka.embedded()) {
                Path dir = options.dataDir() != null ? options.dataDir() : Path.of("interim-data");
                phase = new Phase(Phase.Kind.STARTING, "starting the embedded Kafka broker");
                try {
                    broker = EmbeddedKafka.start(dir.toAbsolutePath());
                } catch (IllegalStateException | java.io.UncheckedIOException e) {
                    String why = String.valueOf(e.getMessage());
                    if (why.contains("is in use by")) {
                        throw new EnvironmentException(oneLine(why) + ": stop the other daemon using it, or give this one "
                                + "its own --data-dir", e);
                    }
                    if (why.contains("cannot prepare the Kafka data directory")) {
                        throw new EnvironmentException(oneLine(why) + " (" + brokerProblem(e) + "): check that it can be "
                                + "written, or choose another --data-dir", e);
                    }
                    throw e;
                }
                LOG.info("embedded Kafka broker at {} with its data in {}", broker.bootstrapServers(), broker.dataDir());
            }
            String bootstrap = broker != null ? broker.bootstrapServers() : String.join(",", kafka.bootstrapServers());
            settings = new StreamSettings(bootstrap, client, kafka.inputTopics(), kafka.decisionsTopic(), kafka.deadLetterTopic(),
                    kafka.stateTopicPrefix(), kafka.consumerGroupPrefix(), kafka.commitInterval(), STATE_PARTITIONS);
            phase = new Phase(Phase.Kind.STARTING, "connecting to the Kafka broker(s) at " + bootstrap);
            awaitBrokers(kafka.startupTimeout());
            phase = new Phase(Phase.Kind.STARTING, "creating the topics on " + bootstrap);
            createTopics(settings, admin);
            phase = new Phase(Phase.Kind.STARTING, "starting the stages");
            startStages(config, options, definitions.size());
            phase = new Phase(Phase.Kind.RUNNING, "");
        } catch (RuntimeException e) {
            phase = new Phase(Phase.Kind.STOPPED, "could not start");
            close();
            throw e;
        }
    }

    private void startStages(InterimConfig config, Options options, int experiments) {
        webhooks = Executors.newSingleThreadExecutor(r -> daemonThread(r, "interim-webhook"));
        deliveries = config.webhook().isPresent() ? new KafkaDeliveryLog(settings, settings.deliveriesTopic()) : null;
        WebhookSender sender = config.webhook().map(w -> WebhookSender.to(w.url(),
                        dev.interim.signal.SigningKey.parse(w.signingKey().reveal()))
                .maxAttempts(w.maxAttempts()).backoff(w.initialBackoff(), w.initialBackoff().multipliedBy(32))
                .requestTimeout(w.timeout()).deliveryLog(deliveries).build()).orElse(null);
        StageEvents events = new Events(meters, sender, webhooks, options.onDecision());
        // A default id made of an HTTP port the system chose (http.port: 0) will not come back after a
        // restart: such a daemon leaves its groups when it stops, instead of holding its partitions
        // until its session expires.
        boolean leave = config.kafka().instanceId().isEmpty() && config.http().port() == 0;
        for (int i = 0; i < config.kafka().tallyThreads(); i++) {
            tallies.add(new TallyStage(settings, catalog, new JsonEventReader(eventCatalog), events, tallyMember(i), options.clock())
                    .leaveGroupOnClose(leave));
        }
        judge = new JudgeStage(settings, catalog, options.clock(), events, new dev.interim.stream.DecisionWriter() {
            @Override
            public byte[] decision(DecisionRecord record) {
                return DecisionJson.write(record);
            }

            @Override
            public byte[] acknowledgement(dev.interim.experiment.Acknowledgement acknowledgement) {
                return DecisionJson.write(acknowledgement);
            }
        }, judgeMember()).leaveGroupOnClose(leave);
        for (int i = 0; i < tallies.size(); i++) {
            start(tallies.get(i), tallies.size() == 1 ? "interim-tally" : "interim-tally-" + (i + 1),
                    settings.tallyGroup(), tallyMember(i));
        }
        start(judge, "interim-judge", settings.judgeGroup(), judgeMember());
        if (sender != null) {
            webhooks.submit(() -> redeliver(sender));
        }
        LOG.info("interim watching {} experiment(s) on {} as instance '{}'; metrics at {}", experiments,
                settings.inputTopics(), instanceId, http.uri().resolve("/metrics"));
    }

    private String judgeMember() {
        return instanceId + "-judge";
    }

    private String tallyMember(int index) {
        return instanceId + "-tally-" + (index + 1);
    }

    /**
     * The default {@code kafka.instance_id}: this host's name and the HTTP port. Stable across
     * restarts of the same daemon (same host, same configuration), and distinct between two daemons
     * running at once: on one host they cannot share a port. A host whose name changes at every
     * start (a container without a stable name) gets no benefit from it; set kafka.instance_id there.
     */
    static String defaultInstanceId(int httpPort) {
        String host;
        try {
            host = InetAddress.getLocalHost().getHostName();
        } catch (IOException | RuntimeException e) {
            host = System.getenv().getOrDefault("HOSTNAME", "localhost");
        }
        String clean = host.replaceAll("[^A-Za-z0-9._-]", "_");
        if (clean.isEmpty()) {
            clean = "localhost";
        }
        return (clean.length() > 180 ? clean.substring(0, 180) : clean) + "-" + httpPort;
    }

    /** {@code kafka.properties} as the clients read them: a value they refuse stops the start here. */
    private static void checkClientProperties(KafkaSettings kafka, Map<String, Object> client) {
        String bootstrap = kafka.embedded() ? "127.0.0.1:9092" : String.join(",", kafka.bootstrapServers());
        StreamSettings check = new StreamSettings(bootstrap, client, kafka.inputTopics(), kafka.decisionsTopic(),
                kafka.deadLetterTopic(), kafka.stateTopicPrefix(), kafka.consumerGroupPrefix(), kafka.commitInterval(),
                STATE_PARTITIONS);
        try {
            check.checkClientProperties();
        } catch (org.apache.kafka.common.config.ConfigException e) {
            throw new EnvironmentException(clientPropertyProblem(e.getMessage(), kafka.properties().names()), e);
        }
    }

    /**
     * Kafka's "Invalid value X for configuration NAME: why" as "kafka.properties.NAME: why", without
     * the value (it may be a credential).
     */
    static String clientPropertyProblem(String kafkaMessage, java.util.Set<String> written) {
        String message = kafkaMessage == null ? "" : kafkaMessage;
        java.util.regex.Matcher m = java.util.regex.Pattern.compile("^Invalid value .* for configuration ([A-Za-z0-9._-]+)(?::\\s*(.*))?$",
                java.util.regex.Pattern.DOTALL).matcher(message);
        if (m.matches()) {
            String name = m.group(1);
            String why = m.group(2) == null || m.group(2).isBlank() ? "the Kafka clients refuse its value" : m.group(2).strip();
            String where = written.contains(name) ? "kafka.properties." + name : "kafka.properties (" + name + ")";
            return where + ": " + oneLine(why) + "; fix the value in the configuration file";
        }
        for (String name : written) {
            if (message.contains(name)) {
                return "kafka.properties." + name + ": the Kafka clients refuse it; fix it in the configuration file";
            }
        }
        return "kafka.properties: the Kafka clients refuse these properties; fix them in the configuration file";
    }

    /** Binds the HTTP endpoint, or says in one line why it cannot. */
    private static HttpEndpoint startHttp(HttpSettings settings, Meters meters) {
        String bind = settings.bindAddress();
        String shown = dev.interim.text.UserText.quoted(bind);
        InetAddress address;
        try {
            address = InetAddress.getByName(bind);
        } catch (UnknownHostException e) {
            throw new EnvironmentException("http.bind_address " + shown + " does not resolve to an address: use an address "
                    + "or host name of this machine, such as 127.0.0.1 (this machine only) or 0.0.0.0 (every interface)", e);
        }
        if (!local(address)) {
            throw new EnvironmentException("http.bind_address " + shown + " (" + address.getHostAddress() + ") is not an "
                    + "address of this machine: use one of its addresses, 127.0.0.1 (this machine only) or 0.0.0.0 (every interface)");
        }
        String where = (address.getHostAddress().contains(":") ? "[" + address.getHostAddress() + "]" : address.getHostAddress())
                + ":" + settings.port();
        try {
            return HttpEndpoint.builder().bindAddress(bind).port(settings.port()).allowedHosts(settings.allowedHosts())
                    .metrics(meters::scrape).start();
        } catch (RuntimeException e) {
            BindException bindFailure = cause(e, BindException.class);
            if (bindFailure == null) {
                throw e;
            }
            String why = bindFailure.getMessage() == null ? "" : bindFailure.getMessage();
            if (why.toLowerCase(java.util.Locale.ROOT).contains("in use")) {
                throw new EnvironmentException("cannot listen on " + where + ": the port is already in use (another interim "
                        + "daemon with this configuration?); stop the other process, or set http.port to a free port", e);
            }
            throw new EnvironmentException("cannot listen on " + where + " (" + oneLine(why) + "): set http.bind_address and "
                    + "http.port to an address and port this process may use", e);
        }
    }

    private static boolean local(InetAddress address) {
        if (address.isAnyLocalAddress() || address.isLoopbackAddress()) {
            return true;
        }
        try {
            return NetworkInterface.getByInetAddress(address) != null;
        } catch (SocketException e) {
            return true;   // cannot tell: let the bind decide
        }
    }

    /**
     * Tries to reach the brokers until they answer or {@code timeout} has passed, logging each failed
     * attempt with the address and the reason, and saying so on {@code /health} meanwhile.
     */
    private void awaitBrokers(Duration timeout) {
        String bootstrap = settings.bootstrapServers();
        long deadline = System.nanoTime() + timeout.toNanos();
        boolean failedBefore = false;
        while (true) {
            long attemptStart = System.nanoTime();
            String problem;
            try {
                if (admin == null) {
                    admin = Admin.create(adminProperties(settings));
                }
                admin.describeCluster(new DescribeClusterOptions().timeoutMs((int) BROKER_ATTEMPT.toMillis()))
                        .nodes().get(BROKER_ATTEMPT.toMillis() + 1000, TimeUnit.MILLISECONDS);
                if (failedBefore) {
                    LOG.info("reached the Kafka broker(s) at {}", bootstrap);
                }
                return;
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                throw new EnvironmentException("interrupted while waiting for the Kafka broker(s) at " + bootstrap, e);
            } catch (Exception e) {
                AuthenticationException refused = cause(e, AuthenticationException.class);
                if (refused != null) {
                    throw new EnvironmentException("the Kafka broker(s) at " + bootstrap + " refused this client ("
                            + oneLine(String.valueOf(refused.getMessage())) + "): check the credentials and security "
                            + "settings in kafka.properties", e);
                }
                problem = brokerProblem(e);
            }
            failedBefore = true;
            long left = deadline - System.nanoTime();
            phase = new Phase(Phase.Kind.BROKER_UNREACHABLE, bootstrap + " (" + problem + ")");
            if (left <= 0) {
                throw new EnvironmentException("cannot reach the Kafka broker(s) at " + bootstrap + " (" + problem + "); gave up after "
                        + Durations.format(timeout) + " (kafka.startup_timeout): check kafka.bootstrap_servers, the network and the brokers");
            }
            LOG.warn("cannot reach the Kafka broker(s) at {} ({}); retrying, for {} more (kafka.startup_timeout)", bootstrap,
                    problem, Durations.format(Duration.ofSeconds(Math.max(1, Math.round(left / 1e9)))));
            long wait = Math.min(left, BROKER_ATTEMPT.toNanos() - (System.nanoTime() - attemptStart));
            if (wait > 0) {
                try {
                    TimeUnit.NANOSECONDS.sleep(wait);
                } catch (InterruptedException e) {
                    Thread.currentThread().interrupt();
                    throw new EnvironmentException("interrupted while waiting for the Kafka broker(s) at " + bootstrap, e);
                }
            }
        }
    }

    private static String brokerProblem(Exception e) {
        if (e instanceof java.util.concurrent.TimeoutException
                || cause(e, org.apache.kafka.common.errors.TimeoutException.class) != null) {
            return "no answer within " + BROKER_ATTEMPT.toSeconds() + " s";
        }
        Throwable root = e instanceof java.util.concurrent.ExecutionException && e.getCause() != null ? e.getCause() : e;
        while (root.getCause() != null && root.getCause() != root) {
            root = root.getCause();
        }
        String message = root.getMessage();
        return message == null || message.isBlank() ? root.getClass().getSimpleName() : oneLine(message);
    }

    private static Properties adminProperties(StreamSettings s) {
        Properties p = new Properties();
        p.putAll(s.clientProperties());
        p.put(AdminClientConfig.BOOTSTRAP_SERVERS_CONFIG, s.bootstrapServers());
        return p;
    }

    /** The HTTP routes: health, the JSON API and the dashboard; they answer 503 until the work is owned. */
    private void installRoutes(java.time.Clock clock) {
        http.route("GET", "/health", request -> health());
        ExperimentApi.install(http, new ExperimentApi.Operations() {
            @Override
            public Map<String, ExperimentView> views() {
                JudgeStage j = judge;
                return j == null ? Map.of() : j.views();
            }

            @Override
            public CompletableFuture<List<DecisionRecord>> hold(String experiment, String reason) {
                return judge.hold(experiment, reason);
            }

            @Override
            public CompletableFuture<List<DecisionRecord>> resume(String experiment) {
                return judge.resume(experiment);
            }

            @Override
            public CompletableFuture<List<DecisionRecord>> forceStop(String experiment, String arm, String reason) {
                return judge.forceStop(experiment, arm, reason);
            }

            @Override
            public CompletableFuture<List<DecisionRecord>> acknowledge(String experiment) {
                return judge.acknowledge(experiment);
            }

            @Override
            public ExperimentApi.Ownership ownership() {
                return Daemon.this.ownership();
            }

            @Override
            public java.util.Set<String> configured() {
                return configuredIds;
            }

            @Override
            public Optional<String> ownerOf(String experiment) {
                return Daemon.this.ownerOf(experiment);
            }
        }, () -> config.http().adminToken().filter(dev.interim.config.Secret::isRead).map(dev.interim.config.Secret::reveal));
        dev.interim.dashboard.Dashboard.install(http, () -> {
            JudgeStage j = judge;
            return j == null ? Map.of() : j.views();
        }, clock);
    }

    private ExperimentApi.Ownership ownership() {
        Phase p = phase;
        JudgeStage j = judge;
        if (p.kind() == Phase.Kind.RUNNING && j != null && j.assigned()) {
            return ExperimentApi.Ownership.ASSIGNED;
        }
        return ExperimentApi.Ownership.notYet(switch (p.kind()) {
            case STARTING -> p.detail();
            case BROKER_UNREACHABLE -> "broker unreachable: " + p.detail();
            case STOPPED -> "stopped: " + p.detail();
            case RUNNING -> "joining the consumer group '" + settings.judgeGroup() + "' as '" + judgeMember() + "'";
        });
    }

    /**
     * {@code GET /health}: 200 once this instance holds its share of the work, with what it decides;
     * 503 with the reason while it starts, cannot reach the brokers, joins its group or has stopped.
     */
    private HttpEndpoint.Response health() {
        ExperimentApi.Ownership o = ownership();
        if (!o.assigned()) {
            String text = phase.kind() == Phase.Kind.BROKER_UNREACHABLE ? o.reason()
                    : "not ready: this instance owns no experiments yet: " + o.reason();
            return HttpEndpoint.Response.text(503, text)
                    .withHeader("Retry-After", Integer.toString(ExperimentApi.RETRY_AFTER_SECONDS));
        }
        int decided = judge.views().size();
        int configured = configuredIds.size();
        return HttpEndpoint.Response.text(200, "ok: decides " + decided + " of " + configured + " configured experiment(s)"
                + (decided < configured ? "; another instance decides the others" : ""));
    }

    /** The instance that decides {@code experiment}, as the judge group's coordinator describes it. */
    private Optional<String> ownerOf(String experiment) {
        Admin a = admin;
        StreamSettings s = settings;
        if (a == null || s == null) {
            return Optional.empty();
        }
        Owners known = owners;
        if (System.nanoTime() - known.at() > OWNERS_TTL.toNanos() || known.byPartition().isEmpty()) {
            Map<Integer, String> byPartition = new HashMap<>();
            try {
                ConsumerGroupDescription group = a.describeConsumerGroups(List.of(s.judgeGroup()))
                        .describedGroups().get(s.judgeGroup()).get(2, TimeUnit.SECONDS);
                for (MemberDescription m : group.members()) {
                    String who = m.groupInstanceId().map(id -> "member '" + id + "'").orElse("member '" + m.consumerId() + "'")
                            + " on " + m.host();
                    m.assignment().topicPartitions().stream().filter(tp -> tp.topic().equals(s.talliesTopic()))
                            .forEach(tp -> byPartition.put(tp.partition(), who));
                }
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                return Optional.empty();
            } catch (Exception e) {
                LOG.debug("could not describe the consumer group {}: {}", s.judgeGroup(), e.toString());
                return Optional.empty();
            }
            known = new Owners(Map.copyOf(byPartition), System.nanoTime());
            owners = known;
        }
        return Optional.ofNullable(known.byPartition().get(s.stateFor(experiment)));
    }

    /** Starts the daemon; returns once its threads run (the stages join their groups on their own). */
    public static Daemon start(InterimConfig config, Options options) {
        return new Daemon(config, options);
    }

    public String bootstrapServers() {
        return settings.bootstrapServers();
    }

    /** This daemon's {@code kafka.instance_id} (configured or derived). */
    public String instanceId() {
        return instanceId;
    }

    /**
     * Completes (with the reason) when the daemon cannot go on: a stage stopped, or another running
     * daemon took this one's instance id ({@link EnvironmentException}). {@code interim run} then
     * stops the daemon and exits with the reason.
     */
    public CompletableFuture<RuntimeException> failure() {
        return failure;
    }

    public StreamSettings settings() {
        return settings;
    }

    public int httpPort() {
        return http.port();
    }

    public Meters meters() {
        return meters;
    }

    /** The experiments this instance decides now. */
    public List<ExperimentMonitor> experiments() {
        return List.copyOf(judge.owned());
    }

    /** Immutable pictures of the experiments this instance decides, as of their last look. */
    public Map<String, ExperimentView> views() {
        return judge.views();
    }

    /**
     * Kill decisions committed before a crash or restart whose webhook was never acknowledged are
     * delivered now, once: the decisions topic is the record of what was decided, the deliveries
     * topic of what was delivered. (Receivers should still treat webhook-id as an idempotency key, as
     * the Standard Webhooks specification asks: with several instances, each may redeliver.)
     */
    private void redeliver(WebhookSender sender) {
        List<DecisionRecord> undelivered = new ArrayList<>();
        try {
            dev.interim.stream.StateReader.readAll(settings, settings.decisionsTopic(), null, (key, value) -> {
                if (value == null || DecisionJson.ACKNOWLEDGEMENT_TYPE.equals(DecisionJson.type(value))) {
                    return;
                }
                try {
                    DecisionRecord d = DecisionJson.read(value);
                    if (d.killRequested() && !deliveries.delivered(d.decisionId())) {
                        undelivered.add(d);
                    }
                } catch (RuntimeException unreadable) {
                    LOG.warn("a record on {} is not a decision record; skipped", settings.decisionsTopic());
                }
            });
        } catch (RuntimeException e) {
            LOG.warn("could not scan {} for undelivered kills: {}", settings.decisionsTopic(), e.toString());
            return;
        }
        for (DecisionRecord d : undelivered) {
            LOG.info("delivering kill decision {} ({}/{}/{}) left undelivered before the restart", d.decisionId(),
                    d.experiment(), d.arm(), d.metric());
            meters.webhook(sender.send(d));
        }
    }

    private void start(Runnable stage, String name, String group, String member) {
        Thread t = new Thread(() -> {
            try {
                stage.run();
            } catch (RuntimeException e) {
                if (closing) {
                    LOG.debug("{} stopped while closing: {}", name, e.toString());
                    return;
                }
                RuntimeException reason = stageFailure(e, name, group, member);
                if (reason instanceof EnvironmentException) {
                    LOG.error("{}", reason.getMessage());
                } else {
                    LOG.error("{} stopped: {}", name, e.toString(), e);
                }
                phase = new Phase(Phase.Kind.STOPPED, reason.getMessage());
                failure.complete(reason);
            }
        }, name);
        t.start();
        threads.add(t);
    }

    /** Why a stage stopped, as the command line will say it. */
    static RuntimeException stageFailure(RuntimeException e, String thread, String group, String member) {
        if (cause(e, FencedInstanceIdException.class) != null || cause(e, UnreleasedInstanceIdException.class) != null) {
            return new EnvironmentException("another running process joined the consumer group '" + group + "' as '" + member
                    + "', this daemon's member id: two running daemons must not share a kafka.instance_id; give each its "
                    + "own kafka.instance_id (or stop the other one)", e);
        }
        return new IllegalStateException("the " + thread + " thread stopped: " + e, e);
    }

    private static <T extends Throwable> T cause(Throwable e, Class<T> type) {
        for (Throwable t = e; t != null; t = t.getCause() == t ? null : t.getCause()) {
            if (type.isInstance(t)) {
                return type.cast(t);
            }
        }
        return null;
    }

    private static String oneLine(String text) {
        return text.strip().replaceAll("\\s*\\R\\s*", " ");
    }

    private static Thread daemonThread(Runnable r, String name) {
        Thread t = new Thread(r, name);
        t.setDaemon(true);
        return t;
    }

    /** Creates what is missing: input, decisions and dead-letter topics, and the compacted state topics. */
    static void createTopics(StreamSettings s, Admin admin) {
        try {
            List<NewTopic> topics = new ArrayList<>();
            for (String input : s.inputTopics()) {
                topics.add(new NewTopic(input, STATE_PARTITIONS, (short) 1));
            }
            topics.add(new NewTopic(s.decisionsTopic(), STATE_PARTITIONS, (short) 1));
            topics.add(new NewTopic(s.deadLetterTopic(), 1, (short) 1));
            topics.add(compacted(s.talliesTopic(), s.statePartitions()));
            topics.add(compacted(s.looksTopic(), s.statePartitions()));
            topics.add(compacted(s.deliveriesTopic(), 1));
            Map<String, Integer> created = createMissing(admin, topics);
            int inputPartitions = 1;
            // An input topic just created is not described: the broker may not know it yet.
            List<String> existing = new ArrayList<>();
            for (String input : s.inputTopics()) {
                if (created.containsKey(input)) {
                    inputPartitions = Math.max(inputPartitions, created.get(input));
                } else {
                    existing.add(input);
                }
            }
            if (!existing.isEmpty()) {
                Map<String, TopicDescription> described = admin.describeTopics(existing).allTopicNames().get(30, TimeUnit.SECONDS);
                for (TopicDescription d : described.values()) {
                    inputPartitions = Math.max(inputPartitions, d.partitions().size());
                }
            }
            createMissing(admin, List.of(compacted(s.unitsTopic(), inputPartitions)));
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new EnvironmentException("interrupted while creating the topics on " + s.bootstrapServers(), e);
        } catch (Exception e) {
            throw new EnvironmentException("could not create the topics on " + s.bootstrapServers() + " (" + brokerProblem(e)
                    + "): check that this client may create and describe topics there, or create them beforehand", e);
        }
    }

    private static NewTopic compacted(String name, int partitions) {
        return new NewTopic(name, partitions, (short) 1).configs(Map.of(TopicConfig.CLEANUP_POLICY_CONFIG,
                TopicConfig.CLEANUP_POLICY_COMPACT));
    }

    /**
     * Creates {@code topics} in one request (a request per topic made a round trip to the controller
     * each at start-up), leaving those that exist as they are.
     *
     * @return the partition counts of the topics this request created (not those that existed)
     */
    private static Map<String, Integer> createMissing(Admin admin, List<NewTopic> topics) throws Exception {
        Map<String, NewTopic> byName = new java.util.LinkedHashMap<>();
        topics.forEach(t -> byName.putIfAbsent(t.name(), t));   // one name twice would fail the whole request
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(30);
        CreateTopicsResult result = admin.createTopics(byName.values());
        Map<String, Integer> created = new HashMap<>();
        for (String name : byName.keySet()) {
            try {
                created.put(name, result.numPartitions(name).get(Math.max(1, deadline - System.nanoTime()), TimeUnit.NANOSECONDS));
            } catch (java.util.concurrent.ExecutionException e) {
                if (!(e.getCause() instanceof TopicExistsException)) {
                    throw e;
                }
            }
        }
        return created;
    }

    /** Meters, logs and webhooks from the stages' reports. */
    private static final class Events implements StageEvents {
        private final Meters meters;
        private final WebhookSender sender;
        private final ExecutorService webhooks;
        private final Consumer<DecisionRecord> onDecision;

        Events(Meters meters, WebhookSender sender, ExecutorService webhooks, Consumer<DecisionRecord> onDecision) {
            this.meters = meters;
            this.sender = sender;
            this.webhooks = webhooks;
            this.onDecision = onDecision;
        }

        @Override
        public void accepted(String experiment, long events) {
            meters.eventsAccepted(experiment, events);
        }

        @Override
        public void rejected(BadEventException.Reason reason) {
            meters.eventRejected(reason.label());
        }

        @Override
        public void owned(ExperimentMonitor monitor) {
            meters.own(monitor);
        }

        @Override
        public void disowned(ExperimentMonitor monitor) {
            meters.disown(monitor.definition().id());
        }

        @Override
        public void looked(LookReport report, Map<String, Map<String, Tally>> tallies, Duration took) {
            meters.looked(report, tallies, took);
        }

        @Override
        public void committed(List<DecisionRecord> decisions) {
            for (DecisionRecord d : decisions) {
                meters.decided(d);
                LOG.info("decision {} {}/{}/{} look {} fraction {} z {} boundary {} alpha_spent {} id {}{}",
                        d.decision(), d.experiment(), d.arm(), d.metric(), d.look(), fmt(d.fraction()),
                        fmt(d.statistic()), fmt(d.boundary()), fmt(d.alphaSpent()), d.decisionId(),
                        d.dryRun() ? " (dry run)" : "");
                onDecision.accept(d);
                if (d.killRequested() && sender != null) {
                    webhooks.submit(() -> meters.webhook(sender.send(d)));
                }
            }
        }

        private static String fmt(double x) {
            return dev.interim.text.Numbers.significant(x, 4);
        }
    }

    /** Stops everything that was started, in order; safe to call more than once. */
    @Override
    public synchronized void close() {
        closing = true;
        tallies.forEach(TallyStage::close);
        if (judge != null) {
            judge.close();
        }
        for (Thread t : threads) {
            if (t == Thread.currentThread()) {
                continue;
            }
            try {
                t.join(TimeUnit.SECONDS.toMillis(30));
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
            }
        }
        threads.clear();
        if (webhooks != null) {
            webhooks.shutdown();
            try {
                webhooks.awaitTermination(10, TimeUnit.SECONDS);
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
            }
        }
        http.close();
        if (deliveries != null) {
            deliveries.close();
            deliveries = null;
        }
        if (admin != null) {
            admin.close(Duration.ofSeconds(5));
            admin = null;
        }
        if (broker != null) {
            broker.close();
            broker = null;
        }
    }
}
