package dev.interim.bench;

import com.fasterxml.jackson.databind.JsonNode;
import dev.interim.bench.StreamScenario.Event;
import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.embedded.EmbeddedKafka;
import dev.interim.embedded.Topic;
import dev.interim.stream.BadEventException;
import dev.interim.stream.JsonEventReader;
import dev.interim.stream.ObservationSink;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.lang.management.ManagementFactory;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.time.ZoneOffset;
import java.time.format.DateTimeFormatter;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Comparator;
import java.util.List;
import java.util.Locale;
import java.util.Properties;
import java.util.concurrent.Callable;
import java.util.concurrent.atomic.AtomicLong;
import java.util.concurrent.atomic.AtomicReference;
import java.util.stream.Stream;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.ConsumerRecords;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.producer.Callback;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.PartitionInfo;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.ITypeConverter;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.ParameterException;
import picocli.CommandLine.Spec;

/**
 * The daemon's throughput against the raw Kafka consumer, on one topic, in one run:
 * <ol>
 *   <li>starts an embedded KRaft broker in this JVM, creates the input topic and writes N invented
 *       JSON events ({@link StreamScenario}), keyed by unit, recording the ground truth
 *       ({@link StreamTruth});</li>
 *   <li>(a) drains the topic with a plain {@link KafkaConsumer} (byte arrays, every partition
 *       assigned, from the beginning, read_committed, 5,000 records a poll as the daemon's stages);</li>
 *   <li>(b) drains it again and reads every event with {@link JsonEventReader} into a counting sink:
 *       the cost of parsing alone;</li>
 *   <li>(c) runs the daemon ({@code interim run}) as a child process on the same topic with fresh
 *       state topics and consumer groups, and times it from process start until its JSON API shows
 *       every event counted (exposures and every tally equal to the truth) in a look.</li>
 * </ol>
 * Then it checks the daemon's counts once more after further looks (exactly; sums within 1e-6
 * relative; the experiments assign arms per unit, so event-level metrics are ratios of per-unit sums
 * whose count is units and whose sums are checked, see {@link StreamTruth}), stops it and reads its peak heap from its GC log. Run it with {@code scripts/bench}.
 *
 * <p>Exit codes: 0 when every figure was measured and the daemon's counts equal the truth, 1 on any
 * failure (with one line saying what), 2 for bad options.
 */
@Command(name = "scripts/bench", sortOptions = false,
        description = {
            "Measures the daemon's throughput against a plain Kafka consumer on the same topic: writes invented events "
                    + "to an embedded broker, drains them with (a) a plain consumer, (b) a consumer that also parses every "
                    + "event with JsonEventReader, (c) the daemon as a child process, until its JSON API shows every event "
                    + "counted; checks the daemon's counts against what was written.",
            "Results on stdout (and in results.txt of the run directory), progress on stderr."
        },
        exitCodeListHeading = "%nExit codes:%n",
        exitCodeList = {"0:measured, and the daemon's counts equal what was written", "1:a failure (one line says which)",
            "2:bad options"})
public final class StreamBench implements Callable<Integer> {
    private static final int SMOKE_EVENTS = 20_000;
    private static final int SMOKE_UNITS = 5_000;
    /** The daemon's stages poll this many records at a time (stream.Clients); the plain consumers do the same. */
    private static final int MAX_POLL_RECORDS = 5_000;
    /** Sums of totals and of ratios' parts: the daemon keeps moments (means and squared deviations), not sums. */
    private static final double SUM_TOLERANCE = 1e-6;
    private static final Duration POLL_EVERY = Duration.ofMillis(200);
    /** After every event is counted: longer than a look interval (1 s) plus a commit interval (500 ms). */
    private static final Duration SETTLE = Duration.ofMillis(2_500);

    @Spec
    CommandSpec spec;

    @Option(names = "--events", paramLabel = "N", converter = Count.class,
            description = "Events to write and read (default 5,000,000; 20,000 with --smoke).")
    Long events;

    @Option(names = "--units", paramLabel = "N", converter = Count.class,
            description = "Distinct units (travellers) the events come from (default 1,000,000; 5,000 with --smoke).")
    Long units;

    @Option(names = "--partitions", paramLabel = "N", defaultValue = "4",
            description = "Partitions of the input topic (default ${DEFAULT-VALUE}).")
    int partitions;

    @Option(names = "--daemon-heap", paramLabel = "SIZE", defaultValue = "1g",
            description = "The daemon's maximum heap, as for -Xmx (default ${DEFAULT-VALUE}).")
    String daemonHeap;

    @Option(names = "--keep", description = "Keep the broker's data directory (the run directory is always kept: logs, results).")
    boolean keep;

    @Option(names = "--smoke", description = "A tiny run that proves the bench works (20,000 events; well under a minute).")
    boolean smoke;

    @Option(names = "--dir", paramLabel = "DIR", defaultValue = "${sys:java.io.tmpdir}",
            description = "Where to create the run directory (default ${DEFAULT-VALUE}).")
    Path parent;

