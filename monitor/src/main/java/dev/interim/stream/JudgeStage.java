package dev.interim.stream;

import dev.interim.events.Catalog;

import dev.interim.experiment.Acknowledgement;
import dev.interim.experiment.Comparison;
import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.LookPoint;
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
import java.util.UUID;
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
    private final DecisionWriter writer;
    private final String member;
    private volatile boolean leaveGroupOnClose;
    private volatile boolean assigned;
    private final AtomicBoolean running = new AtomicBoolean(true);
    /** experiment → source → (arm, metric) → latest cumulative partial. */
    private final Map<String, Map<String, Map<ArmMetric, Tally>>> partials = new HashMap<>();
    private final Map<String, ExperimentMonitor> owned = new ConcurrentHashMap<>();
    private final Map<TopicPartition, OffsetAndMetadata> pending = new HashMap<>();
    private final Map<String, ExperimentView> views = new ConcurrentHashMap<>();
    private final Queue<Command> commands = new ConcurrentLinkedQueue<>();
    /** experiment → what operators had set as last committed (an experiment missing here is written at the next commit). */
    private final Map<String, ExperimentMonitor.OperatorState> persisted = new HashMap<>();
    /**
     * Tallies partitions (by number) being re-read after an assignment → the end offset to reach: their
     * experiments do not look before the partials are complete, so a first look after a restart never
     * sees a part of the data (a sample ratio off, a hold nobody set).
     */
    private final Map<Integer, Long> catchingUp = new HashMap<>();
    private KafkaConsumer<byte[], byte[]> consumer;
    private StageProducer producer;

    public JudgeStage(StreamSettings settings, Catalog catalog, Clock clock, StageEvents events,
                      DecisionWriter writer) {
        this(settings, catalog, clock, events, writer, null);
    }

    /**
     * @param member this instance's static member id in the judge group ({@code group.instance.id}),
     *               stable across restarts of the same daemon; null for a dynamic member
     */
    public JudgeStage(StreamSettings settings, Catalog catalog, Clock clock, StageEvents events,
                      DecisionWriter writer, String member) {
        this.settings = settings;
        this.catalog = catalog;
        this.clock = clock;
        this.events = events;
        this.writer = writer;
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
    private record Command(String experiment, Function<ExperimentMonitor, Outcome> action,
                           CompletableFuture<List<DecisionRecord>> done) {}

    /** What an operator's action produced: decision records, or an acknowledgement. */
    private record Outcome(List<DecisionRecord> records, Acknowledgement acknowledgement) {
        static Outcome of(List<DecisionRecord> records) {
            return new Outcome(records, null);
        }
    }

    /** Holds every comparison of {@code experiment} not yet final; completes once the records are committed. */
    public CompletableFuture<List<DecisionRecord>> hold(String experiment, String reason) {
        return submit(experiment, m -> Outcome.of(m.hold(clock.instant(), reason)));
    }

    /** Stops {@code arm} for harm by an operator's decision; completes once the records are committed. */
    public CompletableFuture<List<DecisionRecord>> forceStop(String experiment, String arm, String reason) {
        return submit(experiment, m -> Outcome.of(m.forceStop(clock.instant(), arm, reason)));
    }

    /**
     * Clears the experiment's paging signal until a new stop; the acknowledgement is published and
     * kept in the experiment's state. Completes once committed.
     */
    public CompletableFuture<List<DecisionRecord>> acknowledge(String experiment) {
        return submit(experiment, m -> new Outcome(List.of(), m.acknowledge(clock.instant()).orElse(null)));
    }

    /** Ends an operator's hold; completes once the records are committed. */
    public CompletableFuture<List<DecisionRecord>> resume(String experiment) {
        return submit(experiment, m -> Outcome.of(m.resume(clock.instant())));
    }

    private CompletableFuture<List<DecisionRecord>> submit(String experiment,
                                                           Function<ExperimentMonitor, Outcome> action) {
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
            producer = new StageProducer(settings, "judge", member, LOG);
            consumer.subscribe(List.of(settings.talliesTopic()), new Rebalance());
            while (running.get()) {
                for (ConsumerRecord<byte[], byte[]> r : consumer.poll(Duration.ofMillis(200))) {
                    apply(r.key(), r.value());
                    pending.put(new TopicPartition(r.topic(), r.partition()), new OffsetAndMetadata(r.offset() + 1));
                }
                caughtUp();
                cycle();
            }
        } catch (WakeupException e) {
            if (running.get()) {
                throw e;
            }
        } finally {
            assigned = false;
            if (producer != null) {
                producer.close();
            }
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
                .put(new ArmMetric(k.arm(), k.metric()), StateCodec.partial(value));
    }

    /** Ends the catching up of the tallies partitions whose re-reading has reached its end. */
    private void caughtUp() {
        catchingUp.entrySet().removeIf(e -> consumer.position(new TopicPartition(settings.talliesTopic(), e.getKey()))
                >= e.getValue());
    }

    /**
     * One turn of the judge after a poll: the operators' actions, then the looks that are due; what
     * they produced and the consumed offsets are committed in one transaction, and only once it has
     * committed is any of it published (views, the operators' answers, meters, logs, webhooks).
     */
    private void cycle() {
        Cycle cycle = new Cycle(clock.instant());
        runCommands(cycle);
        lookWhereDue(cycle);
        cycle.operatorChanges = operatorChanges();
        if (cycle.writesNothing() && pending.isEmpty()) {
            cycle.answerCommands();
            return;
        }
        if (commit(cycle)) {
            publish(cycle);
        }
    }

    /** What one turn produced: written in one transaction, then published. */
    private static final class Cycle {
        final Instant now;
        /** The operators' decisions first, then the looks', in the order they were made. */
        final List<DecisionRecord> decisions = new ArrayList<>();
        final List<Acknowledgement> acknowledgements = new ArrayList<>();
        final List<Look> looks = new ArrayList<>();
        /** The comparisons whose state (and newest look points) the transaction rewrites. */
        final Set<ComparisonKey> changed = new HashSet<>();
        /** The operators' actions that ran, answered once the transaction has committed. */
        final List<Ran> commands = new ArrayList<>();
        /** experiment → what operators set, where it differs from what was last committed. */
        Map<String, ExperimentMonitor.OperatorState> operatorChanges = Map.of();

        Cycle(Instant now) {
            this.now = now;
        }

        void decided(List<DecisionRecord> records) {
            decisions.addAll(records);
            records.forEach(d -> changed.add(new ComparisonKey(d.experiment(), d.arm(), d.metric())));
        }

        boolean writesNothing() {
            return changed.isEmpty() && looks.isEmpty() && operatorChanges.isEmpty() && acknowledgements.isEmpty();
        }

        void answerCommands() {
            commands.forEach(r -> r.command().done().complete(r.records()));
        }

        void failCommands(Throwable e) {
            commands.forEach(r -> r.command().done().completeExceptionally(e));
        }
    }

    /** One look made in a turn: its report, the merged tallies it was given, and how long it took. */
    private record Look(LookReport report, Map<String, Map<String, Tally>> given, Duration took) {}

    /** An operator's action that ran, and the decision records it produced. */
    private record Ran(Command command, List<DecisionRecord> records) {}

    /** Runs the operators' actions queued since the last turn; one on an experiment not owned here fails. */
    private void runCommands(Cycle cycle) {
        for (Command c; (c = commands.poll()) != null; ) {
            ExperimentMonitor monitor = owned.get(c.experiment());
            if (monitor == null) {
                c.done().completeExceptionally(new NotOwnedException(c.experiment()));
                continue;
            }
            Outcome outcome;
            try {
                outcome = c.action().apply(monitor);
            } catch (RuntimeException refused) {
                c.done().completeExceptionally(refused);   // e.g. an unknown arm: the operator's mistake, not ours
                continue;
            }
            cycle.decided(outcome.records());
            if (outcome.acknowledgement() != null) {
                cycle.acknowledgements.add(outcome.acknowledgement());
            }
            cycle.commands.add(new Ran(c, outcome.records()));
        }
    }

    /** Looks at every owned experiment that is due, except those whose partials are still being re-read. */
    private void lookWhereDue(Cycle cycle) {
        for (ExperimentMonitor monitor : owned.values()) {
            if (!monitor.due(cycle.now) || catchingUp.containsKey(settings.stateFor(monitor.definition().id()))) {
                continue;
            }
            long start = System.nanoTime();
            Merged merged = merge(monitor.definition());
            LookReport report = monitor.look(cycle.now, merged.exposures, merged.tallies);
            cycle.looks.add(new Look(report, merged.tallies, Duration.ofNanos(System.nanoTime() - start)));
            for (LookResult r : report.results()) {
                cycle.changed.add(new ComparisonKey(report.experiment(), r.arm(), r.metric()));
            }
            cycle.decided(report.decisions());
        }
    }

    /** What operators set on each owned experiment, where it differs from what was last committed. */
    private Map<String, ExperimentMonitor.OperatorState> operatorChanges() {
        Map<String, ExperimentMonitor.OperatorState> changes = new HashMap<>();
        owned.forEach((id, m) -> {
            ExperimentMonitor.OperatorState state = m.operatorState();
            if (!state.equals(persisted.get(id))) {
                changes.put(id, state);
            }
        });
        return changes;
    }

    /**
     * Writes the turn in one transaction: decision records and acknowledgements to the decisions
     * topic, what operators set and each changed comparison's state and newest look points to the
     * looks topic, and the consumed offsets. Once committed, notes what is now persisted.
     *
     * @return false when the transaction failed: the owned experiments are then restored from the
     *         committed state, the operators' actions fail, and nothing of the turn is published
     */
    private boolean commit(Cycle cycle) {
        try {
            producer.get().beginTransaction();
            for (DecisionRecord d : cycle.decisions) {
                producer.get().send(new ProducerRecord<>(settings.decisionsTopic(), StateCodec.key(d.experiment()),
                        writer.decision(d)));
            }
            for (Acknowledgement a : cycle.acknowledgements) {
                producer.get().send(new ProducerRecord<>(settings.decisionsTopic(), StateCodec.key(a.experiment()),
                        writer.acknowledgement(a)));
            }
            cycle.operatorChanges.forEach((id, state) -> producer.get().send(new ProducerRecord<>(settings.looksTopic(),
                    settings.stateFor(id), StateCodec.key(id), StateCodec.operatorState(state))));
            for (ComparisonKey key : cycle.changed) {
                sendComparison(key);
            }
            if (!pending.isEmpty()) {
                producer.get().sendOffsetsToTransaction(new HashMap<>(pending), consumer.groupMetadata());
            }
            producer.get().commitTransaction();
            pending.clear();
        } catch (FencedInstanceIdException e) {
            cycle.failCommands(e);
            throw e;   // another process uses this instance's member id: stopping is the only safe answer
        } catch (KafkaException e) {
            LOG.warn("judge commit failed ({}); restoring owned experiments from the committed look history", e.toString());
            producer.renew();
            cycle.failCommands(e);
            Set<TopicPartition> assigned = new HashSet<>(consumer.assignment());
            disown(assigned);
            own(assigned);
            return false;
        }
        persisted.putAll(cycle.operatorChanges);
        for (ComparisonKey key : cycle.changed) {
            owned.get(key.experiment()).comparison(key.metric(), key.arm()).saved();
        }
        return true;
    }

    /** A comparison's state record, and the blocks of look points from its first unsaved one on. */
    private void sendComparison(ComparisonKey key) {
        Comparison c = owned.get(key.experiment()).comparison(key.metric(), key.arm());
        List<LookPoint> points = c.points();
        int size = points.size();
        producer.get().send(new ProducerRecord<>(settings.looksTopic(), settings.stateFor(key.experiment()),
                StateCodec.key(key.text()), StateCodec.history(c.snapshot(), c.decision(), c.last(), size)));
        for (int block = c.unsavedFrom() / StateCodec.POINTS_PER_BLOCK;
             block * StateCodec.POINTS_PER_BLOCK < size; block++) {
            producer.get().send(new ProducerRecord<>(settings.looksTopic(), settings.stateFor(key.experiment()),
                    StateCodec.key(key.pointsKey(block)), StateCodec.points(points, block, size)));
        }
    }

    /**
     * After the commit: new views of the experiments the turn changed, the operators' answers, then
     * the looks and decisions to meters, logs and webhooks.
     */
    private void publish(Cycle cycle) {
        Set<String> experiments = new HashSet<>(cycle.operatorChanges.keySet());
        cycle.changed.forEach(key -> experiments.add(key.experiment()));
        cycle.looks.forEach(look -> experiments.add(look.report().experiment()));
        for (String id : experiments) {
            ExperimentMonitor m = owned.get(id);
            if (m != null) {
                views.put(id, m.view());
            }
        }
        cycle.answerCommands();
        for (Look look : cycle.looks) {
            events.looked(look.report(), look.given(), look.took());
        }
        if (!cycle.decisions.isEmpty()) {
            events.committed(cycle.decisions);
        }
    }

    /**
     * One comparison's place on the looks topic. Its state record's key is
     * {@code experiment 0x1f arm 0x1f metric}; its blocks of look points add {@code 0x1f points 0x1f n};
     * the experiment's own record (what operators set, the run) is keyed by the experiment id alone.
     */
    record ComparisonKey(String experiment, String arm, String metric) {
        String text() {
            return experiment + '\u001f' + arm + '\u001f' + metric;
        }

        String pointsKey(int block) {
            return text() + '\u001f' + StateCodec.POINTS + '\u001f' + block;
        }
    }

    /** An arm and a metric ({@link PartialKey#EXPOSURES} for the exposures) of one experiment: a partial's key within it. */
    record ArmMetric(String arm, String metric) {}

    /** Per-arm tallies of every metric and the exposures, summed over the input partitions. */
    private Merged merge(ExperimentDefinition definition) {
        // What each key's tally must hold now: a source not yet rewritten since a metric's kind or
        // the experiment's assignment changed still holds partials of the old form, which do not add.
        Map<ArmMetric, TallyForm> forms = new HashMap<>();
        for (String arm : definition.arms()) {
            forms.put(new ArmMetric(arm, PartialKey.EXPOSURES), TallyForm.RATE);
            definition.metrics().forEach(metric -> forms.put(new ArmMetric(arm, metric.name()), definition.form(metric)));
        }
        Map<ArmMetric, Tally> sum = new HashMap<>();
        for (Map<ArmMetric, Tally> bySource : partials.getOrDefault(definition.id(), Map.of()).values()) {
            bySource.forEach((k, t) -> {
                if (t.form() == forms.get(k)) {
                    sum.merge(k, t, JudgeStage::plus);
                }
            });
        }
        Merged m = new Merged();
        for (String arm : definition.arms()) {
            Tally exposures = sum.get(new ArmMetric(arm, PartialKey.EXPOSURES));
            m.exposures.put(arm, exposures == null ? 0L : exposures.count());
            definition.metrics().forEach(metric -> {
                Tally t = sum.get(new ArmMetric(arm, metric.name()));
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
        if (a instanceof Tally.Quantile x && b instanceof Tally.Quantile y) {
            return new Tally.Quantile(x.counts().plus(y.counts()));
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
        Restored restored = new Restored();
        StateReader.readAll(settings, settings.looksTopic(), numbers, (key, value) -> {
            String[] k = StateCodec.key(key).split("\u001f", -1);
            ExperimentMonitor monitor = owned.get(k[0]);
            if (monitor != null && fresh.contains(monitor)) {
                restored.add(k, value);
            }
        });
        for (ExperimentMonitor m : fresh) {
            restore(m, restored);
        }
        // The partials are cumulative and compacted: re-read them from the beginning, and look only
        // once they are read to where they ended now.
        consumer.seekToBeginning(partitions);
        consumer.endOffsets(partitions).forEach((tp, end) -> {
            if (end != null && end > 0) {
                catchingUp.put(tp.partition(), end);
            }
        });
        for (ExperimentMonitor m : fresh) {
            partials.remove(m.definition().id());
            views.put(m.definition().id(), m.view());
            events.owned(m);
        }
        LOG.info("judge owns {} experiment(s): {}", owned.size(), owned.keySet());
    }

    /** The records of the looks topic of the experiments being taken over, read in any order. */
    private static final class Restored {
        final Map<String, ExperimentMonitor.OperatorState> operators = new HashMap<>();
        final Map<ComparisonKey, byte[]> histories = new HashMap<>();
        final Map<ComparisonKey, Map<Integer, byte[]>> blocks = new HashMap<>();

        /** {@code k}: the record's key split at its separators (see {@link ComparisonKey}). */
        void add(String[] k, byte[] value) {
            if (k.length == 1) {
                if (value == null) {
                    operators.remove(k[0]);
                } else {
                    operators.put(k[0], StateCodec.operatorState(value));
                }
            } else if (k.length == 3) {
                histories.put(new ComparisonKey(k[0], k[1], k[2]), value);
            } else if (k.length == 5 && StateCodec.POINTS.equals(k[3])) {
                Map<Integer, byte[]> byBlock = blocks.computeIfAbsent(new ComparisonKey(k[0], k[1], k[2]), x -> new HashMap<>());
                byBlock.put(Integer.parseInt(k[4]), value);
            }
        }
    }

    /**
     * Restores an experiment taken over: what operators set and its run (a new run when it has no state
     * yet), then each comparison's state, last look and kept look points. Nothing is published.
     */
    private void restore(ExperimentMonitor monitor, Restored restored) {
        String id = monitor.definition().id();
        ExperimentMonitor.OperatorState operator = restored.operators.get(id);
        if (operator != null) {
            monitor.restore(operator);
            persisted.put(id, operator);
        } else {
            monitor.restore(new ExperimentMonitor.OperatorState(UUID.randomUUID().toString(), null, false));
            persisted.remove(id);   // written with the next commit, before any decision of this run leaves
        }
        restored.histories.forEach((k, value) -> {
            if (!k.experiment().equals(id) || value == null) {
                return;
            }
            StateCodec.History h = StateCodec.history(value, k.experiment(), k.arm(), k.metric());
            try {
                Comparison c = monitor.comparison(k.metric(), k.arm());
                if (h.snapshot() == null) {
                    c.restore(h.fractions(), h.decision());
                    return;
                }
                List<LookPoint> points = new ArrayList<>(h.points());
                Map<Integer, byte[]> blocks = restored.blocks.getOrDefault(k, Map.of());
                for (int block = 0; points.size() < h.points(); block++) {
                    byte[] b = blocks.get(block);
                    if (b == null) {
                        LOG.warn("look history of {} / {} / {}: block {} of its points is missing; kept {} of {}",
                                k.experiment(), k.arm(), k.metric(), block, points.size(), h.points());
                        break;
                    }
                    points.addAll(StateCodec.points(b));
                }
                c.restore(h.snapshot(), h.decision(), h.last(),
                        points.size() > h.points() ? points.subList(0, h.points()) : points);
            } catch (IllegalArgumentException gone) {
                LOG.info("look history of {} / {} / {} no longer configured; ignored", k.experiment(), k.arm(), k.metric());
            }
        });
    }

    private void disown(Collection<TopicPartition> partitions) {
        Set<Integer> numbers = new HashSet<>();
        partitions.forEach(tp -> numbers.add(tp.partition()));
        owned.values().removeIf(m -> {
            boolean leaving = numbers.contains(settings.stateFor(m.definition().id()));
            if (leaving) {
                partials.remove(m.definition().id());
                persisted.remove(m.definition().id());
                views.remove(m.definition().id());
                events.disowned(m);
            }
            return leaving;
        });
        pending.keySet().removeIf(tp -> numbers.contains(tp.partition()));
        catchingUp.keySet().removeIf(numbers::contains);
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
            producer.get();   // initialised before the state is read, as the tally stage does
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
