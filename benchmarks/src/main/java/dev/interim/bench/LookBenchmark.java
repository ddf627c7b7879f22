package dev.interim.bench;

import dev.interim.sequential.GroupSequentialDesign;
import dev.interim.sequential.Look;
import dev.interim.sequential.SequentialMonitor;
import dev.interim.sequential.SpendingFunction;
import dev.interim.stats.Alternative;
import java.util.Arrays;
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
 * The cost of one incremental look of a {@link SequentialMonitor} (O'Brien–Fleming-type spending,
 * two-sided, α = 0.05) that has already made {@code lookCount} looks. The monitor keeps the
 * continuation sub-density between looks, so this cost should not grow with the number of looks.
 *
 * <p>Run: {@code scripts/benchmark LookBenchmark} (or, once built,
 * {@code java -jar benchmarks/target/interim-benchmarks.jar LookBenchmark}).
 *
 * <p>How it is measured. A monitor is mutable and offers no snapshot: the only way back to its state
 * after N looks is to replay the N looks. So each measurement is a single shot
 * ({@link Mode#SingleShotTime}): before every iteration, {@code @Setup(Level.Iteration)} replays the
 * first N looks of the schedule (not timed), and the iteration times exactly one look, the
 * (N+1)-th, from that state. Every sample is therefore the same look from the same state, and the
 * schedule can never be overrun, whatever the iteration counts. The price is setup time: a replay of
 * 10,000 looks takes a few seconds, paid once per iteration, and is followed by a full garbage
 * collection. The alternative — carrying one monitor forward over successive looks N+1, N+2, … —
 * would mix looks made after very different numbers of previous looks (at N = 10 a single 1 s
 * iteration would run hundreds of looks).
 *
 * <p>Schedules:
 * <ul>
 *   <li>{@link #equallySpaced}: 20,000 equally spaced looks ending at fraction 1 (look n at
 *       n/20000): a continuously monitored stream. Each look adds 1/n of the information so far,
 *       so the transition kernel narrows as n grows; at n ≈ 10 the O'Brien–Fleming function has
 *       nothing representable to spend yet and the boundary is infinite.</li>
 *   <li>{@link #geometric}: a coarser schedule, each look adding 1% to the information so far
 *       (look n at 0.01·1.01^(n−1), 463 looks below fraction 1), so every look has the same
 *       relative increment; {@code lookCount} is limited to 10, 100 and 400 here.</li>
 * </ul>
 * Before the first iteration a replay of the first {@value #JIT_WARMUP_LOOKS} equally spaced looks
 * runs both integration paths (wide and narrow kernels) so that every {@code lookCount} is timed on
 * compiled code, as in a daemon that has been monitoring for a while.
 */
@BenchmarkMode(Mode.SingleShotTime)
@OutputTimeUnit(TimeUnit.MICROSECONDS)
@Warmup(iterations = 3)
@Measurement(iterations = 20)
@Fork(value = 1, jvmArgsAppend = {"-Xms1g", "-Xmx1g"})
public class LookBenchmark {
    static final int SCHEDULE_LOOKS = 20_000;
    static final int JIT_WARMUP_LOOKS = 1_000;

    static GroupSequentialDesign design() {
        return GroupSequentialDesign.spending(0.05, Alternative.TWO_SIDED, SpendingFunction.parse("obf"));
    }

    /** The looks of a schedule: the first {@code lookCount} are replayed, the next one is timed. */
    abstract static class Schedule {
        GroupSequentialDesign design;
        double[] previous;
        double next;
        SequentialMonitor monitor;
        /** Keeps the warm-up replay observable so that it cannot be optimised away. */
        Look warmedUpTo;

        abstract int lookCount();

        /** Fraction of look n, 1-based. */
        abstract double fraction(int n);

        /** Looks in the schedule before fraction 1 is reached. */
        abstract int length();

        void prepare() {
            int n = lookCount();
            if (n < 1 || n >= length()) {
                throw new IllegalArgumentException("lookCount must lie between 1 and " + (length() - 1)
                        + " for this schedule, got " + n);
            }
            design = design();
            previous = new double[n];
            Arrays.setAll(previous, i -> fraction(i + 1));
            next = fraction(n + 1);
            double[] warmup = new double[JIT_WARMUP_LOOKS];
            Arrays.setAll(warmup, i -> (i + 1.0) / SCHEDULE_LOOKS);
            warmedUpTo = SequentialMonitor.replay(design, warmup).lastLook();
        }

        void replay() {
            monitor = SequentialMonitor.replay(design, previous);
            // The replay leaves the garbage of N looks behind. Collected now, neither a collection
            // nor the collector's concurrent work (which on two cores competes with the look) falls
            // into the single timed look (without it, single shots at N = 1,000 ran up to twice
            // their usual time).
            System.gc();
        }
    }

    @State(Scope.Thread)
    public static class EquallySpaced extends Schedule {
        @Param({"10", "1000", "10000"})
        public int lookCount;

        @Override
        int lookCount() {
            return lookCount;
        }

        @Override
        double fraction(int n) {
            return (double) n / SCHEDULE_LOOKS;
        }

        @Override
        int length() {
            return SCHEDULE_LOOKS;
        }

        @Setup(Level.Trial)
        public void trial() {
            prepare();
        }

        @Setup(Level.Iteration)
        public void iteration() {
            replay();
        }
    }

    @State(Scope.Thread)
    public static class Geometric extends Schedule {
        static final double FIRST = 0.01;
        static final double GROWTH = 1.01;

        @Param({"10", "100", "400"})
        public int lookCount;

        @Override
        int lookCount() {
            return lookCount;
        }

        @Override
        double fraction(int n) {
            return FIRST * Math.pow(GROWTH, n - 1);
        }

        @Override
        int length() {
            return 1 + (int) Math.floor(Math.log(1 / FIRST) / Math.log(GROWTH));
        }

        @Setup(Level.Trial)
        public void trial() {
            prepare();
        }

        @Setup(Level.Iteration)
        public void iteration() {
            replay();
        }
    }

    @Benchmark
    public Look equallySpaced(EquallySpaced s) {
        return s.monitor.lookAt(s.next);
    }

    @Benchmark
    public Look geometric(Geometric s) {
        return s.monitor.lookAt(s.next);
    }
}
