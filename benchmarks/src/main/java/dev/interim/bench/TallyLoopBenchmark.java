package dev.interim.bench;

import dev.interim.bench.StreamScenario.Event;
import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.events.MappedExperiment;
import dev.interim.stream.BadEventException;
import dev.interim.stream.TallyLoop;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.producer.internals.BuiltInPartitioner;
import org.openjdk.jmh.annotations.Benchmark;
import org.openjdk.jmh.annotations.BenchmarkMode;
import org.openjdk.jmh.annotations.Fork;
import org.openjdk.jmh.annotations.Level;
import org.openjdk.jmh.annotations.Measurement;
import org.openjdk.jmh.annotations.Mode;
import org.openjdk.jmh.annotations.OperationsPerInvocation;
import org.openjdk.jmh.annotations.OutputTimeUnit;
import org.openjdk.jmh.annotations.Param;
import org.openjdk.jmh.annotations.Scope;
import org.openjdk.jmh.annotations.Setup;
import org.openjdk.jmh.annotations.State;
import org.openjdk.jmh.annotations.Warmup;

/**
 * Events per second of the tally stage's loop on one core, without Kafka: the stream bench's
 * invented traffic ({@link StreamScenario}, four experiments of the fictional "Wendrift Trips"
 * travel site, keyed by traveller) held in memory as the record values a consumer would hand over,
 * through three stages of the loop:
 * <ol>
 *   <li>{@link #parse}: {@code JsonEventReader.read} into a sink that only counts the calls;</li>
 *   <li>{@link #tally}: the reader into the real partition state, one state per input partition, with
 *       the stage's per-poll step (taking the accepted counts) after each partition's share of a poll;</li>
 *   <li>{@link #tallyAndCommit}: the same, and every {@link #commitEvery} events what a commit writes:
 *       the changed partials and the changed units encoded as their state topics' records (without
 *       the producer, the broker or the transaction).</li>
 * </ol>
 * The broker's share of a machine, the fetch and the transactions are what {@code scripts/bench}
 * measures; this benchmark judges the hot path alone. Scores are events per second on one thread
 * (one core): each invocation reads all {@link #EVENTS} events, and counts as that many operations.
 *
 * <p>The events: {@value #EVENTS} of them from the stream bench's generator with its fixed random
 * source, over {@link #units} travellers (by default 5 events per traveller, as the stream bench's
 * 5,000,000 events over 1,000,000 units), spread over {@value #PARTITIONS} partitions by the Kafka
 * producer's rule for keyed records (murmur2 of the key, modulo the partition count:
 * {@code BuiltInPartitioner.partitionForKey}) and handed over
 * in polls of at most {@value #POLL} records (the stages' {@code max.poll.records}) from one
 * partition at a time, round robin. Every invocation of {@link #tally} and {@link #tallyAndCommit}
 * starts from empty partition states, as a stage that has just been assigned fresh partitions, so
 * that every invocation does the same work (new units, table growth, units met again).
 *
 * <p>Run: {@code scripts/benchmark TallyLoopBenchmark}; {@code -p units=1000000} for tables too large
 * for the caches, {@code -p commitEvery=20000} for more frequent commits.
 */
@BenchmarkMode(Mode.Throughput)
@OutputTimeUnit(TimeUnit.SECONDS)
@Warmup(iterations = 4, time = 2)   // an invocation is about a second: a few per iteration
@Measurement(iterations = 5, time = 2)
@Fork(value = 1, jvmArgsAppend = {"-Xms1g", "-Xmx1g"})
@State(Scope.Thread)
public class TallyLoopBenchmark {
    static final int EVENTS = 200_000;
    static final int PARTITIONS = 4;
    /** The stages' max.poll.records (stream.Clients). */
    static final int POLL = 5_000;

    /** Distinct travellers the events come from. */
    @Param("40000")
    public int units;

    /**
     * Events between two commits. The daemon commits every 500 ms (the stream bench's
     * {@code commit_interval}); at the ~100,000 events/s it reached in {@code scripts/bench}, that is
     * about 50,000 events. Fewer events per commit mean more unit records per event.
     */
    @Param("50000")
    public int commitEvery;

