package dev.interim.bench;

import dev.interim.experiment.RunMode;

import dev.interim.experiment.Sides;

import dev.interim.experiment.Comparison;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.Horizon;
import dev.interim.experiment.LookReport;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.MetricKind;
import dev.interim.experiment.Role;
import dev.interim.experiment.StopAction;
import dev.interim.experiment.Tally;
import dev.interim.experiment.Worse;
import dev.interim.sequential.SequentialMonitor;
import dev.interim.sequential.SpendingFunction;
import dev.interim.stats.Moments;
import dev.interim.stats.ProportionCounts;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import org.openjdk.jmh.annotations.Benchmark;
import org.openjdk.jmh.annotations.BenchmarkMode;
import org.openjdk.jmh.annotations.Fork;
import org.openjdk.jmh.annotations.Level;
import org.openjdk.jmh.annotations.Measurement;
import org.openjdk.jmh.annotations.Mode;
import org.openjdk.jmh.annotations.OutputTimeUnit;
import org.openjdk.jmh.annotations.Param;
import org.openjdk.jmh.annotations.Scope;
import org.openjdk.jmh.annotations.Setup;
import org.openjdk.jmh.annotations.State;
import org.openjdk.jmh.annotations.Warmup;

/**
 * The cost of one look of a whole experiment, as the daemon's judge runs it: control and three
 * treatment arms, five metrics (two event-rate and one event-mean guardrail, a two-sided unit-rate
 * primary metric, a one-sided unit-total primary metric with non-binding futility), so 3 × 5 = 15
 * comparisons, after {@code looksBefore} looks.
 *
 * <p>The traffic is a steady stream: every look each arm has {@value #PER_LOOK} more observations,
 * and the planned maximum is reached at look {@value #PLANNED_LOOKS} — continuous monitoring, one
 * look a minute for two weeks. The observed effects are small, so that nothing stops and every look
 * runs all 15 comparisons.
 *
 * <p>How it is measured: single shots. Once per trial the first {@code looksBefore} looks are run and
 * each comparison's state is snapshotted (with the JIT warmed on them); before every iteration a fresh
 * monitor is restored from the snapshots (the daemon's own restore path) and the garbage collected;
 * the iteration times exactly look {@code looksBefore + 1}, from the same state each time.
 *
 * <p>Run: {@code scripts/benchmark ExperimentLookBenchmark}.
 */
@BenchmarkMode(Mode.SingleShotTime)
@OutputTimeUnit(TimeUnit.MICROSECONDS)
@Warmup(iterations = 5)
@Measurement(iterations = 30)
@Fork(value = 1, jvmArgsAppend = {"-Xms1g", "-Xmx1g"})
public class ExperimentLookBenchmark {
    static final int PER_LOOK = 50;
    static final int PLANNED_LOOKS = 20_000;
    static final String CONTROL = "classic-fares";
    static final List<String> TREATMENTS = List.of("fares-ranked", "fares-bundled", "fares-cached");

    /** The invented experiment: a fare-search service trying three new result pages. */
    static ExperimentDefinition definition() {
        long max = (long) PER_LOOK * PLANNED_LOOKS;
        List<MetricDefinition> metrics = List.of(
                new MetricDefinition("search-errors", MetricKind.EVENT_RATE, Role.GUARDRAIL, Worse.HIGHER, 0.01, Sides.ONE,
                        SpendingFunction.parse("obf"), null, new Horizon.MaxPerArm(max), null, StopAction.KILL),
                new MetricDefinition("timeouts", MetricKind.EVENT_RATE, Role.GUARDRAIL, Worse.HIGHER, 0.01, Sides.ONE,
                        SpendingFunction.parse("pocock"), null, new Horizon.MaxPerArm(max), null, StopAction.PAGE),
                new MetricDefinition("latency-ms", MetricKind.EVENT_MEAN, Role.GUARDRAIL, Worse.HIGHER, 0.01, Sides.ONE,
                        SpendingFunction.parse("hsd:-4"), null, new Horizon.MaxPerArm(max), null, StopAction.PAGE),
                new MetricDefinition("booked", MetricKind.UNIT_RATE, Role.PRIMARY, Worse.LOWER, 0.05, Sides.TWO,
                        SpendingFunction.parse("obf"), null, new Horizon.MaxPerArm(max), null, StopAction.NONE),
                // Powered so that the planned information is reached near look PLANNED_LOOKS.
                new MetricDefinition("spend", MetricKind.UNIT_TOTAL, Role.PRIMARY, Worse.LOWER, 0.05, Sides.ONE,
                        SpendingFunction.parse("power:3"), SpendingFunction.parse("obf"),
                        new Horizon.Powered(0.9, 0.25, 5), null, StopAction.NONE));
        Map<String, Double> split = new LinkedHashMap<>();
        split.put(CONTROL, 1.0);
        TREATMENTS.forEach(t -> split.put(t, 1.0));
        return new ExperimentDefinition("fare-search-pages", CONTROL, TREATMENTS, split, Duration.ofMinutes(1), 100,
                RunMode.DRY_RUN, 0.001, metrics);
    }

