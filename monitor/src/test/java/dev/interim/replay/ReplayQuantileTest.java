package dev.interim.replay;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.experiment.Decision;
import dev.interim.experiment.DecisionRecord;
import dev.interim.signal.DecisionJson;
import dev.interim.stats.HistogramCounts;
import java.io.IOException;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.Random;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * A p99 latency guardrail replayed over the invented Tansy search service: ranker-b sends 4% of its
 * searches down a slow path (three times as long), which barely moves the median but lifts the
 * 99th percentile; ranker-c is served like control. The replay must stop ranker-b for harm on the
 * p99, record which quantile it decided on and the arms' quantiles, and say so in its text.
 *
 * <p>Events: 20,000 per arm, one every 10 ms (arms in turn), latencies log-normal with median 80 ms
 * and σ = 0.5 on the log scale, from a seeded generator, written as NDJSON with a user id each.
 */
// Source: the arms' quantiles are checked against an exact computation (a sort of the values each arm
// had at the deciding look); the histogram's precision, 1/128 of a value, is HdrHistogram's documented
// bucket width for 2 significant digits. Decisions come from the seeded traffic (its own ground truth).
class ReplayQuantileTest {
    private static final String ID = "tansy-ranker";
    private static final Instant T0 = Instant.parse("2031-08-14T09:00:00Z");
    private static final String[] ARMS = {"current", "ranker-b", "ranker-c"};
    private static final int PER_ARM = 20_000;
    private static final int USERS_PER_ARM = 2_000;

    private static final String CONFIG = """
            kafka:
              input_topics: [tansy.searches]
              input_keyed_by_unit: %s
            events:
              experiment: /exp
              arm: /arm
              time: /at
              %s
            experiments:
              - id: tansy-ranker
                control: current
                treatments: [ranker-b, ranker-c]
                look_every: 1m
                metrics:
                  - name: search-ms
                    kind: event-quantile
                    quantile: 0.99
                    role: guardrail
                    worse: higher
                    field: /ms
                    range: {max: 60000}
                    max_per_arm: 20000
            """;

    @TempDir
    static Path dir;

    private static Path events;
    /** Every event's arm index, time (ms since T0) and latency, in file order. */
    private static int[] arm;
    private static long[] at;
    private static double[] ms;

    @BeforeAll
    static void writeTheSearches() throws IOException {
        Random random = new Random(20310814L);
        int n = 3 * PER_ARM;
        arm = new int[n];
        at = new long[n];
        ms = new double[n];
        List<String> lines = new ArrayList<>(n);
        for (int i = 0; i < n; i++) {
            arm[i] = i % 3;
            at[i] = 10L * i;
            double latency = 80 * Math.exp(0.5 * random.nextGaussian());
            if (arm[i] == 1 && random.nextDouble() < 0.04) {
                latency *= 3; // the slow path
            }
            ms[i] = Math.round(latency * 10) / 10.0;
            int user = arm[i] + 3 * random.nextInt(USERS_PER_ARM); // a user stays in one arm
            lines.add("{\"exp\":\"" + ID + "\",\"arm\":\"" + ARMS[arm[i]] + "\",\"user\":\"u" + user + "\",\"at\":\""
                    + T0.plusMillis(at[i]) + "\",\"ms\":" + ms[i] + "}");
        }
        events = Files.write(dir.resolve("tansy.ndjson"), lines);
    }

    private static InterimConfig perEvent() {
        return ConfigLoader.parse(CONFIG.formatted("false", ""), Map.of());
    }

    private static InterimConfig perUnit() {
        return ConfigLoader.parse(CONFIG.formatted("true", "unit: /user"), Map.of());
    }

    private static List<DecisionRecord> replay(InterimConfig config, Path file, List<ReplayResult> result) throws IOException {
        List<DecisionRecord> decisions = new ArrayList<>();
        result.add(new Replay(config.catalog()).run(file, new ReplayListener() {
            @Override
            public void decided(DecisionRecord record) {
                decisions.add(record);
            }
        }));
        return decisions;
    }

    /** The value at rank ⌈p·n⌉ of the arm's latencies counted before {@code look} (exact: a sort). */
    private static double sortedQuantile(int which, Instant look, double p) {
        long before = look.toEpochMilli() - T0.toEpochMilli();
        double[] values = new double[arm.length];
        int n = 0;
        for (int i = 0; i < arm.length; i++) {
            if (arm[i] == which && at[i] < before) {
                values[n++] = ms[i];
            }
        }
        double[] sorted = Arrays.copyOf(values, n);
        Arrays.sort(sorted);
        return sorted[(int) Math.ceil(p * n) - 1];
    }