    private TallyLoop loop;
    /** The record values in the order the stage would see them, poll by poll. */
    private byte[][] values;
    /** Per poll: its partition, and where it begins in {@link #values} (one more entry: the end). */
    private int[] pollPartition;
    private int[] pollStart;

    @Setup(Level.Trial)
    public void prepare() throws BadEventException {
        InterimConfig config = ConfigLoader.parseWithoutSecrets(
                StreamScenario.yaml("127.0.0.1:9092", "tally-loop", EVENTS, 1));
        List<dev.interim.experiment.ExperimentDefinition> experiments =
                config.experiments().stream().map(MappedExperiment::definition).toList();
        loop = new TallyLoop(config.catalog(), experiments, StreamScenario.TOPIC, PARTITIONS);

        List<List<byte[]>> byPartition = new ArrayList<>();
        for (int p = 0; p < PARTITIONS; p++) {
            byPartition.add(new ArrayList<>());
        }
        StreamScenario scenario = new StreamScenario(units);
        Event e = new Event();
        for (int i = 0; i < EVENTS; i++) {
            scenario.next(e);
            byte[] key = scenario.key(e);
            // The partition the Kafka producer gives a keyed record (the function its partitioner calls).
            byPartition.get(BuiltInPartitioner.partitionForKey(key, PARTITIONS)).add(scenario.json(e));
        }
        values = new byte[EVENTS][];
        List<int[]> polls = new ArrayList<>();
        int[] next = new int[PARTITIONS];
        int at = 0;
        while (at < EVENTS) {
            for (int p = 0; p < PARTITIONS; p++) {
                List<byte[]> mine = byPartition.get(p);
                int n = Math.min(POLL, mine.size() - next[p]);
                if (n > 0) {
                    polls.add(new int[] {p, at});
                    for (int i = 0; i < n; i++) {
                        values[at++] = mine.get(next[p]++);
                    }
                }
            }
        }
        pollPartition = new int[polls.size()];
        pollStart = new int[polls.size() + 1];
        for (int i = 0; i < polls.size(); i++) {
            pollPartition[i] = polls.get(i)[0];
            pollStart[i] = polls.get(i)[1];
        }
        pollStart[polls.size()] = EVENTS;

        // Every event is accepted and tallied: the benchmark times the usual path, not refusals.
        for (byte[] v : values) {
            loop.parse(v);
        }
        if (tally() != EVENTS) {
            throw new IllegalStateException("the tally accepted fewer events than the " + EVENTS + " it was given");
        }
    }

    /** (a) The reader alone, into a sink that counts its calls. */
    @Benchmark
    @OperationsPerInvocation(EVENTS)
    public long parse() throws BadEventException {
        long calls = 0;
        for (byte[] v : values) {
            calls = loop.parse(v);
        }
        return calls;
    }

    /** (b) The reader into the partition states, poll by poll, as the tally stage between commits. */
    @Benchmark
    @OperationsPerInvocation(EVENTS)
    public long tally() throws BadEventException {
        return run(Integer.MAX_VALUE);
    }

    /** (c) As (b), and what a commit writes every {@link #commitEvery} events (and after the last). */
    @Benchmark
    @OperationsPerInvocation(EVENTS)
    public long tallyAndCommit() throws BadEventException {
        return run(commitEvery);
    }

    /** @return the accepted events, plus the bytes committed (so that nothing is left unused) */
    private long run(int every) throws BadEventException {
        loop.reset();
        long accepted = 0;
        long written = 0;
        int sinceCommit = 0;
        for (int poll = 0; poll < pollPartition.length; poll++) {
            int partition = pollPartition[poll];
            int end = pollStart[poll + 1];
            for (int i = pollStart[poll]; i < end; i++) {
                loop.tally(partition, values[i]);
            }
            accepted += loop.endOfPoll(partition);
            // The stage commits after a poll, once its interval has passed.
            sinceCommit += end - pollStart[poll];
            if (sinceCommit >= every || (every != Integer.MAX_VALUE && end == EVENTS)) {
                written += loop.commit();
                sinceCommit = 0;
            }
        }
        return every == Integer.MAX_VALUE ? accepted : accepted + written;
    }
}