    @Option(names = "--stall-timeout", paramLabel = "SECONDS", defaultValue = "180",
            description = "Fail when a phase makes no progress for this long (default ${DEFAULT-VALUE}).")
    int stallSeconds;

    @Option(names = "--daemon-jar", paramLabel = "JAR", defaultValue = "${sys:interim.bench.daemonJar:-monitor/target/interim-all.jar}",
            description = "The daemon's runnable jar (default ${DEFAULT-VALUE}).")
    Path daemonJar;

    @Option(names = "--memory-units", paramLabel = "N", converter = Count.class,
            description = "A unit count at which to measure heap per unit; repeat for more (default 1,000,000 and 10,000,000;"
                    + " 20,000 with --smoke).")
    List<Long> memoryUnits;

    @Option(names = "--memory-looks", paramLabel = "N", defaultValue = "1000",
            description = "Looks before measuring heap per (experiment, arm, metric) (default 1,000; 20 with --smoke).")
    int memoryLooks;

    @Option(names = "--tally-threads", paramLabel = "N", defaultValue = "1",
            description = "The daemon's kafka.tally_threads (default 1, the daemon's default).")
    int tallyThreads;

    @Option(names = "--no-memory", description = "Skip the heap measurements.")
    boolean noMemory;

    @Option(names = {"-h", "--help"}, usageHelp = true, description = "Show this help and exit.")
    boolean help;

    private static String[] arguments = new String[0];

    private final StringBuilder results = new StringBuilder();
    private StreamProgress progress;
    private EmbeddedKafka broker;
    private StreamDaemon daemon;
    private Path runDir;
    private boolean cleanedUp;
    /** Set by the shutdown hook: the run was stopped by a signal, and what fails next is its consequence. */
    private volatile boolean signalled;

    public static void main(String[] args) {
        arguments = args.clone();
        System.exit(new CommandLine(new StreamBench()).execute(args));
    }

    /** A failure of the run: reported in one line, exit code 1. */
    static final class Failure extends RuntimeException {
        Failure(String message) {
            super(message);
        }
    }

    /** Whole numbers, with optional thousands separators: 5000000, 5_000_000, 5,000,000. */
    static final class Count implements ITypeConverter<Long> {
        @Override
        public Long convert(String value) {
            String digits = value.replace("_", "").replace(",", "");
            if (!digits.matches("[0-9]{1,12}")) {
                throw new CommandLine.TypeConversionException("'" + value + "' is not a whole number such as 1000000");
            }
            return Long.parseLong(digits);
        }
    }

    @Override
    public Integer call() {
        long n = events != null ? events : smoke ? SMOKE_EVENTS : 5_000_000;
        long pool = units != null ? units : smoke ? SMOKE_UNITS : 1_000_000;
        validate(n, pool);
        progress = new StreamProgress(System.err, terminal());
        Thread hook = new Thread(() -> {
            signalled = true;
            cleanUp();
        }, "bench-clean-up");
        Runtime.getRuntime().addShutdownHook(hook);
        try {
            run(n, (int) pool);
            return CommandLine.ExitCode.OK;
        } catch (Exception | Error e) {
            progress.done(null);
            String line;
            if (signalled) {
                line = "bench: stopped by a signal; the daemon and the broker are stopped";
            } else if (e instanceof Failure) {
                line = "bench: FAILED: " + e.getMessage();
            } else {
                line = "bench: FAILED: " + e;
                e.printStackTrace();
            }
            System.err.println(line);
            results.append(line).append('\n');
            return 1;
        } finally {
            saveResults();
            cleanUp();
            try {
                Runtime.getRuntime().removeShutdownHook(hook);
            } catch (IllegalStateException shuttingDown) {
                // the hook is running or has run
            }
        }
    }

    private void validate(long n, long pool) {
        if (n < 100 || n > 2_000_000_000L) {
            throw new ParameterException(spec.commandLine(), "--events must be between 100 and 2,000,000,000, got " + n);
        }
        if (pool < 1 || pool > 100_000_000L) {
            throw new ParameterException(spec.commandLine(), "--units must be between 1 and 100,000,000, got " + pool);
        }
        if (tallyThreads < 1 || tallyThreads > 64) {
            throw new ParameterException(spec.commandLine(), "--tally-threads must be between 1 and 64, got " + tallyThreads);
        }
        if (partitions < 1 || partitions > 64) {
            throw new ParameterException(spec.commandLine(), "--partitions must be between 1 and 64, got " + partitions);
        }
        if (!daemonHeap.matches("[1-9][0-9]*[kKmMgG]?")) {
            throw new ParameterException(spec.commandLine(), "--daemon-heap must be a size as for -Xmx (1g, 768m), got '"
                    + daemonHeap + "'");
        }
        if (stallSeconds < 10 || stallSeconds > 3600) {
            throw new ParameterException(spec.commandLine(), "--stall-timeout must be between 10 and 3600 seconds, got "
                    + stallSeconds);
        }
        if (!Files.isDirectory(parent)) {
            throw new ParameterException(spec.commandLine(), "--dir: no directory at " + parent);
        }
    }

