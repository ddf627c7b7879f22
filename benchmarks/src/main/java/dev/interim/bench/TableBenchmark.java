package dev.interim.bench;

import dev.interim.sequential.Effect;
import dev.interim.sequential.Fractions;
import dev.interim.sequential.GroupSequentialDesign;
import dev.interim.sequential.Look;
import dev.interim.sequential.Planning;
import dev.interim.sequential.SampleSizePlan;
import dev.interim.sequential.SpendingFunction;
import dev.interim.stats.Alternative;
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

/**
 * The cost of a whole planned design: the boundary table of K = 5 equally spaced looks (a fresh
 * monitor, five looks), and the sample size for 90% power, which solves for the drift by Brent's
 * method and so computes many such tables with their crossing probabilities.
 *
 * <p>Run: {@code scripts/benchmark TableBenchmark} (or, once built,
 * {@code java -jar benchmarks/target/interim-benchmarks.jar TableBenchmark}).
 *
 * <p>Designs and fractions are built in {@code @Setup}; each invocation computes everything from
 * them, since a design is immutable and {@link GroupSequentialDesign#looksAt} starts a new monitor.
 */
@BenchmarkMode(Mode.AverageTime)
@OutputTimeUnit(TimeUnit.MICROSECONDS)
@Warmup(iterations = 3, time = 1)
@Measurement(iterations = 10, time = 1)
@Fork(value = 1, jvmArgsAppend = {"-Xms1g", "-Xmx1g"})
@State(Scope.Thread)
public class TableBenchmark {
    static final int LOOKS = 5;

    GroupSequentialDesign obfTwoSided;
    GroupSequentialDesign pocockOneSided;
    double[] fractions;
    Effect effect;

    @Setup(Level.Trial)
    public void prepare() {
        obfTwoSided = GroupSequentialDesign.spending(0.05, Alternative.TWO_SIDED, SpendingFunction.parse("obf"));
        pocockOneSided = GroupSequentialDesign.spending(0.025, Alternative.GREATER, SpendingFunction.parse("pocock"));
        fractions = Fractions.equallySpaced(LOOKS);
        effect = new Effect.MeanDifference(0.1, 1);
    }

    /** K = 5 table, O'Brien–Fleming-type spending, two-sided α = 0.05. */
    @Benchmark
    public Look[] obfTwoSidedTable() {
        return obfTwoSided.looksAt(fractions);
    }

    /** K = 5 table, Pocock-type spending, one-sided α = 0.025. */
    @Benchmark
    public Look[] pocockOneSidedTable() {
        return pocockOneSided.looksAt(fractions);
    }

    /** Sample size per arm for δ = 0.1, σ = 1, 90% power, with the O'Brien–Fleming two-sided design at K = 5. */
    @Benchmark
    public SampleSizePlan obfTwoSidedSampleSize() {
        return Planning.sampleSize(obfTwoSided, fractions, 0.9, effect);
    }
}
