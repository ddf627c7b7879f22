package dev.interim.simulate;

import dev.interim.experiment.Decision;
import dev.interim.experiment.Worse;
import dev.interim.sequential.Look;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.SplittableRandom;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;

/**
 * Simulates runs of several comparisons under several effects at once, on worker threads.
 *
 * <p>Run r draws standard normal increments W_1, W_2, … from its own generator
 * ({@link RunStreams#forRun}); for a comparison and drift η its path is
 * S_k = S_{k−1} + η·Δt_k + √Δt_k·W_k, Z_k = S_k/√t_k (Jennison &amp; Turnbull 2000, ch. 3), walked
 * look by look until {@link Look#rejects} or {@link Look#futile} says stop, or the final look
 * completes it — the rules of the daemon's {@code Comparison}. Every comparison and effect of run r
 * uses the same W (common random numbers). Runs are handed to the workers in blocks; each worker
 * counts into its own {@link StoppingCounts}, so results do not depend on the number of threads.
 *
 * <p>Not reusable: one instance, one {@link #run}.
 */
final class MonteCarlo {
    /** Runs per block handed to a worker: large enough to amortise, small enough to balance and report progress. */
    static final int BLOCK = 1024;
    /** How often the calling thread reports progress. */
    private static final long PROGRESS_MILLIS = 100;

    private final double[] step;
    private final double[] stepRoot;
    private final double[] inverseRoot;
    private final Path[] paths;
    private final int looks;

    /** One comparison under one drift: what a run needs in its inner loop. */
    private record Path(double drift, Look[] looks, Worse worse) {}

    /**
     * @param comparisons the comparisons, all at the same information fractions
     * @param effects the effects of each comparison, in the same order
     */
    MonteCarlo(List<SimulatedComparison> comparisons, List<List<SimulatedEffect>> effects) {
        if (comparisons.isEmpty() || comparisons.size() != effects.size()) {
            throw new IllegalArgumentException("one list of effects per comparison, and at least one comparison");
        }
        double[] fractions = comparisons.get(0).fractions();
        looks = fractions.length;
        step = new double[looks];
        stepRoot = new double[looks];
        inverseRoot = new double[looks];
        for (int k = 0; k < looks; k++) {
            step[k] = fractions[k] - (k == 0 ? 0 : fractions[k - 1]);
            stepRoot[k] = Math.sqrt(step[k]);
            inverseRoot[k] = 1 / Math.sqrt(fractions[k]);
        }
        List<Path> all = new ArrayList<>();
        for (int c = 0; c < comparisons.size(); c++) {
            SimulatedComparison comparison = comparisons.get(c);
            if (!Arrays.equals(comparison.fractions(), fractions)) {
                throw new IllegalArgumentException("every comparison of one simulation must look at the same fractions");
            }
            for (SimulatedEffect e : effects.get(c)) {
                all.add(new Path(e.drift(), comparison.looks(), comparison.metric().worse()));
            }
        }
        paths = all.toArray(Path[]::new);
    }

    /**
     * Simulates {@code runs} runs on {@code threads} worker threads; returns the counts of each
     * (comparison, effect) pair, comparisons in order and their effects in order.
     */
    List<StoppingCounts> run(long runs, int threads, long stream, Progress progress) throws InterruptedException {
        if (runs < 1) {
            throw new IllegalArgumentException("the number of runs must be at least 1, got " + runs);
        }
        if (threads < 1) {
            throw new IllegalArgumentException("the number of threads must be at least 1, got " + threads);
        }
        long blocks = (runs + BLOCK - 1) / BLOCK;
        int workers = (int) Math.min(threads, blocks);
        AtomicLong nextBlock = new AtomicLong();
        AtomicLong done = new AtomicLong();
        CountDownLatch finished = new CountDownLatch(workers);
        ExecutorService pool = Executors.newFixedThreadPool(workers, r -> {
            Thread t = new Thread(r, "interim-simulate");
            t.setDaemon(true);
            return t;
        });
        try {
            List<Future<StoppingCounts[]>> futures = new ArrayList<>();
            for (int w = 0; w < workers; w++) {
                futures.add(pool.submit(() -> {
                    try {
                        return work(runs, stream, nextBlock, done);
                    } finally {
                        finished.countDown();
                    }
                }));
            }
            while (!finished.await(PROGRESS_MILLIS, TimeUnit.MILLISECONDS)) {
                progress.update(done.get(), runs);
            }
            progress.update(done.get(), runs);
            List<StoppingCounts> total = new ArrayList<>();
            for (int p = 0; p < paths.length; p++) {
                total.add(new StoppingCounts(looks));
            }
            for (Future<StoppingCounts[]> f : futures) {
                StoppingCounts[] part = f.get();
                for (int p = 0; p < paths.length; p++) {
                    total.get(p).combine(part[p]);
                }
            }
            return total;
        } catch (ExecutionException e) {
            Throwable cause = e.getCause();
            if (cause instanceof RuntimeException r) {
                throw r;
            }
            throw new IllegalStateException("a simulation worker failed", cause);
        } finally {
            pool.shutdownNow();
        }
    }

    /** One worker: claims blocks of runs until none are left. */
    private StoppingCounts[] work(long runs, long stream, AtomicLong nextBlock, AtomicLong done) {
        StoppingCounts[] counts = new StoppingCounts[paths.length];
        for (int p = 0; p < paths.length; p++) {
            counts[p] = new StoppingCounts(looks);
        }
        double[] draws = new double[looks];
        for (long block = nextBlock.getAndIncrement(); block * BLOCK < runs; block = nextBlock.getAndIncrement()) {
            long end = Math.min(runs, (block + 1) * BLOCK);
            for (long run = block * BLOCK; run < end; run++) {
                simulate(RunStreams.forRun(stream, run), draws, counts);
            }
            done.addAndGet(end - block * BLOCK);
            if (Thread.currentThread().isInterrupted()) {
                break;
            }
        }
        return counts;
    }

    /**
     * One run: every path walks the same draws, which are taken from the run's generator in order
     * and only as far as the longest path needs them (so a run that stops early draws little).
     */
    private void simulate(SplittableRandom random, double[] draws, StoppingCounts[] counts) {
        int drawn = 0;
        for (int p = 0; p < paths.length; p++) {
            Path path = paths[p];
            double score = 0;
            for (int k = 0; k < looks; k++) {
                if (k == drawn) {
                    draws[drawn++] = random.nextGaussian();
                }
                score += path.drift * step[k] + stepRoot[k] * draws[k];
                double z = score * inverseRoot[k];
                int stop = STOP_OF[Decision.at(path.looks[k], z, path.worse).ordinal()];
                if (stop >= 0) {
                    counts[p].record(stop, k);
                    break;
                }
            }
        }
    }

    /** A decision's {@link Stop} ordinal, or −1 for continue (the rule itself is {@link Decision#at}). */
    private static final int[] STOP_OF = new int[Decision.values().length];

    static {
        java.util.Arrays.fill(STOP_OF, -1);
        for (Stop stop : Stop.values()) {
            STOP_OF[stop.decision().ordinal()] = stop.ordinal();
        }
    }
}
