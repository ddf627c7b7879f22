package dev.interim.daemon;

import dev.interim.events.MappedExperiment;
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
import dev.interim.stream.Catalog;
import dev.interim.stream.JsonEventReader;
import dev.interim.stream.JudgeStage;
import dev.interim.stream.StageEvents;
import dev.interim.stream.StreamSettings;
import dev.interim.stream.TallyStage;
import java.nio.file.Path;
import java.time.Clock;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.TimeUnit;
import java.util.function.Consumer;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.clients.admin.TopicDescription;
import org.apache.kafka.common.config.TopicConfig;
import org.apache.kafka.common.errors.TopicExistsException;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The monitor daemon, wired: the embedded broker when no bootstrap servers are configured, the
 * topics, the tally and judge stages on their own threads, meters on {@code /metrics}, the kill
 * webhook, and one log line per decision. {@link #close()} stops everything in order.
 */
public final class Daemon implements AutoCloseable {
    private static final Logger LOG = LoggerFactory.getLogger(Daemon.class);
    /** Partitions of the state topics, and of input topics the daemon creates itself. */
    static final int STATE_PARTITIONS = 3;

    private final EmbeddedKafka broker;
    private final StreamSettings settings;
    private final Meters meters;
    private final HttpEndpoint http;
    private final List<TallyStage> tallies = new ArrayList<>();
    private final JudgeStage judge;
    private final List<Thread> threads = new ArrayList<>();
    private final ExecutorService webhooks;
    private final KafkaDeliveryLog deliveries;

    /** What a caller may watch besides the records on the decisions topic. */
    public record Options(Path dataDir, Clock clock, Consumer<DecisionRecord> onDecision) {
        public Options {
            clock = clock == null ? Clock.systemUTC() : clock;
            onDecision = onDecision == null ? d -> { } : onDecision;
        }
    }

    private Daemon(InterimConfig config, Options options) {
        KafkaSettings kafka = config.kafka();
        if (kafka.embedded()) {
            Path dir = options.dataDir() != null ? options.dataDir() : Path.of("interim-data");
            broker = EmbeddedKafka.start(dir.toAbsolutePath());
            LOG.info("embedded Kafka broker at {} with its data in {}", broker.bootstrapServers(), broker.dataDir());
        } else {
            broker = null;
        }
        String bootstrap = broker != null ? broker.bootstrapServers() : String.join(",", kafka.bootstrapServers());
        Map<String, Object> client = new HashMap<>(kafka.properties().forClients());
        settings = new StreamSettings(bootstrap, client, kafka.inputTopics(), kafka.decisionsTopic(), kafka.deadLetterTopic(),
                kafka.stateTopicPrefix(), kafka.consumerGroupPrefix(), kafka.commitInterval(), STATE_PARTITIONS);
        createTopics(settings);

        List<ExperimentDefinition> definitions = config.experiments().stream().map(MappedExperiment::definition).toList();
        Catalog catalog = new Catalog(definitions);
        meters = new Meters();
        webhooks = Executors.newSingleThreadExecutor(r -> daemonThread(r, "interim-webhook"));
        deliveries = config.webhook().isPresent() ? new KafkaDeliveryLog(settings, settings.deliveriesTopic()) : null;
        WebhookSender sender = config.webhook().map(w -> WebhookSender.to(w.url(),
                        dev.interim.signal.SigningKey.parse(w.signingKey().reveal()))
                .maxAttempts(w.maxAttempts()).backoff(w.initialBackoff(), w.initialBackoff().multipliedBy(32))
                .requestTimeout(w.timeout()).deliveryLog(deliveries).build()).orElse(null);
        StageEvents events = new Events(meters, sender, webhooks, options.onDecision());
        for (int i = 0; i < config.kafka().tallyThreads(); i++) {
            tallies.add(new TallyStage(settings, catalog, new JsonEventReader(config.catalog()), events));
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
        });
        http = HttpEndpoint.builder().bindAddress(config.http().bindAddress()).port(config.http().port())
                .allowedHosts(config.http().allowedHosts()).metrics(meters::scrape).start();
        ExperimentApi.install(http, new ExperimentApi.Operations() {
            @Override
            public Map<String, ExperimentView> views() {
                return judge.views();
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
        }, () -> config.http().adminToken().filter(dev.interim.config.Secret::isRead).map(dev.interim.config.Secret::reveal));
        dev.interim.dashboard.Dashboard.install(http, judge::views);
        for (int i = 0; i < tallies.size(); i++) {
            start(tallies.get(i), tallies.size() == 1 ? "interim-tally" : "interim-tally-" + (i + 1));
        }
        start(judge, "interim-judge");
        if (sender != null) {
            webhooks.submit(() -> redeliver(sender));
        }
        LOG.info("interim watching {} experiment(s) on {}; metrics at {}", definitions.size(),
                settings.inputTopics(), http.uri().resolve("/metrics"));
    }

    /** Starts the daemon; returns once its threads run (the stages join their groups on their own). */
    public static Daemon start(InterimConfig config, Options options) {
        return new Daemon(config, options);
    }

    public String bootstrapServers() {
        return settings.bootstrapServers();
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

    private void start(Runnable stage, String name) {
        Thread t = new Thread(() -> {
            try {
                stage.run();
            } catch (RuntimeException e) {
                LOG.error("{} stopped: {}", name, e.toString(), e);
            }
        }, name);
        t.start();
        threads.add(t);
    }

    private static Thread daemonThread(Runnable r, String name) {
        Thread t = new Thread(r, name);
        t.setDaemon(true);
        return t;
    }

    /** Creates what is missing: input, decisions and dead-letter topics, and the compacted state topics. */
    static void createTopics(StreamSettings s) {
        Properties p = new Properties();
        p.putAll(s.clientProperties());
        p.put(AdminClientConfig.BOOTSTRAP_SERVERS_CONFIG, s.bootstrapServers());
        try (Admin admin = Admin.create(p)) {
            List<NewTopic> topics = new ArrayList<>();
            for (String input : s.inputTopics()) {
                topics.add(new NewTopic(input, STATE_PARTITIONS, (short) 1));
            }
            topics.add(new NewTopic(s.decisionsTopic(), STATE_PARTITIONS, (short) 1));
            topics.add(new NewTopic(s.deadLetterTopic(), 1, (short) 1));
            topics.add(compacted(s.talliesTopic(), s.statePartitions()));
            topics.add(compacted(s.looksTopic(), s.statePartitions()));
            topics.add(compacted(s.deliveriesTopic(), 1));
            createMissing(admin, topics);
            int inputPartitions = 1;
            Map<String, TopicDescription> described = admin.describeTopics(s.inputTopics()).allTopicNames().get(30, TimeUnit.SECONDS);
            for (TopicDescription d : described.values()) {
                inputPartitions = Math.max(inputPartitions, d.partitions().size());
            }
            createMissing(admin, List.of(compacted(s.unitsTopic(), inputPartitions)));
        } catch (Exception e) {
            throw new IllegalStateException("could not create the topics on " + s.bootstrapServers() + ": " + e.getMessage(), e);
        }
    }

    private static NewTopic compacted(String name, int partitions) {
        return new NewTopic(name, partitions, (short) 1).configs(Map.of(TopicConfig.CLEANUP_POLICY_CONFIG,
                TopicConfig.CLEANUP_POLICY_COMPACT));
    }

    private static void createMissing(Admin admin, List<NewTopic> topics) throws Exception {
        for (NewTopic t : topics) {
            try {
                admin.createTopics(List.of(t)).all().get(30, TimeUnit.SECONDS);
            } catch (java.util.concurrent.ExecutionException e) {
                if (!(e.getCause() instanceof TopicExistsException)) {
                    throw e;
                }
            }
        }
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
            meters.register(monitor);
        }

        @Override
        public void disowned(ExperimentMonitor monitor) {
            meters.remove(monitor.definition().id());
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

    @Override
    public void close() {
        tallies.forEach(TallyStage::close);
        judge.close();
        for (Thread t : threads) {
            try {
                t.join(TimeUnit.SECONDS.toMillis(30));
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
            }
        }
        webhooks.shutdown();
        try {
            webhooks.awaitTermination(10, TimeUnit.SECONDS);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
        http.close();
        if (deliveries != null) {
            deliveries.close();
        }
        if (broker != null) {
            broker.close();
        }
    }
}