    @Test
    void theSlowPathIsStoppedForHarmOnItsP99AndTheRecordNamesTheQuantile() throws IOException {
        List<ReplayResult> result = new ArrayList<>();
        List<DecisionRecord> decisions = replay(perEvent(), events, result);

        List<DecisionRecord> stops = decisions.stream().filter(d -> d.decision().startsWith("stop")).toList();
        assertThat(stops).hasSize(1);
        DecisionRecord stop = stops.get(0);
        assertThat(stop.arm()).isEqualTo("ranker-b");
        assertThat(stop.decision()).isEqualTo(Decision.STOP_HARM.label());
        assertThat(stop.kind()).isEqualTo("event-quantile");
        assertThat(stop.quantile()).isEqualTo(0.99);

        // The levels are the arms' 99th percentiles, in ms, within the histogram's 1/128 of the sorted value.
        double b = sortedQuantile(1, stop.at(), 0.99);
        double control = sortedQuantile(0, stop.at(), 0.99);
        assertThat(stop.treatmentLevel()).isCloseTo(b, within(b * HistogramCounts.RELATIVE_PRECISION));
        assertThat(stop.controlLevel()).isCloseTo(control, within(control * HistogramCounts.RELATIVE_PRECISION));
        assertThat(stop.treatmentLevel()).as("the slow path lifts the p99").isGreaterThan(1.2 * stop.controlLevel());
        // The estimate is the difference of the two quantiles (1e-9: rounding of the subtraction only).
        assertThat(stop.estimate()).isCloseTo(stop.treatmentLevel() - stop.controlLevel(), within(1e-9));
        assertThat(stop.relative()).isCloseTo(stop.treatmentLevel() / stop.controlLevel() - 1, within(1e-12));

        // As published: the JSON names the kind and the quantile and carries the levels.
        String json = DecisionJson.writeString(stop);
        assertThat(json).contains("\"kind\":\"event-quantile\",\"quantile\":0.99,")
                .contains("\"levels\":{\"treatment\":" + stop.treatmentLevel() + ",\"control\":" + stop.controlLevel() + "}");
        assertThat(DecisionJson.read(json.getBytes(java.nio.charset.StandardCharsets.UTF_8))).isEqualTo(stop);

        // The healthy ranker is looked at and not stopped.
        ExperimentOutcome outcome = result.get(0).experiments().get(0);
        ComparisonOutcome healthy = outcome.comparisons().stream().filter(c -> c.arm().equals("ranker-c")).findFirst().orElseThrow();
        assertThat(healthy.decision()).isNotEqualTo(Decision.STOP_HARM);
        assertThat(healthy.last()).isNotNull();
    }

    @Test
    void theTextNamesThePercentileOnTheDecisionLineAndInTheSummary() throws IOException {
        InterimConfig config = perEvent();
        List<ReplayResult> result = new ArrayList<>();
        List<DecisionRecord> decisions = replay(config, events, result);
        ReplayText text = new ReplayText(config.catalog());
        DecisionRecord stop = decisions.stream().filter(d -> d.decision().equals("stop-harm")).findFirst().orElseThrow();

        assertThat(text.line(stop)).startsWith(stop.at() + "  " + ID + "  ranker-b  p99 search-ms  stop-harm      look ");
        StringWriter summary = new StringWriter();
        text.summary(result.get(0), "tansy.ndjson", new PrintWriter(summary));
        String row = summary.toString().lines().filter(l -> l.startsWith("  ranker-b  p99 search-ms")).findFirst().orElseThrow();
        assertThat(row).contains(" stop-harm ").contains("  " + dev.interim.text.Numbers.significant(stop.estimate(), 4) + "  [");
    }

    @Test
    void beforeFiftyValuesBeyondTheQuantileTheSummarySaysWhatItWaitsFor() throws IOException {
        // The first 9,000 searches: 3,000 per arm, below the 5,000 a p99 needs.
        Path early = Files.write(dir.resolve("early.ndjson"), Files.readAllLines(events).subList(0, 9_000));
        InterimConfig config = perEvent();
        List<ReplayResult> result = new ArrayList<>();
        assertThat(replay(config, early, result)).noneMatch(d -> d.decision().startsWith("stop"));
        StringWriter summary = new StringWriter();
        new ReplayText(config.catalog()).summary(result.get(0), "early.ndjson", new PrintWriter(summary));
        String row = summary.toString().lines().filter(l -> l.startsWith("  ranker-b  p99 search-ms")).findFirst().orElseThrow();
        assertThat(row).contains("needs 50 values beyond it in each arm, so 5000 values; an arm has 3000");
    }

    @Test
    void perUnitTheSameSlowPathIsStoppedForHarm() throws IOException {
        List<ReplayResult> result = new ArrayList<>();
        List<DecisionRecord> decisions = replay(perUnit(), events, result);
        assertThat(result.get(0).experiments().get(0).view().assignment().label()).isEqualTo("unit");
        assertThat(decisions).filteredOn(d -> d.decision().startsWith("stop"))
                .extracting(DecisionRecord::arm, DecisionRecord::decision, DecisionRecord::quantile)
                .containsExactly(org.assertj.core.groups.Tuple.tuple("ranker-b", "stop-harm", 0.99));
    }
}
