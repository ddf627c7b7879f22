package dev.interim.bench;

import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.core.StreamReadConstraints;
import com.fasterxml.jackson.core.StreamReadFeature;
import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.stream.BadEventException;
import dev.interim.stream.JsonEventReader;
import dev.interim.stream.ObservationSink;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.util.Locale;
import java.util.Random;
import java.util.concurrent.TimeUnit;
import org.openjdk.jmh.annotations.Benchmark;
import org.openjdk.jmh.annotations.BenchmarkMode;
import org.openjdk.jmh.annotations.Fork;
import org.openjdk.jmh.annotations.Level;
import org.openjdk.jmh.annotations.Measurement;
import org.openjdk.jmh.annotations.Mode;
import org.openjdk.jmh.annotations.OutputTimeUnit;
import org.openjdk.jmh.annotations.Scope;
import org.openjdk.jmh.annotations.Setup;
import org.openjdk.jmh.annotations.State;
import org.openjdk.jmh.annotations.Warmup;
import org.openjdk.jmh.infra.Blackhole;

/**
 * Events per second through {@link JsonEventReader#read}: realistic events of about 150 bytes, each
 * an exposure and up to four metrics (an error rate, a latency mean, a per-unit conversion rate and
 * a per-unit spend total), into a sink that does nothing but keep its arguments observable. Beside it,
 * {@link #streamingScan}: the same bytes through a bare Jackson streaming parser with the reader's
 * settings (duplicate detection, the same limits), every token read and nothing done with it — the
 * ceiling for any reader built on that parser.
 *
 * <p>Run: {@code scripts/benchmark ParseBenchmark} (or, once built,
 * {@code java -jar benchmarks/target/interim-benchmarks.jar ParseBenchmark}). ns per event is
 * 10^9 divided by the score.
 *
 * <p>The events are invented (a fictional checkout redesign), {@value #EVENTS} of them made once
 * from a fixed {@link Random} with varied units, values, member order and fields present (147.6
 * bytes on average, all ASCII), and read round-robin, so that the branch predictor does not learn a
 * single event. A typical one:
 * <pre>{@code {"ts":1764691794574,"exp":"checkout-v2","arm":"one-page","user":"u-53267","latency_ms":199.5,
 *  "step":"address","amount":48.74,"region":"eu-west"}}</pre>
 * Every one of them is accepted (checked in setup): the benchmark times the usual path, not refusals.
 */
@BenchmarkMode(Mode.Throughput)
@OutputTimeUnit(TimeUnit.SECONDS)
@Warmup(iterations = 6, time = 1)   // on a busy two-core machine the JIT needs several seconds
@Measurement(iterations = 5, time = 1)
@Fork(value = 1, jvmArgsAppend = {"-Xms1g", "-Xmx1g"})
@State(Scope.Thread)
public class ParseBenchmark {
    static final int EVENTS = 1024;

    static final String CONFIG = """
            kafka:
              input_topics: [shop.events]
              input_keyed_by_unit: true
            events:
              experiment: /exp
              arm: /arm
              unit: /user
            experiments:
              - id: checkout-v2
                control: control
                treatments: [one-page]
                metrics:
                  - {name: errors, kind: event-rate, role: guardrail, worse: higher, field: /status,
                     counts_if: {at_least: 500}, max_per_arm: 1000000}
                  - {name: latency, kind: event-mean, role: guardrail, worse: higher, field: /latency_ms,
                     range: {min: 0, max: 60000}, max_per_arm: 1000000}
                  - {name: bought, kind: unit-rate, role: primary, worse: lower, field: /step,
                     counts_if: {equals: paid}, max_per_arm: 1000000}
                  - {name: spend, kind: unit-total, role: guardrail, worse: lower, field: /amount,
                     range: {min: 0}, max_per_arm: 1000000}
            """;

    private JsonEventReader reader;
    private JsonFactory bare;
    private byte[][] events;
    private int next;
    private BlackholeSink sink;

    /** A sink that only hands what it gets to the blackhole, so that nothing read can be optimised away. */
    static final class BlackholeSink implements ObservationSink {
        private final Blackhole blackhole;

        BlackholeSink(Blackhole blackhole) {
            this.blackhole = blackhole;
        }

        @Override
        public void exposure(int experiment, int arm, String unit) {
            blackhole.consume(unit);
        }

