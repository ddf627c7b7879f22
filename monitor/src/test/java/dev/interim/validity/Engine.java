package dev.interim.validity;

import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.experiment.Comparison;
import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.LookReport;
import dev.interim.experiment.LookResult;
import dev.interim.stream.BadEventException;
import dev.interim.stream.JsonEventReader;
import dev.interim.stream.OfflineTally;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.function.Supplier;

/**
 * The real engine on synthetic traffic: a YAML configuration through {@link ConfigLoader}, JSON
 * event bytes through {@link JsonEventReader} into {@link OfflineTally}, and looks with
 * {@link ExperimentMonitor#look} on a schedule of event counts that starts at the first events.
 */
final class Engine {
    static final String EXPERIMENT = "quillfen";
    static final double ALPHA = 0.05;
    static final double POWER = 0.8;
    static final int PLANNED_LOOKS = 60;

    private Engine() {
    }

    /**
     * The configuration: one treatment against control at 80:20, five two-sided primary metrics with
     * α = {@value #ALPHA} each, O'Brien–Fleming-type spending, and horizons sized by power
     * {@value #POWER} for the planned effects {@code effects} (in the metrics' units).
     */
    static InterimConfig config(String assignment, double[] effects) {
        String metric = "alpha: %s, sides: 2, spending: obf, power: %s, effect: %s, planned_looks: %d";
        String[] tail = new String[5];
        for (int i = 0; i < 5; i++) {
            tail[i] = String.format(Locale.ROOT, metric, ALPHA, POWER, effects[i], PLANNED_LOOKS);
        }
        String yaml = head("quillfen.events") + """
                experiments:
                  - id: quillfen
                    control: base
                    treatments: [fresh]
                    split: {base: 80, fresh: 20}
                    assignment: %s
                    min_per_arm: 100
                    sample_ratio_threshold: 0.000000001
                    metrics:
                      - {name: errors, kind: event-rate, role: primary, worse: higher, field: /status,
                         counts_if: {equals: error}, %s}
                      - {name: latency, kind: event-mean, role: primary, worse: higher, field: /ms, %s}
                      - {name: bought, kind: unit-rate, role: primary, worse: lower, field: /step,
                         counts_if: {equals: bought}, %s}
                      - {name: revenue, kind: unit-total, role: primary, worse: lower, field: /spend, %s}
                      - {name: basket, kind: ratio, role: primary, worse: lower, numerator: /value,
                         denominator: /items, %s}
                """.formatted(assignment, tail[0], tail[1], tail[2], tail[3], tail[4]);
        return ConfigLoader.parseWithoutSecrets(yaml);
    }

    /**
     * The configuration's start: the input topic, keyed by unit, and the pointers of the synthetic
     * events ({@code /x} experiment, {@code /a} arm, {@code /u} unit).
     */
    static String head(String topic) {
        return """
                kafka:
                  input_topics: [%s]
                  input_keyed_by_unit: true
                events:
                  experiment: /x
                  arm: /a
                  unit: /u
                """.formatted(topic);
    }

    /** What one run found, per metric (in {@link Traffic#METRICS} order). */
    record Run(Decision[] decisions, double[] stopEffects, boolean[] missed, int looks, int events, double[] lastFraction) {
    }

    /**
     * Feeds {@code events} and looks after 2, 5, 10, 20, 40, 80, 160 events and then every
     * {@code step} events, until every comparison is final or the events run out. {@code truth} is
     * the true effect per metric; {@code missed[k]} says whether some repeated confidence interval of
     * metric k failed to cover it.
     */
    static Run run(InterimConfig config, ExperimentMonitor monitor, Iterable<Traffic.Event> events, int step,
                   double[] truth) {
        int k = Traffic.METRICS.length;
        boolean[] missed = new boolean[k];
        double[] stopEffects = new double[k];
        double[] lastFraction = new double[k];
        int[] fed = feed(config, monitor, EXPERIMENT, events, step, (look, snapshot, report) -> {
            for (LookResult r : report.results()) {
                int m = index(r.metric());
                if (!r.interval().contains(truth[m])) {
                    missed[m] = true;
                }
                lastFraction[m] = r.look().fraction();
                if (r.decision() == Decision.STOP_BENEFIT || r.decision() == Decision.STOP_HARM) {
                    stopEffects[m] = r.estimate().effect();
                }
            }
        });
        Decision[] decisions = new Decision[k];
        for (Comparison c : monitor.comparisons()) {
            decisions[index(c.metric().name())] = c.decision();
        }
        return new Run(decisions, stopEffects, missed, fed[0], fed[1], lastFraction);
    }