    private void run(long n, int pool) throws Exception {
        if (!Files.isRegularFile(daemonJar)) {
            throw new Failure("no daemon jar at " + daemonJar.toAbsolutePath() + "; build it with "
                    + "'mvn -B -Dmaven.test.skip=true package -pl benchmarks -am' (scripts/bench does)");
        }
        String stamp = DateTimeFormatter.ofPattern("yyyyMMdd-HHmmss").withZone(ZoneOffset.UTC).format(Instant.now());
        runDir = Files.createTempDirectory(parent.toAbsolutePath(), "interim-bench-" + stamp + "-");

        say("Interim stream benchmark");
        say("  command      " + commandLine());
        say("  machine      " + machine());
        say("  java         " + System.getProperty("java.vm.name") + " " + System.getProperty("java.runtime.version")
                + " (" + System.getProperty("java.vendor") + "); this JVM runs the broker, the writer and the consumers");
        say("  stream       " + String.format(Locale.ROOT, "%,d events over %,d units, topic %s with %d partitions; "
                        + "%d experiments, %d arms, %d metrics (invented travel-booking traffic)", n, pool, StreamScenario.TOPIC,
                partitions, StreamScenario.EXPERIMENTS.size(), StreamScenario.arms(), StreamScenario.metrics()));
        say("  run dir      " + runDir);

        if (!noMemory) {
            memory();
        }

        Path brokerDir = runDir.resolve("broker");
        broker = EmbeddedKafka.start(brokerDir);   // it logs a line when ready
        broker.createTopics(Topic.deleting(StreamScenario.TOPIC, partitions));

        StreamTruth truth = write(n, pool);

        String prefix = "bench-" + stamp;
        Path config = runDir.resolve("daemon.yaml");
        Files.writeString(config, StreamScenario.yaml(broker.bootstrapServers(), prefix, Math.max(n, 1_000), tallyThreads));
        InterimConfig loaded = ConfigLoader.load(config);

        Drain a = drain("(a) plain consumer", n, null);
        CountingSink sink = new CountingSink();
        Drain b = drain("(b) consumer + JsonEventReader", n, new Parsing(new JsonEventReader(loaded.catalog()), sink));
        checkParsed(sink, truth);

        DaemonRun c = runDaemon(config, n, truth);

        say("");
        say("Results (" + String.format(Locale.ROOT, "%,d", n) + " events)");
        say(rateLine("(a) plain consumer", n, a.nanos, ""));
        say(rateLine("(b) consumer + JsonEventReader", n, b.nanos, ""));
        say(rateLine("(c) daemon, from process start", n, c.fromStart.toNanos(),
                "  c/a " + ratio(a.nanos, c.fromStart.toNanos()) + "  c/b " + ratio(b.nanos, c.fromStart.toNanos())));
        if (c.fromFirstCount != null) {
            say(rateLine("    daemon, from first count", n, c.fromFirstCount.toNanos(),
                    "  c/a " + ratio(a.nanos, c.fromFirstCount.toNanos()) + "  c/b " + ratio(b.nanos, c.fromFirstCount.toNanos())));
        } else {
            say("    daemon, from first count        n/a: the first count and the end fell between two polls");
        }
        say("    daemon start-up: HTTP up " + seconds(c.ready) + " s, first event counted by " + seconds(c.firstCount)
                + " s after process start (polled every " + POLL_EVERY.toMillis() + " ms); "
                + (daemon.archiveNote().startsWith("no ") ? "no class-data archive yet" : "class-data archive used"));
        StringBuilder marks = new StringBuilder("    daemon progress (its meter of accepted events): ");
        for (int i = 0; i < MARKS.length; i++) {
            marks.append(i == 0 ? "" : ", ").append(Math.round(MARKS[i] * 100)).append("% at ").append(seconds(c.marks[i])).append(" s");
        }
        Duration from10 = c.marks[0];
        Duration to90 = c.marks[2];
        if (from10 != null && to90 != null && to90.compareTo(from10) > 0) {
            marks.append(String.format(Locale.ROOT, "; from 10%% to 90%%: %,.0f events/s",
                    0.8 * n / (to90.minus(from10).toNanos() / 1e9)));
        }
        say(marks.toString());
        // CPU time: what each measurement cost the machine, whatever other guests took from it (steal
        // time is not CPU time of ours); the wall-clock rates above move with it, these much less.
        StringBuilder cpu = new StringBuilder(String.format(Locale.ROOT,
                "  CPU per event (a) %.2f µs, (b) %.2f µs (the polling thread's)", a.cpuNanos / 1e3 / n, b.cpuNanos / 1e3 / n));
        if (c.cpu != null) {
            cpu.append(String.format(Locale.ROOT, ", (c) %.2f µs (the daemon process, every thread, start-up included)",
                    c.cpu.toNanos() / 1e3 / n));
        }
        say(cpu.toString());
        StreamDaemon.GcSummary gc = c.gc;
        if (gc.pauses() == 0) {
            say("  daemon heap  no GC pause logged (the heap never filled); see " + daemon.gcLog());
        } else {
            say(String.format(Locale.ROOT, "  daemon heap  -Xmx%s: peak %,d MiB (largest heap before GC); live %,d MiB "
                            + "(largest after GC; last %,d MiB); %d pauses, %d full; committed up to %,d MiB",
                    daemonHeap, mib(gc.peakBeforeBytes()), mib(gc.largestAfterBytes()), mib(gc.lastAfterBytes()),
                    gc.pauses(), gc.fullPauses(), mib(gc.largestCommittedBytes())));
        }
        say("  check        daemon counts equal the truth: exposures (units) per arm, every tally's count (units), unit-rates' "
                + "successes; event-level metrics as ratios of per-unit sums: numerator and denominator sums, whole ones within 0.5; "
                + String.format(Locale.ROOT, "sums within %.0e (largest relative difference %.1e)", SUM_TOLERANCE, c.sumDeviation));
        StreamDaemon.LogSummary log = c.log;
        say("  daemon log   " + daemon.log() + " (" + log.errors() + " ERROR, " + log.warnings() + " WARN lines)");
        for (String line : log.first()) {
            say("               " + line);
        }
        say("  load avg     " + loadAverage() + " (after)");
    }