        @Override
        public void outcome(int experiment, int arm, String unit, int metric, boolean success) {
            blackhole.consume(success);
        }

        @Override
        public void value(int experiment, int arm, String unit, int metric, double value) {
            blackhole.consume(value);
        }

        @Override
        public void ratio(int experiment, int arm, String unit, int metric, double numerator, double denominator) {
            blackhole.consume(numerator);
            blackhole.consume(denominator);
        }
    }

    @Setup(Level.Trial)
    public void prepare(Blackhole blackhole) throws BadEventException {
        InterimConfig config = ConfigLoader.parseWithoutSecrets(CONFIG);
        reader = new JsonEventReader(config.catalog());
        // The reader's parser settings (JsonEventReader builds its factory the same way).
        bare = JsonFactory.builder()
                .streamReadConstraints(StreamReadConstraints.builder()
                        .maxNestingDepth(64).maxStringLength(JsonEventReader.MAX_BYTES).maxNumberLength(100).build())
                .enable(StreamReadFeature.STRICT_DUPLICATE_DETECTION)
                .build();
        sink = new BlackholeSink(blackhole);
        events = events(new Random(20_251_202L));
        long bytes = 0;
        for (byte[] e : events) {
            reader.read(e, sink);   // throws if any event were refused
            bytes += e.length;
        }
        double average = (double) bytes / events.length;
        if (average < 120 || average > 180) {
            throw new IllegalStateException(String.format(Locale.ROOT, "the events average %.1f bytes; this benchmark "
                    + "is about events of some 150 bytes", average));
        }
    }

    /** Checkout events: the shared fields, then the metrics' fields (each present or not) and context, in varied order. */
    static byte[][] events(Random random) {
        String[] steps = {"cart", "address", "shipping", "payment", "paid"};
        String[] regions = {"eu-west", "us-east", "ap-south"};
        byte[][] out = new byte[EVENTS][];
        for (int i = 0; i < EVENTS; i++) {
            String[] members = {
                "\"ts\":" + (1_764_650_000_000L + random.nextInt(86_400_000)),
                "\"exp\":\"checkout-v2\"",
                "\"arm\":\"" + (random.nextBoolean() ? "control" : "one-page") + "\"",
                "\"user\":\"u-" + (10_000 + random.nextInt(90_000)) + "\"",
                random.nextInt(10) < 8 ? "\"status\":" + (random.nextInt(50) == 0 ? 503 : 200) : null,
                random.nextInt(10) < 8 ? String.format(Locale.ROOT, "\"latency_ms\":%.1f", 20 + 200 * random.nextDouble()) : null,
                "\"step\":\"" + steps[random.nextInt(steps.length)] + "\"",
                random.nextInt(10) < 3 ? String.format(Locale.ROOT, "\"amount\":%.2f", 5 + 120 * random.nextDouble()) : null,
                "\"region\":\"" + regions[random.nextInt(regions.length)] + "\"",
                random.nextInt(4) == 0 ? "\"client\":{\"app\":\"web\",\"v\":\"5.12." + random.nextInt(9) + "\"}" : null,
            };
            // Producers mostly keep one order; a quarter of the events come from one that does not.
            if (random.nextInt(4) == 0) {
                for (int j = members.length - 1; j > 0; j--) {
                    int k = random.nextInt(j + 1);
                    String m = members[j];
                    members[j] = members[k];
                    members[k] = m;
                }
            }
            StringBuilder json = new StringBuilder("{");
            for (String m : members) {
                if (m != null) {
                    json.append(json.length() > 1 ? "," : "").append(m);
                }
            }
            out[i] = json.append('}').toString().getBytes(StandardCharsets.UTF_8);
        }
        return out;
    }

    private byte[] nextEvent() {
        byte[] e = events[next];
        next = (next + 1) & (EVENTS - 1);
        return e;
    }

    /** One event through the reader into the sink. */
    @Benchmark
    public void reader() throws BadEventException {
        reader.read(nextEvent(), sink);
    }

    /** The ceiling: one event's tokens through a bare parser with the reader's settings, nothing decoded. */
    @Benchmark
    public int streamingScan() throws IOException {
        int tokens = 0;
        try (JsonParser p = bare.createParser(nextEvent())) {
            for (JsonToken t = p.nextToken(); t != null; t = p.nextToken()) {
                tokens++;
            }
        }
        return tokens;
    }
}
