package dev.interim.bench;

import dev.interim.experiment.RunMode;

import dev.interim.experiment.Sides;

import dev.interim.experiment.Comparison;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.Horizon;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.MetricKind;
import dev.interim.experiment.Role;
import dev.interim.experiment.StopAction;
import dev.interim.experiment.Worse;
import dev.interim.sequential.SpendingFunction;
import dev.interim.stream.OfflineTally;
import java.lang.management.ManagementFactory;
import java.lang.management.MemoryMXBean;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;

/**
 * Heap measured, not estimated: the used heap after full collections, before and after building the
 * state, divided by what was built. Two figures:
 * <ul>
 *   <li>per unit of a per-unit metric: one experiment with one unit-total metric, N distinct units
 *       fed through the tally state the daemon's tally stage keeps per input partition (the same
 *       class, {@link OfflineTally} being its single-partition form);</li>
 *   <li>per (experiment, arm, metric): experiments of 3 treatment arms × 5 metrics tallied and looked
 *       at {@code looks} times by the judge's {@link ExperimentMonitor}, which keeps each comparison's
 *       sequential state, its recent looks for the charts and its decision.</li>
 * </ul>
 * Runs in the bench's own JVM (the heap figures are of these objects alone, not of a whole daemon).
 */
final class StreamMemory {
    private static final MemoryMXBean MEMORY = ManagementFactory.getMemoryMXBean();

    private StreamMemory() {}

    record PerUnit(long units, double bytesPerUnit, double tableBytesPerUnit) {}

    record PerComparison(int comparisons, int looks, double bytesPerComparison) {}

    /** Heap per unit with {@code units} distinct units of one unit-total metric. */
    static PerUnit perUnit(int units) {
        MetricDefinition spend = new MetricDefinition("spend", MetricKind.UNIT_TOTAL, Role.PRIMARY, Worse.LOWER, 0.05, Sides.TWO,
                SpendingFunction.parse("obf"), null, new Horizon.MaxPerArm(100_000_000L), null, StopAction.NONE);
        ExperimentDefinition e = new ExperimentDefinition("basket-size", "current", List.of("bundled"),
                Map.of("current", 1.0, "bundled", 1.0), Duration.ofMinutes(1), 100, RunMode.DRY_RUN, 0.001, List.of(spend));
        // Unit ids like the bench's events carry; each is garbage once fed, so only the state counts.
        long before = settledHeap();
        OfflineTally tally = new OfflineTally(List.of(e));
        StringBuilder id = new StringBuilder("traveller-");
        for (int u = 0; u < units; u++) {
            id.setLength(10);
            id.append(u);
            String unit = id.toString();
            int arm = u & 1;   // catalog indices: experiment 0, arms current (0) and bundled (1), metric spend (0)
            tally.exposure(0, arm, unit);
            tally.value(0, arm, unit, 0, 0.25 * (u % 400));
        }
        tally.snapshot("basket-size");   // drains the change sets, as a commit does
        long after = settledHeap();
        double table = tally.unitStateBytes();
        if (tally.units() != units) {
            throw new IllegalStateException("expected " + units + " units, the tally holds " + tally.units());
        }
        return new PerUnit(units, (double) (after - before) / units, table / units);
    }

    /** Heap per comparison for {@code experiments} experiments of 15 comparisons after {@code looks} looks. */
    static PerComparison perComparison(int experiments, int looks) {
        ExperimentDefinition template = ExperimentLookBenchmark.definition();
        long before = settledHeap();
        List<ExperimentMonitor> monitors = new ArrayList<>();
        int comparisons = 0;
        for (int i = 0; i < experiments; i++) {
            ExperimentDefinition d = new ExperimentDefinition(template.id() + "-" + i, template.control(),
                    template.treatments(), template.split(), template.lookEvery(), template.minPerArm(), RunMode.DRY_RUN,
                    template.sampleRatioThreshold(), template.metrics());
            ExperimentMonitor m = new ExperimentMonitor(d);
            for (int n = 1; n <= looks; n++) {
                m.look(ExperimentLookBenchmark.at(n), ExperimentLookBenchmark.exposures(n), ExperimentLookBenchmark.tallies(n));
            }
            monitors.add(m);
            for (Comparison c : m.comparisons()) {
                if (c.last() == null) {
                    throw new IllegalStateException("comparison " + c.metric().name() + "/" + c.arm() + " never looked");
                }
                comparisons++;
            }
        }
        long after = settledHeap();
        if (monitors.isEmpty()) {
            throw new IllegalStateException("no experiments");
        }
        return new PerComparison(comparisons, looks, (double) (after - before) / comparisons);
    }

    /** Used heap after collections have settled (several full collections, until it stops falling). */
    static long settledHeap() {
        long previous = Long.MAX_VALUE;
        for (int i = 0; i < 10; i++) {
            System.gc();
            try {
                Thread.sleep(100);
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                break;
            }
            long used = MEMORY.getHeapMemoryUsage().getUsed();
            if (used >= previous - 4096 && i >= 2) {
                return used;
            }
            previous = Math.min(previous, used);
        }
        return previous;
    }
}
