package dev.interim.stream;

import dev.interim.experiment.Comparison;
import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.LookReport;
import dev.interim.experiment.LookResult;
import dev.interim.experiment.Tally;
import dev.interim.experiment.TallyForm;
import dev.interim.stats.Moments;
import dev.interim.stats.ProportionCounts;
import java.time.Clock;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Collection;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.Queue;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.ConcurrentLinkedQueue;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.atomic.AtomicBoolean;
import java.util.function.Function;
import org.apache.kafka.clients.consumer.ConsumerRebalanceListener;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.KafkaException;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.FencedInstanceIdException;
import org.apache.kafka.common.errors.WakeupException;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Stage 2: owns experiments — each belongs to one partition of the tallies topic, so one member of
 * the judge group decides it — merges the latest partial of every input partition (Chan et al. for
 * moments, sums for counts), looks on the wall-clock schedule of each experiment, and writes in one
 * transaction the decision records, the look history of every comparison that looked, and its
 * offsets. On taking over a partition it re-reads the (compacted) tallies from the beginning and
 * restores the look history, so α already spent is never forgotten and decisions stay absorbing.
 *
 * <p>Decisions are handed to {@link StageEvents#committed} only after their transaction commits.
 */
public final class JudgeStage implements Runnable, AutoCloseable {
    private static final Logger LOG = LoggerFactory.getLogger(JudgeStage.class);

    private final StreamSettings settings;
    private final Catalog catalog;
    private final Clock clock;
    private final StageEvents events;
    private final Function<DecisionRecord, byte[]> decisionJson;
    private final String member;
    private volatile boolean leaveGroupOnClose;
    private volatile boolean assigned;
    private final AtomicBoolean running = new AtomicBoolean(true);
    /** experiment → source → (arm, metric) → latest cumulative partial. */
    private final Map<String, Map<String, Map<String, Tally>>> partials = new HashMap<>();
    private final Map<String, ExperimentMonitor> owned = new ConcurrentHashMap<>();
    private final Map<TopicPartition, OffsetAndMetadata> pending = new HashMap<>();
    private final Map<String, ExperimentView> views = new ConcurrentHashMap<>();
    private final Queue<Command> commands = new ConcurrentLinkedQueue<>();
    private KafkaConsumer<byte[], byte[]> consumer;
    private KafkaProducer<byte[], byte[]> producer;

    public JudgeStage(StreamSettings settings, Catalog catalog, Clock clock, StageEvents events,
                      Function<DecisionRecord, byte[]> decisionJson) {
        this(settings, catalog, clock, events, decisionJson, null);
    }

    /**
     * @param member this instance's static member id in the judge group ({@code group.instance.id}),
     *               stable across restarts of the same daemon; null for a dynamic member
     */
    public JudgeStage(StreamSettings settings, Catalog catalog, Clock clock, StageEvents events,
                      Function<DecisionRecord, byte[]> decisionJson, String member) {
        this.settings = settings;
        this.catalog = catalog;
        this.clock = clock;
        this.events = events;
        this.decisionJson = decisionJson;
        this.member = member;
    }

    /**
     * True while this instance holds its assignment in the judge group (its share of the
     * experiments, possibly none); false while it connects, joins or rebalances.
     */
    public boolean assigned() {
        return assigned;
    }

    /** The experiments this instance decides now (read by meters; do not mutate). */
    public Collection<ExperimentMonitor> owned() {
        return owned.values();
    }

    /** Immutable pictures of the owned experiments, as of their last look or operator action. */
    public Map<String, ExperimentView> views() {
        return Map.copyOf(views);
    }

    /** An operator's action on an owned experiment, run on the judge's thread and committed like a look. */
    private record Command(String experiment, Function<ExperimentMonitor, List<DecisionRecord>> action,
                           CompletableFuture<List<DecisionRecord>> done) {}

    /** Holds every comparison of {@code experiment} not yet final; completes once the records are committed. */
    public CompletableFuture<List<DecisionRecord>> hold(String experiment, String reason) {
        return submit(experiment, m -> m.hold(clock.instant(), reason));
    }

    /** Stops {@code arm} for harm by an operator's decision; completes once the records are committed. */
    public CompletableFuture<List<DecisionRecord>> forceStop(String experiment, String arm, String reason) {
        return submit(experiment, m -> m.forceStop(clock.instant(), arm, reason));
    }

    /** Clears the experiment's paging signal; completes at the next commit. */
    public CompletableFuture<List<DecisionRecord>> acknowledge(String experiment) {
        return submit(experiment, m -> {
            m.acknowledge();
            return List.of();
        });
    }

    /** Ends an operator's hold; completes once the records are committed. */
    public CompletableFuture<List<DecisionRecord>> resume(String experiment) {
        return submit(experiment, m -> m.resume(clock.instant()));
    }

    private CompletableFuture<List<DecisionRecord>> submit(String experiment,
                                                           Function<ExperimentMonitor, List<DecisionRecord>> action) {
        CompletableFuture<List<DecisionRecord>> done = new CompletableFuture<>();
        commands.add(new Command(experiment, action, done));
        return done;
    }

    /** Thrown (through the future) when another instance owns the experiment, or nobody does. */
    public static final class NotOwnedException extends RuntimeException {
        NotOwnedException(String experiment) {
            super("experiment '" + experiment + "' is not decided by this instance (unknown, or owned by another)", null,
                    false, false);
        }
    }

    @Override
    public void run() {
        try {
            consumer = new KafkaConsumer<>(Clients.groupConsumer(settings, settings.judgeGroup(), member));
            producer = Clients.transactionalProducer(settings, "judge", member);
            consumer.subscribe(List.of(settings.talliesTopic()), new Rebalance());
            while (running.get()) {
                for (ConsumerRecord<byte[], byte[]> r : consumer.poll(Duration.ofMillis(200))) {
                    apply(r.key(), r.value());
                    pending.put(new TopicPartition(r.topic(), r.partition()), new OffsetAndMetadata(r.offset() + 1));
                }
                lookWhereDue();
            }
        } catch (WakeupException e) {
            if (running.get()) {
                throw e;
            }
        } finally {
            assigned = false;
            Clients.quietly(LOG, () -> producer.close(Duration.ofSeconds(5)));
            Clients.quietly(LOG, () -> Clients.close(consumer, leaveGroupOnClose));
        }
    }

    private void apply(byte[] key, byte[] value) {
        if (value == null) {
            return;
        }
        PartialKey k = PartialKey.parse(StateCodec.key(key));
        partials.computeIfAbsent(k.experiment(), e -> new HashMap<>())
                .computeIfAbsent(k.source(), s -> new HashMap<>())
                .put(k.arm() + '\u001f' + k.metric(), StateCodec.partial(value));
    }

    /** Runs the operators' actions and the looks that are due, and commits what they produced. */
    private void lookWhereDue() {
        Instant now = clock.instant();
        List<DecisionRecord> decisions = new ArrayList<>();
        List<LookReport> reports = new ArrayList<>();
        List<Duration> took = new ArrayList<>();
        List<Map<String, Map<String, Tally>>> given = new ArrayList<>();
        Set<String> changed = new HashSet<>();          // experiment \u001f arm \u001f metric
        List<Command> done = new ArrayList<>();
        List<List<DecisionRecord>> doneRecords = new ArrayList<>();
        for (Command c; (c = commands.poll()) != null; ) {
            ExperimentMonitor monitor = owned.get(c.experiment());
            if (monitor == null) {
                c.done().completeExceptionally(new NotOwnedException(c.experiment()));
                continue;
            }
            List<DecisionRecord> records;
            try {
                records = c.action().apply(monitor);
            } catch (RuntimeException refused) {
                c.done().completeExceptionally(refused);   // e.g. an unknown arm: the operator's mistake, not ours
                continue;
            }
            decisions.addAll(records);
            records.forEach(d -> changed.add(d.experiment() + '\u001f' + d.arm() + '\u001f' + d.metric()));
            done.add(c);
            doneRecords.add(records);
        }
        for (ExperimentMonitor monitor : owned.values()) {
            if (!monitor.due(now)) {
                continue;
            }
            long start = System.nanoTime();
            Merged merged = merge(monitor.definition());
            LookReport report = monitor.look(now, merged.exposures, merged.tallies);
            took.add(Duration.ofNanos(System.nanoTime() - start));
            given.add(merged.tallies);
            reports.add(report);
            decisions.addAll(report.decisions());
            for (LookResult r : report.results()) {
                changed.add(report.experiment() + '\u001f' + r.arm() + '\u001f' + r.metric());
            }
            for (DecisionRecord d : report.decisions()) {
                changed.add(d.experiment() + '\u001f' + d.arm() + '\u001f' + d.metric());
            }
        }
        if (changed.isEmpty() && reports.isEmpty() && pending.isEmpty()) {
            for (int i = 0; i < done.size(); i++) {
                done.get(i).done().complete(doneRecords.get(i));
            }
            return;
        }
        try {
            producer.beginTransaction();
            for (DecisionRecord d : decisions) {
                producer.send(new ProducerRecord<>(settings.decisionsTopic(), StateCodec.key(d.experiment()),
                        decisionJson.apply(d)));
            }
            for (String key : changed) {
                String[] k = key.split("\u001f", -1);
                Comparison c = owned.get(k[0]).comparison(k[2], k[1]);
                producer.send(new ProducerRecord<>(settings.looksTopic(), settings.stateFor(k[0]),
                        StateCodec.key(key), StateCodec.history(c.snapshot(), c.decision())));
            }
            if (!pending.isEmpty()) {
                producer.sendOffsetsToTransaction(new HashMap<>(pending), consumer.groupMetadata());
            }
            producer.commitTransaction();
            pending.clear();
        } catch (FencedInstanceIdException e) {
            done.forEach(c -> c.done().completeExceptionally(e));
            throw e;   // another process uses this instance's member id: stopping is the only safe answer
        } catch (KafkaException e) {
            LOG.warn("judge commit failed ({}); restoring owned experiments from the committed look history", e.toString());
            Clients.quietly(LOG, producer::abortTransaction);
            Clients.quietly(LOG, () -> producer.close(Duration.ofSeconds(5)));
            producer = Clients.transactionalProducer(settings, "judge", member);
            done.forEach(c -> c.done().completeExceptionally(e));
            Set<TopicPartition> assigned = new HashSet<>(consumer.assignment());
            disown(assigned);
            own(assigned);
            return;
        }
        Set<String> experiments = new HashSet<>();
        changed.forEach(k -> experiments.add(k.substring(0, k.indexOf('\u001f'))));
        reports.forEach(r -> experiments.add(r.experiment()));
        for (String id : experiments) {
            ExperimentMonitor m = owned.get(id);
            if (m != null) {
                views.put(id, m.view());
            }
        }
        for (int i = 0; i < done.size(); i++) {
            done.get(i).done().complete(doneRecords.get(i));
        }
        for (int i = 0; i < reports.size(); i++) {
            events.looked(reports.get(i), given.get(i), took.get(i));
        }
        if (!decisions.isEmpty()) {
            events.committed(decisions);
        }
    }

    /** Per-arm tallies of every metric and the exposures, summed over the input partitions. */
    private Merged merge(ExperimentDefinition definition) {
        // What each key's tally must hold now: a source not yet rewritten since a metric's kind or
        // the experiment's assignment changed still holds partials of the old form, which do not add.
        Map<String, TallyForm> forms = new HashMap<>();
        for (String arm : definition.arms()) {
            forms.put(arm + '\u001f' + PartialKey.EXPOSURES, TallyForm.RATE);
            definition.metrics().forEach(metric -> forms.put(arm + '\u001f' + metric.name(), definition.form(metric)));
        }
        Map<String, Tally> sum = new HashMap<>();
        for (Map<String, Tally> bySource : partials.getOrDefault(definition.id(), Map.of()).values()) {
            bySource.forEach((k, t) -> {
                if (t.form() == forms.get(k)) {
                    sum.merge(k, t, JudgeStage::plus);
                }
            });
        }
        Merged m = new Merged();
        for (String arm : definition.arms()) {
            Tally exposures = sum.get(arm + '\u001f' + PartialKey.EXPOSURES);
            m.exposures.put(arm, exposures == null ? 0L : exposures.count());
            definition.metrics().forEach(metric -> {
                Tally t = sum.get(arm + '\u001f' + metric.name());
                if (t != null) {
                    m.tallies.computeIfAbsent(metric.name(), x -> new HashMap<>()).put(arm, t);
                }
            });
        }
        return m;
    }

    private static final class Merged {
        final Map<String, Long> exposures = new HashMap<>();
        final Map<String, Map<String, Tally>> tallies = new HashMap<>();
    }

    /** Two partials of one key, of one form ({@link #merge} leaves out those of another), summed. */
    static Tally plus(Tally a, Tally b) {
        if (a.form() != b.form()) {
            throw new IllegalArgumentException("partials of different forms do not add: " + a.form() + " and " + b.form());
        }
        if (a instanceof Tally.Ratio x && b instanceof Tally.Ratio y) {
            return new Tally.Ratio(x.moments().plus(y.moments()));
        }
        if (a instanceof Tally.Mean x && b instanceof Tally.Mean y) {
            Moments m = x.moments().plus(y.moments());
            return new Tally.Mean(m);
        }
        ProportionCounts p = ((Tally.Rate) a).counts().plus(((Tally.Rate) b).counts());
        return new Tally.Rate(p);
    }

    private void own(Collection<TopicPartition> partitions) {
        Set<Integer> numbers = new HashSet<>();
        partitions.forEach(tp -> numbers.add(tp.partition()));
        List<ExperimentMonitor> fresh = new ArrayList<>();
        for (ExperimentDefinition e : catalog.experiments()) {
            if (numbers.contains(settings.stateFor(e.id())) && !owned.containsKey(e.id())) {
                ExperimentMonitor monitor = new ExperimentMonitor(e);
                owned.put(e.id(), monitor);
                fresh.add(monitor);
            }
        }
        if (fresh.isEmpty()) {
            return;
        }
        StateReader.readAll(settings, settings.looksTopic(), numbers, (key, value) -> {
            String[] k = StateCodec.key(key).split("\u001f", -1);
            ExperimentMonitor monitor = owned.get(k[0]);
            if (monitor != null && fresh.contains(monitor) && value != null && k.length == 3) {
                StateCodec.History h = StateCodec.history(value);
                try {
                    Comparison c = monitor.comparison(k[2], k[1]);
                    if (h.snapshot() != null) {
                        c.restore(h.snapshot(), h.decision());
                    } else {
                        c.restore(h.fractions(), h.decision());
                    }
                } catch (IllegalArgumentException gone) {
                    LOG.info("look history of {} / {} / {} no longer configured; ignored", k[0], k[1], k[2]);
                }
            }
        });
        // The partials are cumulative and compacted: re-read them from the beginning.
        consumer.seekToBeginning(partitions);
        for (ExperimentMonitor m : fresh) {
            partials.remove(m.definition().id());
            views.put(m.definition().id(), m.view());
            events.owned(m);
        }
        LOG.info("judge owns {} experiment(s): {}", owned.size(), owned.keySet());
    }

    private void disown(Collection<TopicPartition> partitions) {
        Set<Integer> numbers = new HashSet<>();
        partitions.forEach(tp -> numbers.add(tp.partition()));
        owned.values().removeIf(m -> {
            boolean leaving = numbers.contains(settings.stateFor(m.definition().id()));
            if (leaving) {
                partials.remove(m.definition().id());
                views.remove(m.definition().id());
                events.disowned(m);
            }
            return leaving;
        });
        pending.keySet().removeIf(tp -> numbers.contains(tp.partition()));
    }

    private final class Rebalance implements ConsumerRebalanceListener {
        @Override
        public void onPartitionsRevoked(Collection<TopicPartition> partitions) {
            if (!partitions.isEmpty() && partitions.containsAll(consumer.assignment())) {
                assigned = false;   // everything leaves: a rebalance that gives out everything again
            }
            disown(partitions);
        }

        @Override
        public void onPartitionsAssigned(Collection<TopicPartition> partitions) {
            own(partitions);
            assigned = true;   // called after every rebalance, with what was added (possibly nothing)
        }

        @Override
        public void onPartitionsLost(Collection<TopicPartition> partitions) {
            assigned = false;
            disown(partitions);
        }
    }

    /**
     * Leave the group when closing, rather than stay as a static member until the session expires:
     * for a member id that a restart will not use again. Call before {@link #run()}.
     */
    public JudgeStage leaveGroupOnClose(boolean leave) {
        this.leaveGroupOnClose = leave;
        return this;
    }

    @Override
    public void close() {
        running.set(false);
        if (consumer != null) {
            consumer.wakeup();
        }
    }
}