    /** Heap per unit and per (experiment, arm, metric), measured in this JVM before the broker starts. */
    private void memory() {
        List<Long> counts = memoryUnits != null ? memoryUnits : smoke ? List.of(20_000L) : List.of(1_000_000L, 10_000_000L);
        int looks = smoke ? Math.min(memoryLooks, 20) : memoryLooks;
        say("");
        say("Memory (this JVM, before the broker starts: used heap after full collections, before and after)");
        for (long units : counts) {
            progress.show("memory: " + String.format(Locale.ROOT, "%,d", units) + " units ...");
            StreamMemory.PerUnit r = StreamMemory.perUnit(Math.toIntExact(units));
            progress.done(null);
            say(String.format(Locale.ROOT, "  per unit       %,d units, one unit-total metric: %.1f bytes per unit per metric"
                    + " (its table's arrays alone: %.1f)", r.units(), r.bytesPerUnit(), r.tableBytesPerUnit()));
        }
        progress.show("memory: comparisons after " + looks + " looks ...");
        StreamMemory.PerComparison pc = StreamMemory.perComparison(2, looks);
        progress.done(null);
        say(String.format(Locale.ROOT, "  per comparison %d (experiment, arm, metric) after %,d looks each: %,.0f bytes each"
                + " (sequential state, recent looks kept for charts, decision)", pc.comparisons(), pc.looks(), pc.bytesPerComparison()));
    }

    private void saveResults() {
        if (runDir == null) {
            return;
        }
        try {
            Files.writeString(runDir.resolve("results.txt"), results.toString());
        } catch (IOException e) {
            System.err.println("bench: could not write " + runDir.resolve("results.txt") + ": " + e.getMessage());
        }
    }

    // ---------------------------------------------------------------- writing

