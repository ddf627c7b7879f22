package dev.interim.stream;

import dev.interim.events.Catalog;

import java.nio.charset.StandardCharsets;
import java.time.Clock;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Collection;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.Set;
import java.util.UUID;
import java.util.concurrent.atomic.AtomicBoolean;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRebalanceListener;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.ConsumerRecords;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.KafkaException;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.FencedInstanceIdException;
import org.apache.kafka.common.errors.WakeupException;
import org.apache.kafka.common.header.internals.RecordHeader;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Stage 1: reads the event topics in a consumer group ({@code read_committed}), tallies each input
 * partition's events in poll batches, and every commit interval writes, in one Kafka transaction,
 * the changed cumulative partials (compacted tallies topic), the changed unit state (compacted units
 * topic, partitioned like the input), the dead letters of the interval and the consumed offsets
 * ({@code sendOffsetsToTransaction} with the group's metadata). A crash between commits loses
 * nothing and counts nothing twice: the transaction is all or nothing, and a new owner of a
 * partition restores its partials and units from the state topics before it reads on from the
 * committed offset. Partials are cumulative, so writing one again is harmless.
 *
 * <p>Failure handling: a bad event is a dead letter and processing goes on; a failed commit aborts
 * the transaction and rebuilds the assigned partitions' state from the committed state topics and
 * offsets; {@link #close()} commits what is pending and stops.
 */
public final class TallyStage implements Runnable, AutoCloseable {
    private static final Logger LOG = LoggerFactory.getLogger(TallyStage.class);
    /** Header of a dead letter naming why the event was refused. */
    public static final String REASON_HEADER = "interim-reason";
    public static final String DETAIL_HEADER = "interim-detail";

    private final StreamSettings settings;
    private final Catalog catalog;
    private final EventReader reader;
    private final StageEvents events;
    private final String member;
    private volatile boolean leaveGroupOnClose;
    private final AtomicBoolean running = new AtomicBoolean(true);
    private final Map<TopicPartition, PartitionState> states = new HashMap<>();
    /** Each owned partition's units changelog (delta blocks and snapshots, see {@link UnitChangelog}). */
    private final Map<TopicPartition, UnitChangelog> changelogs = new HashMap<>();
    private final Map<TopicPartition, OffsetAndMetadata> pending = new HashMap<>();
    /** Counts reported to meters only once their transaction has committed (an aborted one is redone). */
    private final Map<String, Long> uncommittedAccepted = new HashMap<>();
    private final Map<BadEventException.Reason, Long> uncommittedRejected = new HashMap<>();
    private KafkaConsumer<byte[], byte[]> consumer;
    private StageProducer producer;
    private boolean inTransaction;
    /** The clock that times the commit interval (the judge takes one too): tests may move it. */
    private final Clock clock;
    private long lastCommit;

    /**
     * @param member this stage's static member id in the tally group ({@code group.instance.id}),
     *               stable across restarts of the same daemon and distinct between stages; null for
     *               a dynamic member
     * @param clock what times the commit interval
     */
    public TallyStage(StreamSettings settings, Catalog catalog, EventReader reader, StageEvents events, String member,
                      Clock clock) {
        this.settings = settings;
        this.catalog = catalog;
        this.reader = reader;
        this.events = events;
        this.member = member;
        this.clock = clock;
        this.lastCommit = clock.millis();
    }

    @Override
    public void run() {
        try {
            consumer = new KafkaConsumer<>(Clients.groupConsumer(settings, settings.tallyGroup(), member));
            producer = new StageProducer(settings, "tally", member, LOG);
            consumer.subscribe(settings.inputTopics(), new Rebalance());
            while (running.get()) {
                ConsumerRecords<byte[], byte[]> records = consumer.poll(Duration.ofMillis(100));
                if (!records.isEmpty()) {
                    process(records);
                }
                if (clock.millis() - lastCommit >= settings.commitInterval().toMillis()) {
                    commit();
                }
            }
            commit();
        } catch (WakeupException e) {
            if (running.get()) {
                throw e;
            }
            Clients.quietly(LOG, this::commit);
        } finally {
            if (producer != null) {
                producer.close();
            }
            Clients.quietly(LOG, () -> Clients.close(consumer, leaveGroupOnClose));
        }
    }

    private void process(ConsumerRecords<byte[], byte[]> records) {
        begin();
        // Partition by partition: one state lookup and one offset per partition and poll.
        for (TopicPartition tp : records.partitions()) {
            PartitionState state = states.computeIfAbsent(tp, t -> new PartitionState(source(t), catalog));
            long next = -1;
            for (ConsumerRecord<byte[], byte[]> record : records.records(tp)) {
                try {
                    if (record.value() == null) {
                        throw new BadEventException(BadEventException.Reason.MISSING_FIELD, "the record has no value");
                    }
                    reader.read(record.value(), state);
                } catch (BadEventException e) {
                    deadLetter(record, e);
                }
                next = record.offset() + 1;
            }
            if (next >= 0) {
                pending.put(tp, new OffsetAndMetadata(next));
            }
            state.drainAccepted().forEach((experiment, n) -> uncommittedAccepted.merge(experiment, n, Long::sum));
        }
    }

    /**
     * Dead letters keep at most this much of the refused record: a refused record near the broker's
     * size limit must not make every commit fail (the dead letter's headers would push it over).
     */
    public static final int DEAD_LETTER_MAX_BYTES = 256 * 1024;
    public static final String ORIGINAL_SIZE_HEADER = "interim-original-bytes";

    private void deadLetter(ConsumerRecord<byte[], byte[]> record, BadEventException e) {
        byte[] value = record.value();
        byte[] key = record.key();
        boolean cut = value != null && value.length > DEAD_LETTER_MAX_BYTES;
        ProducerRecord<byte[], byte[]> letter = new ProducerRecord<>(settings.deadLetterTopic(), null,
                key != null && key.length > 4096 ? java.util.Arrays.copyOf(key, 4096) : key,
                cut ? java.util.Arrays.copyOf(value, DEAD_LETTER_MAX_BYTES) : value);
        if (cut) {
            letter.headers().add(new RecordHeader(ORIGINAL_SIZE_HEADER,
                    Integer.toString(value.length).getBytes(StandardCharsets.UTF_8)));
        }
        letter.headers().add(new RecordHeader(REASON_HEADER, e.reason().label().getBytes(StandardCharsets.UTF_8)));
        String detail = e.getMessage() == null ? "" : e.getMessage();
        letter.headers().add(new RecordHeader(DETAIL_HEADER,
                (record.topic() + "-" + record.partition() + "@" + record.offset() + ": " + detail).getBytes(StandardCharsets.UTF_8)));
        producer.get().send(letter);
        uncommittedRejected.merge(e.reason(), 1L, Long::sum);
    }

    private void begin() {
        if (!inTransaction) {
            producer.get().beginTransaction();
            inTransaction = true;
        }
    }

    /** Writes the changed state and the offsets in one transaction. */
    private void commit() {
        lastCommit = clock.millis();
        boolean changes = !pending.isEmpty();
        if (!changes && !inTransaction) {
            return;
        }
        begin();
        try {
            for (Map.Entry<TopicPartition, PartitionState> e : states.entrySet()) {
                PartitionState state = e.getValue();
                for (PartitionState.Partial p : state.drainChangedPartials()) {
                    producer.get().send(new ProducerRecord<>(settings.talliesTopic(), settings.stateFor(p.key().experiment()),
                            StateCodec.key(p.key().text()), StateCodec.partial(p.tally())));
                }
                int unitsPartition = e.getKey().partition();
                changelog(e.getKey()).commit(state, (key, value) -> producer.get().send(new ProducerRecord<>(settings.unitsTopic(),
                        unitsPartition, key, value)));
            }
            if (!pending.isEmpty()) {
                producer.get().sendOffsetsToTransaction(new HashMap<>(pending), consumer.groupMetadata());
            }
            producer.get().commitTransaction();
            inTransaction = false;
            pending.clear();
            uncommittedAccepted.forEach(events::accepted);
            uncommittedRejected.forEach((reason, n) -> {
                for (long i = 0; i < n; i++) {
                    events.rejected(reason);
                }
            });
            uncommittedAccepted.clear();
            uncommittedRejected.clear();
        } catch (FencedInstanceIdException e) {
            throw e;   // another process uses this stage's member id: stopping is the only safe answer
        } catch (KafkaException e) {
            LOG.warn("tally commit failed ({}); rebuilding the assigned partitions from the committed state", e.toString());
            recover();
        }
    }

    private UnitChangelog changelog(TopicPartition tp) {
        return changelogs.computeIfAbsent(tp, t -> new UnitChangelog(source(t)));
    }

    /** After a failed transaction: abort, reload state and offsets as last committed. */
    private void recover() {
        producer.renew();
        inTransaction = false;
        pending.clear();
        uncommittedAccepted.clear();
        uncommittedRejected.clear();
        Set<TopicPartition> assigned = new HashSet<>(consumer.assignment());
        states.clear();
        changelogs.clear();
        restore(assigned);
        Map<TopicPartition, OffsetAndMetadata> committed = consumer.committed(assigned);
        for (TopicPartition tp : assigned) {
            OffsetAndMetadata o = committed.get(tp);
            if (o == null) {
                consumer.seekToBeginning(List.of(tp));
            } else {
                consumer.seek(tp, o.offset());
            }
        }
    }

    /** Restores the partials and units of {@code partitions} from the state topics. */
    private void restore(Collection<TopicPartition> partitions) {
        if (partitions.isEmpty()) {
            return;
        }
        Map<String, TopicPartition> bySource = new HashMap<>();
        for (TopicPartition tp : partitions) {
            bySource.put(source(tp), tp);
            states.put(tp, new PartitionState(source(tp), catalog));
            changelogs.put(tp, new UnitChangelog(source(tp)));
        }
        StateReader.readAll(settings, settings.talliesTopic(), null, (key, value) -> {
            PartialKey k = PartialKey.parse(StateCodec.key(key));
            TopicPartition tp = bySource.get(k.source());
            if (tp != null && value != null) {
                states.get(tp).restore(new PartitionState.Partial(k, StateCodec.partial(value)));
            }
        });
        Set<Integer> unitPartitions = new HashSet<>();
        partitions.forEach(tp -> unitPartitions.add(tp.partition()));
        // In the log's order: UnitChangelog says why that restores the last commit exactly.
        StateReader.readAll(settings, settings.unitsTopic(), unitPartitions, (key, value) -> {
            TopicPartition tp = bySource.get(StateCodec.unitSource(key));
            if (tp != null) {
                PartitionState state = states.get(tp);
                changelogs.get(tp).restore(key, value, state, (k, v) -> state.restoreUnit(StateCodec.unitKey(k, v).unit(),
                        StateCodec.unit(v)));
            }
        });
        for (TopicPartition tp : partitions) {
            long leftOut = states.get(tp).unitsLeftOut();
            if (leftOut > 0) {
                LOG.warn("{}: {} restored unit(s) left out: their experiment or arm is no longer configured", source(tp), leftOut);
            }
        }
        LOG.info("tally stage owns {} input partition(s); state restored", partitions.size());
    }

    static String source(TopicPartition tp) {
        return tp.topic() + "-" + tp.partition();
    }

    /** Commits before partitions leave (so their new owner starts from this state), restores when they arrive. */
    private final class Rebalance implements ConsumerRebalanceListener {
        @Override
        public void onPartitionsRevoked(Collection<TopicPartition> partitions) {
            commit();
            partitions.forEach(states::remove);
            partitions.forEach(changelogs::remove);
        }

        @Override
        public void onPartitionsAssigned(Collection<TopicPartition> partitions) {
            // The producer first (made while the group was joined): its initTransactions aborts what
            // a crashed predecessor left open, which the restore would otherwise wait out.
            producer.get();
            List<TopicPartition> fresh = new ArrayList<>();
            for (TopicPartition tp : partitions) {
                if (!states.containsKey(tp)) {
                    fresh.add(tp);
                }
            }
            restore(fresh);
        }

        @Override
        public void onPartitionsLost(Collection<TopicPartition> partitions) {
            // Another member owns them now; what was not committed is theirs to redo.
            if (inTransaction) {
                Clients.quietly(LOG, producer.get()::abortTransaction);
                inTransaction = false;
                uncommittedAccepted.clear();
                uncommittedRejected.clear();
            }
            pending.keySet().removeAll(partitions);
            partitions.forEach(states::remove);
        }
    }

    /**
     * Leave the group when closing, rather than stay as a static member until the session expires:
     * for a member id that a restart will not use again. Call before {@link #run()}.
     */
    public TallyStage leaveGroupOnClose(boolean leave) {
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