    /** Everything tallied by look n: n·PER_LOOK observations per arm, the same small effects throughout. */
    static Map<String, Map<String, Tally>> tallies(int n) {
        long count = (long) n * PER_LOOK;
        Map<String, Map<String, Tally>> out = new LinkedHashMap<>();
        List<String> arms = new ArrayList<>();
        arms.add(CONTROL);
        arms.addAll(TREATMENTS);
        for (int a = 0; a < arms.size(); a++) {
            double lift = 1 + 0.0002 * a;
            String arm = arms.get(a);
            out.computeIfAbsent("search-errors", k -> new LinkedHashMap<>())
                    .put(arm, rate(count, 0.010 * lift));
            out.computeIfAbsent("timeouts", k -> new LinkedHashMap<>())
                    .put(arm, rate(count, 0.002 * lift));
            out.computeIfAbsent("latency-ms", k -> new LinkedHashMap<>())
                    .put(arm, new Tally.Mean(Moments.of(count, 180 * lift, 60)));
            out.computeIfAbsent("booked", k -> new LinkedHashMap<>())
                    .put(arm, rate(count, 0.040 * lift));
            out.computeIfAbsent("spend", k -> new LinkedHashMap<>())
                    .put(arm, new Tally.Mean(Moments.of(count, 22 * lift, 90)));
        }
        return out;
    }

    private static Tally rate(long trials, double p) {
        return new Tally.Rate(new ProportionCounts(Math.round(trials * p), trials));
    }

    static Map<String, Long> exposures(int n) {
        Map<String, Long> out = new LinkedHashMap<>();
        out.put(CONTROL, (long) n * PER_LOOK);
        TREATMENTS.forEach(t -> out.put(t, (long) n * PER_LOOK));
        return out;
    }

    static Instant at(int n) {
        return Instant.parse("2031-03-01T00:00:00Z").plusSeconds(60L * n);
    }

    @State(Scope.Thread)
    public static class After {
        @Param({"10", "1000", "10000"})
        public int looksBefore;

        ExperimentDefinition definition;
        List<SequentialMonitor.Snapshot> snapshots;
        Map<String, Map<String, Tally>> next;
        Map<String, Long> nextExposures;
        ExperimentMonitor monitor;

        @Setup(Level.Trial)
        public void trial() {
            definition = definition();
            ExperimentMonitor m = new ExperimentMonitor(definition);
            for (int n = 1; n <= looksBefore; n++) {
                LookReport r = m.look(at(n), exposures(n), tallies(n));
                if (!r.decisions().isEmpty()) {
                    throw new IllegalStateException("a comparison changed state at look " + n + ": " + r.decisions());
                }
            }
            snapshots = new ArrayList<>();
            for (Comparison c : m.comparisons()) {
                snapshots.add(c.snapshot());
            }
            next = tallies(looksBefore + 1);
            nextExposures = exposures(looksBefore + 1);
        }

        @Setup(Level.Iteration)
        public void iteration() {
            iteration0();
            System.gc();
        }

        /** A fresh monitor restored from the snapshots. */
        public void iteration0() {
            monitor = new ExperimentMonitor(definition);
            List<Comparison> all = monitor.comparisons();
            for (int i = 0; i < all.size(); i++) {
                all.get(i).restore(snapshots.get(i), null);
            }
        }
    }

    @Benchmark
    public LookReport look(After s) {
        LookReport r = s.monitor.look(at(s.looksBefore + 1), s.nextExposures, s.next);
        if (r.results().size() != 15) {
            throw new IllegalStateException("expected 15 comparisons looked at, got " + r.results().size());
        }
        return r;
    }
}