    private StreamTruth write(long n, int pool) {
        StreamScenario scenario = new StreamScenario(pool);
        StreamTruth truth = new StreamTruth();
        Properties p = new Properties();
        p.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, broker.bootstrapServers());
        p.put(ProducerConfig.CLIENT_ID_CONFIG, "bench-writer");
        p.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
        p.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
        p.put(ProducerConfig.ACKS_CONFIG, "1");
        p.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, false);
        p.put(ProducerConfig.COMPRESSION_TYPE_CONFIG, "lz4");
        p.put(ProducerConfig.LINGER_MS_CONFIG, 20);
        p.put(ProducerConfig.BATCH_SIZE_CONFIG, 256 * 1024);
        p.put(ProducerConfig.BUFFER_MEMORY_CONFIG, 128L * 1024 * 1024);
        AtomicReference<Exception> failed = new AtomicReference<>();
        AtomicLong acknowledged = new AtomicLong();
        Callback callback = (metadata, e) -> {
            if (e != null) {
                failed.compareAndSet(null, e);
            } else {
                acknowledged.incrementAndGet();
            }
        };
        long valueBytes = 0;
        long keyBytes = 0;
        int shortest = Integer.MAX_VALUE;
        int longest = 0;
        long start = System.nanoTime();
        try (KafkaProducer<byte[], byte[]> producer = new KafkaProducer<>(p)) {
            Event e = new Event();
            for (long i = 0; i < n; i++) {
                scenario.next(e);
                truth.record(e);
                byte[] key = scenario.key(e);
                byte[] value = scenario.json(e);
                keyBytes += key.length;
                valueBytes += value.length;
                shortest = Math.min(shortest, value.length);
                longest = Math.max(longest, value.length);
                producer.send(new ProducerRecord<>(StreamScenario.TOPIC, key, value), callback);
                if ((i & 1023) == 0) {
                    if (failed.get() != null) {
                        throw new Failure("writing the events failed: " + failed.get());
                    }
                    if (progress.due()) {
                        progress.show(String.format(Locale.ROOT, "writing: %,d / %,d events (%d%%), %,.0f events/s", i, n,
                                i * 100 / n, i / secondsSince(start)));
                    }
                }
            }
            producer.flush();
        }
        long nanos = System.nanoTime() - start;
        if (failed.get() != null) {
            throw new Failure("writing the events failed: " + failed.get());
        }
        if (acknowledged.get() != n || truth.totalEvents() != n) {
            throw new Failure("the broker acknowledged " + acknowledged.get() + " of " + n + " events");
        }
        progress.done(null);
        say("  event size   " + String.format(Locale.ROOT, "%.1f bytes of JSON on average (shortest %d, longest %d); "
                + "keys %.1f bytes", valueBytes / (double) n, shortest, longest, keyBytes / (double) n));
        say("  write        " + String.format(Locale.ROOT, "%,d events in %.2f s: %,.0f events/s (lz4 batches, acks=1; "
                + "not a target)", n, nanos / 1e9, n / (nanos / 1e9)));
        return truth;
    }

    // ---------------------------------------------------------------- plain consumers

    /** What one drain of the topic took, from consumer creation to the last record. */
    /** A drain's wall-clock time, the bytes it read, and the CPU time of the thread that polled and read. */
    record Drain(long nanos, long bytes, long cpuNanos) {}

    /** The reader and its sink, for (b). */
    record Parsing(JsonEventReader reader, CountingSink sink) {}

    /** Counts what the reader hands over, so that the JIT cannot drop the work of reading. */
    static final class CountingSink implements ObservationSink {
        long exposures;
        long outcomes;
        long successes;
        long values;
        double valueSum;
        long refused;
        String firstRefusal;

        @Override
        public void exposure(int experiment, int arm, String unit) {
            exposures++;
        }

        @Override
        public void outcome(int experiment, int arm, String unit, int metric, boolean success) {
            outcomes++;
            if (success) {
                successes++;
            }
        }

        @Override
        public void value(int experiment, int arm, String unit, int metric, double value) {
            values++;
            valueSum += value;
        }

        @Override
        public void ratio(int experiment, int arm, String unit, int metric, double numerator, double denominator) {
            values++;
            valueSum += numerator;
        }
    }

    private Drain drain(String label, long n, Parsing parsing) {
        Properties p = new Properties();
        p.put(ConsumerConfig.BOOTSTRAP_SERVERS_CONFIG, broker.bootstrapServers());
        p.put(ConsumerConfig.CLIENT_ID_CONFIG, "bench-" + (parsing == null ? "plain" : "parsing"));
        p.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
        p.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, false);
        p.put(ConsumerConfig.MAX_POLL_RECORDS_CONFIG, MAX_POLL_RECORDS);
        p.put(ConsumerConfig.KEY_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
        p.put(ConsumerConfig.VALUE_DESERIALIZER_CLASS_CONFIG, ByteArrayDeserializer.class.getName());
        long stall = Duration.ofSeconds(stallSeconds).toNanos();
        long cpuStart = java.lang.management.ManagementFactory.getThreadMXBean().getCurrentThreadCpuTime();
        long start = System.nanoTime();
        long end;
        long count = 0;
        long bytes = 0;
        try (KafkaConsumer<byte[], byte[]> consumer = new KafkaConsumer<>(p)) {
            List<TopicPartition> all = new ArrayList<>();
            for (PartitionInfo info : consumer.partitionsFor(StreamScenario.TOPIC)) {
                all.add(new TopicPartition(info.topic(), info.partition()));
            }
            consumer.assign(all);
            consumer.seekToBeginning(all);
            long lastRecord = start;
            end = start;
            while (count < n) {
                ConsumerRecords<byte[], byte[]> records = consumer.poll(Duration.ofMillis(100));
                for (ConsumerRecord<byte[], byte[]> r : records) {
                    count++;
                    byte[] value = r.value();
                    bytes += value.length;
                    if (parsing != null) {
                        try {
                            parsing.reader().read(value, parsing.sink());
                        } catch (BadEventException e) {
                            CountingSink s = parsing.sink();
                            if (s.refused++ == 0) {
                                s.firstRefusal = e.getMessage();
                            }
                        }
                    }
                }
                end = System.nanoTime();
                if (!records.isEmpty()) {
                    lastRecord = end;
                } else if (end - lastRecord > stall) {
                    throw new Failure(label + ": no record for " + stallSeconds + " s after " + count + " of " + n);
                }
                if (progress.due()) {
                    progress.show(String.format(Locale.ROOT, "%s: %,d / %,d events (%d%%), %,.0f events/s", label, count, n,
                            count * 100 / n, count / ((end - start) / 1e9)));
                }
            }
        }
        progress.done(null);
        if (count != n) {
            throw new Failure(label + ": read " + count + " records, wrote " + n);
        }
        say(String.format(Locale.ROOT, "  %-31s %,d events in %.2f s (%,.0f MB/s of JSON)", label, n, (end - start) / 1e9,
                bytes / 1e6 / ((end - start) / 1e9)));
        long cpu = java.lang.management.ManagementFactory.getThreadMXBean().getCurrentThreadCpuTime() - cpuStart;
        return new Drain(end - start, bytes, cpu);
    }

    private void checkParsed(CountingSink s, StreamTruth t) {
        if (s.refused > 0) {
            throw new Failure("JsonEventReader refused " + s.refused + " of the written events, the first: " + s.firstRefusal);
        }
        if (s.exposures != t.readerExposures || s.outcomes != t.readerOutcomes || s.successes != t.readerSuccesses
                || s.values != t.readerValues || s.valueSum != t.readerValueSum) {
            throw new Failure(String.format(Locale.ROOT, "JsonEventReader read %d exposures, %d outcomes (%d successes), "
                            + "%d values (sum %s); the writer recorded %d, %d (%d), %d (%s)", s.exposures, s.outcomes,
                    s.successes, s.values, s.valueSum, t.readerExposures, t.readerOutcomes, t.readerSuccesses,
                    t.readerValues, t.readerValueSum));
        }
        say(String.format(Locale.ROOT, "  %-31s %,d exposures, %,d outcomes, %,d values: as written", "parsed", s.exposures,
                s.outcomes, s.values));
    }

    // ---------------------------------------------------------------- the daemon

    /** The daemon's figures: durations from process start (and from the first count) to the end. */
    record DaemonRun(Duration fromStart, Duration fromFirstCount, Duration ready, Duration firstCount, Duration[] marks,
                     double sumDeviation, StreamDaemon.GcSummary gc, StreamDaemon.LogSummary log, Duration cpu) {}

    /** Shares of the events at which the daemon's progress is noted (from its meter of accepted events). */
    private static final double[] MARKS = {0.1, 0.5, 0.9, 1.0};

    /**
     * Starts the daemon and waits until every event is reflected in a look.
     *
     * <p>How the end is detected: the API's exposures and tallies are those of each experiment's
     * last look (the judge stage publishes a view when it looks). The bench polls {@code GET
     * /api/experiments} every 200 ms; an experiment is complete at the first answer whose exposures
     * per arm and every tally's count equal the truth (and the unit-rates' successes, and the
     * event-level ratios' whole sums, successes and events, each within 0.5), and whose
     * {@code last_look} is later than the last poll that still found the counts incomplete, so that
     * the look itself saw every event. The end is that {@code last_look} (the daemon's own clock,
     * on this machine), the latest over the experiments.
     */
    private DaemonRun runDaemon(Path config, long n, StreamTruth truth) throws Exception {
        daemon = new StreamDaemon(daemonJar.toAbsolutePath(), daemonHeap, config, runDir);
        say("  daemon       " + String.join(" ", daemon.command()));
        say("  start-up     " + daemon.archiveNote());
        List<StreamScenario.Experiment> experiments = StreamScenario.EXPERIMENTS;
        int count = experiments.size();
        Instant[] incompleteAsOf = new Instant[count];
        Instant[] completeAt = new Instant[count];
        long stall = Duration.ofSeconds(stallSeconds).toNanos();

        Instant startedAt = Instant.now();
        long start = System.nanoTime();
        daemon.start();
        Arrays.fill(incompleteAsOf, startedAt);
        Instant readyAt = null;
        Instant firstCountedAt = null;
        Instant[] markAt = new Instant[MARKS.length];
        String lastState = "";
        long lastChange = start;
        String differences = "the daemon has not answered yet";
        while (true) {
            long pollStart = System.nanoTime();
            if (!daemon.alive()) {
                throw new Failure("the daemon exited with code " + daemon.exitCode() + " before counting every event ("
                        + differences + "); see " + daemon.log());
            }
            if (pollStart - lastChange > stall) {
                throw new Failure("the daemon made no progress for " + stallSeconds + " s: " + differences + "; see "
                        + daemon.log());
            }
            if (!daemon.ready()) {
                if (progress.due()) {
                    progress.show(String.format(Locale.ROOT, "(c) daemon: starting, %.1f s", secondsSince(start)));
                }
                Thread.sleep(50);
                continue;
            }
            if (readyAt == null) {
                readyAt = Instant.now();
            }
            Instant asked = Instant.now();
            String metrics;
            JsonNode api;
            try {
                metrics = daemon.metrics();
                api = daemon.experiments();
            } catch (IOException notYet) {
                differences = "its HTTP endpoint did not answer: " + notYet.getMessage();
                Thread.sleep(POLL_EVERY.toMillis());
                continue;
            }
            long accepted = (long) StreamDaemon.counter(metrics, "interim_events_accepted_total");
            long rejected = (long) StreamDaemon.counter(metrics, "interim_events_rejected_total");
            if (rejected > 0) {
                throw new Failure("the daemon refused " + rejected + " events (dead letters): "
                        + StreamDaemon.nonZero(metrics, "interim_events_rejected_total") + "; see " + daemon.log());
            }
            if (accepted > n) {
                throw new Failure("the daemon counted " + accepted + " events, " + (accepted - n) + " more than were written");
            }
            if (accepted > 0 && firstCountedAt == null) {
                firstCountedAt = asked;
            }
            for (int i = 0; i < MARKS.length; i++) {
                if (markAt[i] == null && accepted >= Math.ceil(MARKS[i] * n)) {
                    markAt[i] = asked;
                }
            }
            List<String> open = new ArrayList<>();
            int complete = 0;
            for (int x = 0; x < count; x++) {
                if (completeAt[x] != null) {
                    complete++;
                    continue;
                }
                JsonNode e = find(api, experiments.get(x).id());
                String difference = truth.difference(x, e, false, 0);
                if (difference != null) {
                    incompleteAsOf[x] = asked;
                    open.add(difference);
                    continue;
                }
                Instant look = instant(e.path("last_look").asText(null));
                if (look != null && look.isAfter(incompleteAsOf[x])) {
                    completeAt[x] = look;
                    complete++;
                } else {
                    open.add(experiments.get(x).id() + ": counts complete, waiting for a look after them");
                }
            }
            if (complete == count) {
                break;
            }
            differences = open.isEmpty() ? "" : String.join("; ", open);
            String state = accepted + "|" + differences;
            if (!state.equals(lastState)) {
                lastState = state;
                lastChange = pollStart;
            }
            if (progress.due()) {
                double elapsed = secondsSince(start);
                progress.show(String.format(Locale.ROOT, "(c) daemon: %,d / %,d events counted (%d%%), %,.0f events/s since "
                                + "start, %d/%d experiments complete, %.1f s", accepted, n, accepted * 100 / n,
                        accepted / elapsed, complete, count, elapsed));
            }
            long rest = POLL_EVERY.toNanos() - (System.nanoTime() - pollStart);
            if (rest > 0) {
                Thread.sleep(rest / 1_000_000);
            }
        }
        Instant seenAt = Instant.now();
        Instant end = Stream.of(completeAt).max(Comparator.naturalOrder()).orElseThrow();
        progress.done(null);
        Duration fromStart = Duration.between(startedAt, end);
        if (fromStart.isNegative() || fromStart.isZero()) {
            throw new Failure("the daemon's last look (" + end + ") is not after its start (" + startedAt + "): clocks?");
        }
        say(String.format(Locale.ROOT, "  %-31s %,d events counted and looked at %.2f s after process start (seen by the "
                + "bench at %.2f s)", "(c) daemon", n, fromStart.toNanos() / 1e9, Duration.between(startedAt, seenAt).toNanos() / 1e9));

        // More looks: a double count or a late change would show now.
        Duration cpu = daemon.cpu();   // every thread's, until every event was counted and looked at
        Thread.sleep(SETTLE.toMillis());
        JsonNode api = daemon.experiments();
        String metrics = daemon.metrics();
        JsonNode[] byExperiment = new JsonNode[count];
        for (int x = 0; x < count; x++) {
            byExperiment[x] = find(api, experiments.get(x).id());
            String difference = truth.difference(x, byExperiment[x], true, SUM_TOLERANCE);
            if (difference != null) {
                throw new Failure("after further looks the daemon's counts differ from what was written: " + difference);
            }
        }
        long accepted = (long) StreamDaemon.counter(metrics, "interim_events_accepted_total");
        long rejected = (long) StreamDaemon.counter(metrics, "interim_events_rejected_total");
        if (accepted != n || rejected != 0) {
            throw new Failure("the daemon's meters say " + accepted + " events accepted and " + rejected + " refused, of " + n);
        }
        double deviation = truth.largestSumDeviation(byExperiment);
        long decisions = (long) StreamDaemon.counter(metrics, "interim_decisions_total");
        say(String.format(Locale.ROOT, "  %-31s counts equal the truth after %.1f s more; decision records published: %d",
                "", SETTLE.toMillis() / 1e3, decisions));

        progress.show("(c) daemon: stopping (SIGTERM) ...");
        daemon.stop(Duration.ofSeconds(30));
        progress.done(null);
        Duration fromFirst = firstCountedAt != null && firstCountedAt.isBefore(end) ? Duration.between(firstCountedAt, end) : null;
        Duration[] marks = new Duration[MARKS.length];
        for (int i = 0; i < MARKS.length; i++) {
            marks[i] = markAt[i] == null ? null : Duration.between(startedAt, markAt[i]);
        }
        return new DaemonRun(fromStart, fromFirst, Duration.between(startedAt, readyAt),
                firstCountedAt == null ? null : Duration.between(startedAt, firstCountedAt), marks, deviation,
                daemon.summarizeGc(), daemon.summarizeLog(), cpu);
    }

    private static JsonNode find(JsonNode api, String id) {
        for (JsonNode e : api) {
            if (id.equals(e.path("id").asText())) {
                return e;
            }
        }
        return null;
    }

    private static Instant instant(String text) {
        if (text == null) {
            return null;
        }
        try {
            return Instant.parse(text);
        } catch (DateTimeParseException e) {
            return null;
        }
    }

    // ---------------------------------------------------------------- clean-up

    /** Stops the daemon, then the broker, and removes the broker's data unless --keep: on every exit. */
    private synchronized void cleanUp() {
        if (cleanedUp) {
            return;
        }
        cleanedUp = true;
        if (daemon != null) {
            daemon.close();
        }
        if (broker != null) {
            try {
                broker.close();
            } catch (RuntimeException e) {
                System.err.println("bench: stopping the broker: " + e);
            }
        }
        if (runDir != null) {
            if (keep) {
                System.err.println("bench: the broker's data is kept in " + runDir.resolve("broker"));
            } else {
                delete(runDir.resolve("broker"));
            }
            delete(runDir.resolve("daemon-data"));
            System.err.println("bench: logs and results in " + runDir);
        }
    }

    private static void delete(Path dir) {
        if (!Files.exists(dir)) {
            return;
        }
        try (Stream<Path> paths = Files.walk(dir)) {
            paths.sorted(Comparator.reverseOrder()).forEach(p -> {
                try {
                    Files.delete(p);
                } catch (IOException e) {
                    throw new UncheckedIOException(e);
                }
            });
        } catch (IOException | UncheckedIOException e) {
            System.err.println("bench: could not remove " + dir + ": " + e.getMessage());
        }
    }

    // ---------------------------------------------------------------- output

    private void say(String line) {
        System.out.println(line);
        System.out.flush();
        results.append(line).append('\n');
    }

    private static String rateLine(String label, long n, long nanos, String tail) {
        return String.format(Locale.ROOT, "  %-33s %8.2f s  %,12.0f events/s%s", label, nanos / 1e9, n / (nanos / 1e9), tail);
    }

    /** The rate of the daemon over the rate of the consumer: their times the other way round. */
    private static String ratio(long consumerNanos, long daemonNanos) {
        return String.format(Locale.ROOT, "%.3f", consumerNanos / (double) daemonNanos);
    }

    private static String seconds(Duration d) {
        return d == null ? "n/a" : String.format(Locale.ROOT, "%.2f", d.toNanos() / 1e9);
    }

    private static double secondsSince(long nanos) {
        return Math.max(1e-9, (System.nanoTime() - nanos) / 1e9);
    }

    private static long mib(long bytes) {
        return Math.round(bytes / (1024.0 * 1024.0));
    }

    private static boolean terminal() {
        String told = System.getProperty("interim.bench.tty");
        return told != null ? Boolean.parseBoolean(told) : System.console() != null;
    }

    private static String commandLine() {
        String told = System.getProperty("interim.bench.command");
        if (told != null && !told.isBlank()) {
            return told;
        }
        return "java -cp " + System.getProperty("java.class.path") + " " + StreamBench.class.getName() + " "
                + String.join(" ", arguments);
    }

    private static String machine() {
        StringBuilder b = new StringBuilder();
        b.append(Runtime.getRuntime().availableProcessors()).append(" cores");
        String cpu = cpuModel();
        if (cpu != null) {
            b.append(" (").append(cpu).append(')');
        }
        if (ManagementFactory.getOperatingSystemMXBean() instanceof com.sun.management.OperatingSystemMXBean os) {
            b.append(String.format(Locale.ROOT, ", %.1f GiB", os.getTotalMemorySize() / (1024.0 * 1024 * 1024)));
        }
        b.append(", ").append(System.getProperty("os.name")).append(' ').append(System.getProperty("os.version"))
                .append(' ').append(System.getProperty("os.arch"));
        b.append("; load average ").append(loadAverage()).append(" (before)");
        return b.toString();
    }

    private static String cpuModel() {
        try {
            for (String line : Files.readAllLines(Path.of("/proc/cpuinfo"), StandardCharsets.ISO_8859_1)) {
                if (line.startsWith("model name")) {
                    return line.substring(line.indexOf(':') + 1).trim();
                }
            }
        } catch (IOException | RuntimeException e) {
            // not Linux: the core count says enough
        }
        return null;
    }

    private static String loadAverage() {
        try {
            String[] f = Files.readString(Path.of("/proc/loadavg")).trim().split("\\s+");
            return f[0] + " " + f[1] + " " + f[2];
        } catch (IOException | RuntimeException e) {
            return String.format(Locale.ROOT, "%.2f", ManagementFactory.getOperatingSystemMXBean().getSystemLoadAverage());
        }
    }
}