    /** What a run's looks are shown: the look's number (from 1), what it looked at, what it found. */
    interface LookObserver {
        void look(int look, OfflineTally.Snapshot snapshot, LookReport report);
    }

    /**
     * The real engine over {@code events}: each is read by the daemon's reader into the tallies, and
     * {@code experiment} is looked at after 2, 5, 10, 20, 40, 80, 160 events and then every
     * {@code step} events, until every comparison is final or the events run out; each look is shown
     * to {@code observer}. The monitor's comparisons start afresh (building the designs anew costs
     * seconds: planning by power). Returns the number of looks and of events fed.
     */
    static int[] feed(InterimConfig config, ExperimentMonitor monitor, String experiment, Iterable<Traffic.Event> events,
                      int step, LookObserver observer) {
        for (Comparison c : monitor.comparisons()) {
            c.restore(List.of(), Decision.CONTINUE);
        }
        OfflineTally tally = new OfflineTally(List.of(monitor.definition()));
        JsonEventReader reader = new JsonEventReader(config.catalog());
        int looks = 0;
        int fed = 0;
        int next = 2;
        for (Traffic.Event e : events) {
            try {
                reader.read(e.json(), tally);
            } catch (BadEventException ex) {
                throw new AssertionError("the simulated event was refused: " + ex.getMessage(), ex);
            }
            fed++;
            if (fed < next) {
                continue;
            }
            next = next < 160 ? (next == 2 ? 5 : 2 * next) : next + step;
            OfflineTally.Snapshot s = tally.snapshot(experiment);
            LookReport report = monitor.look(Instant.ofEpochSecond(fed), s.exposures(), s.tallies());
            looks++;
            observer.look(looks, s, report);
            if (monitor.comparisons().stream().allMatch(c -> c.decision().isFinal())) {
                break;
            }
        }
        return new int[] {looks, fed};
    }

    /** One run of a cell, on a worker's own monitor. */
    interface RunOf<W, R> {
        R run(W worker, int run);
    }

    /**
     * Runs 0 … {@code runs} − 1 of a cell, on one thread per core; each thread makes its own worker
     * (its monitor: a monitor is reused run after run, never shared). Every run is seeded by its
     * index alone, so the results, returned in run order, are those of a run one after another.
     */
    static <W, R> List<R> inParallel(int runs, Supplier<W> worker, RunOf<W, R> run) {
        int threads = Math.max(1, Math.min(runs, Runtime.getRuntime().availableProcessors()));
        Object[] results = new Object[runs];
        AtomicInteger next = new AtomicInteger();
        ExecutorService pool = Executors.newFixedThreadPool(threads);
        try {
            List<Future<?>> tasks = new ArrayList<>();
            for (int t = 0; t < threads; t++) {
                tasks.add(pool.submit(() -> {
                    W own = worker.get();
                    for (int i = next.getAndIncrement(); i < runs; i = next.getAndIncrement()) {
                        results[i] = run.run(own, i);
                    }
                    return null;
                }));
            }
            for (Future<?> task : tasks) {
                task.get();
            }
        } catch (ExecutionException e) {
            if (e.getCause() instanceof Error error) {
                throw error;
            }
            throw new IllegalStateException(e.getCause());
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException(e);
        } finally {
            pool.shutdownNow();
        }
        @SuppressWarnings("unchecked")
        List<R> inOrder = (List<R>) Arrays.asList(results);
        return inOrder;
    }

    /** A monitor of the configuration's experiment, to be reused run after run. */
    static ExperimentMonitor monitor(InterimConfig config) {
        return new ExperimentMonitor(config.experiments().get(0).definition());
    }

    static int index(String metric) {
        for (int i = 0; i < Traffic.METRICS.length; i++) {
            if (Traffic.METRICS[i].equals(metric)) {
                return i;
            }
        }
        throw new IllegalArgumentException(metric);
    }
}
