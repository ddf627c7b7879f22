package dev.interim.simulate;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.experiment.Worse;
import dev.interim.sequential.Look;
import dev.interim.sequential.SequentialMonitor;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * The same stream gives the same results with any number of threads; the per-run generators are the
 * JDK's SplittableRandom outputs; sharing one set of looks is the same as a fresh monitor per run.
 * No statistical values here.
 */
class ReproducibilityTest {

    private static List<SimulatedComparison> comparisons() {
        return SimulatedComparison.of(Designs.experiment(2, Designs.twoSided(0.05, "obf"),
                Designs.guardrail(Worse.HIGHER, 0.01, "pocock")), name -> true,
                dev.interim.sequential.Fractions.equallySpaced(12));
    }

    private static String csv(long runs, int threads, long stream) throws InterruptedException {
        SimulationReport report = new Simulation(runs, threads, stream, null, EffectUnit.DRIFT)
                .run(comparisons(), Progress.none());
        StringWriter out = new StringWriter();
        ReportFormat.CSV.write(report, new PrintWriter(out));
        return out.toString();
    }

    @Test
    void theSameStreamGivesIdenticalResultsOnOneAndOnFourThreads() throws InterruptedException {
        // 50,000 runs are 49 blocks: with 4 threads the blocks are taken in a racy order.
        String one = csv(50_000, 1, 77);
        String four = csv(50_000, 4, 77);
        assertThat(four).isEqualTo(one);
        assertThat(csv(50_000, 4, 78)).isNotEqualTo(one);
    }

    @Test
    void runGeneratorsAreTheOutputsOfTheJdksSplittableRandomForTheStream() {
        // Source: java.util.SplittableRandom (JDK 17) itself, drawn in order.
        for (long stream : new long[] {0, 1, -7, 20_260_101L, Long.MAX_VALUE}) {
            SplittableRandom root = new SplittableRandom(stream);
            for (long run = 0; run < 1000; run++) {
                assertThat(RunStreams.startOf(stream, run)).isEqualTo(root.nextLong());
            }
        }
        assertThat(RunStreams.forRun(5, 123).nextLong()).isEqualTo(RunStreams.forRun(5, 123).nextLong());
    }

    @Test
    void sharedLooksGiveTheSameOutcomesAsAFreshMonitorPerRun() throws InterruptedException {
        // What the daemon does for each comparison: a new SequentialMonitor, looks one at a time, and
        // Look.rejects / Look.futile on Z. Replayed here for 150 runs with the same draws.
        SimulatedComparison c = Designs.comparison(Designs.powered(0.05, 0.8, 0.03, 5, "pocock"), 5);
        double drift = 2.2;
        int runs = 150;
        long stream = 9;
        long[][] expected = new long[Stop.values().length][5];
        double[] t = c.fractions();
        for (int run = 0; run < runs; run++) {
            SplittableRandom random = RunStreams.forRun(stream, run);
            SequentialMonitor monitor = c.design().monitor();
            double score = 0;
            for (int k = 0; k < t.length; k++) {
                double step = t[k] - (k == 0 ? 0 : t[k - 1]);
                score += drift * step + Math.sqrt(step) * random.nextGaussian();
                Look look = monitor.lookAt(t[k]);
                dev.interim.experiment.Decision d = dev.interim.experiment.Decision.at(look, score / Math.sqrt(t[k]),
                        dev.interim.experiment.Worse.LOWER);
                if (d != dev.interim.experiment.Decision.CONTINUE) {
                    expected[java.util.Arrays.stream(Stop.values()).filter(s -> s.decision() == d).findFirst()
                            .orElseThrow().ordinal()][k]++;
                    break;
                }
            }
        }
        SimulationReport report = new Simulation(runs, 3, stream, new double[] {drift}, EffectUnit.DRIFT)
                .run(List.of(c), Progress.none());
        assertThat(report.comparisons().get(0).effects().get(1).simulated().counts()).isDeepEqualTo(expected);
        List<Long> futile = new ArrayList<>();
        for (long n : expected[Stop.FUTILITY.ordinal()]) {
            futile.add(n);
        }
        assertThat(futile.stream().mapToLong(Long::longValue).sum()).isPositive(); // the futility rule was exercised
    }
}
