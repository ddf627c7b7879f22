package dev.interim.stream;

import dev.interim.events.Catalog;
import dev.interim.events.EventCatalog;
import dev.interim.experiment.ExperimentDefinition;
import java.util.List;

/**
 * The tally stage's loop without Kafka, for {@code dev.interim.bench.TallyLoopBenchmark}: what
 * {@link TallyStage} does per record, per poll batch and per commit, on events held in memory.
 *
 * <p>It lives in the stage's package, in the benchmarks module, because {@link PartitionState} and
 * its drains are package-private. It is the one place where the benchmark touches the reader's
 * sink and the partition state, so that a change of their signatures is mended here and nowhere
 * else. Each method names the lines of {@link TallyStage} it stands for; keep them in step.
 *
 * <p>Mutable, one thread.
 */
public final class TallyLoop {
    private final JsonEventReader reader;
    private final Catalog catalog;
    private final String topic;
    private final PartitionState[] states;
    private final UnitChangelog[] changelogs;
    private final CountingSink counting = new CountingSink();

    /**
     * @param events     the event mapping, as {@code InterimConfig.catalog()} gives it to the daemon's reader
     * @param experiments the experiments (the catalogue is the events' own: the daemon shares one)
     * @param topic      the input topic's name (the partitions' sources are "topic-partition", as in the stage)
     * @param partitions how many input partitions the stage owns
     */
    public TallyLoop(EventCatalog events, List<ExperimentDefinition> experiments, String topic, int partitions) {
        this.reader = new JsonEventReader(events);
        this.catalog = events.catalog();   // the one compiled catalogue, as the daemon shares it
        this.topic = topic;
        this.states = new PartitionState[partitions];
        this.changelogs = new UnitChangelog[partitions];
        reset();
    }

    /** Forgets everything tallied: every partition starts again empty, as on a first assignment. */
    public void reset() {
        for (int p = 0; p < states.length; p++) {
            // TallyStage.process: states.computeIfAbsent(tp, t -> new PartitionState(source(t), catalog))
            states[p] = new PartitionState(topic + "-" + p, catalog);
            changelogs[p] = new UnitChangelog(topic + "-" + p);
        }
    }

    /**
     * Reads one event into a sink that only counts the calls: the reader's work alone.
     *
     * @return the calls the sink has had so far (exposures and observations)
     */
    public long parse(byte[] value) throws BadEventException {
        reader.read(value, counting);
        return counting.calls;
    }

    /** One record of {@code partition} through the reader into the partition's tally (TallyStage.process, per record). */
    public void tally(int partition, byte[] value) throws BadEventException {
        reader.read(value, states[partition]);
    }

    /**
     * The end of one partition's share of a poll: the stage takes the events accepted since the last
     * poll, to count them in its meters once committed (TallyStage.process, per partition and poll).
     *
     * @return the events accepted since the last call, over the experiments
     */
    public long endOfPoll(int partition) {
        long n = 0;
        for (long accepted : states[partition].drainAccepted().values()) {
            n += accepted;
        }
        return n;
    }

    /**
     * What a commit writes, without the producer: every partition's changed partials encoded as the
     * tallies topic's records and its changed units as the units topic's records (TallyStage.commit).
     *
     * @return the bytes of the records' keys and values
     */
    public long commit() {
        long bytes = 0;
        ByteCount units = new ByteCount();
        for (int i = 0; i < states.length; i++) {
            PartitionState state = states[i];
            for (PartitionState.Partial p : state.drainChangedPartials()) {
                bytes += StateCodec.key(p.key().text()).length + StateCodec.partial(p.tally()).length;
            }
            changelogs[i].commit(state, units);   // TallyStage.commit: delta blocks, and a snapshot when due
        }
        return bytes + units.bytes;
    }

    /** Counts what the reader hands over, so that its work has a result. */
    private static final class CountingSink implements ObservationSink {
        long calls;

        @Override
        public void exposure(int experiment, int arm, String unit) {
            calls++;
        }

        @Override
        public void outcome(int experiment, int arm, String unit, int metric, boolean success) {
            calls++;
        }

        @Override
        public void value(int experiment, int arm, String unit, int metric, double value) {
            calls++;
        }

        @Override
        public void ratio(int experiment, int arm, String unit, int metric, double numerator, double denominator) {
            calls++;
        }
    }

    /** Where the unit records go instead of the producer. */
    private static final class ByteCount implements java.util.function.BiConsumer<byte[], byte[]> {
        long bytes;

        @Override
        public void accept(byte[] key, byte[] value) {
            bytes += key.length + (value == null ? 0 : value.length);
        }
    }
}
