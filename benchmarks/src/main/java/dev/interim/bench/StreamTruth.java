package dev.interim.bench;

import com.fasterxml.jackson.databind.JsonNode;
import dev.interim.bench.StreamScenario.Event;
import dev.interim.bench.StreamScenario.Experiment;
import dev.interim.bench.StreamScenario.Kind;
import dev.interim.bench.StreamScenario.Metric;
import java.util.BitSet;
import java.util.List;

/**
 * What the bench wrote, counted as the daemon counts it (docs/configuration.md, "metrics"): per
 * experiment and arm the events and the distinct units exposed (the input is keyed by unit and the
 * unit is mapped, so an exposure is a unit's first event in the experiment); per metric the
 * observations (events for event-level kinds, units for per-unit kinds), the successes of rates
 * (units that ever met the condition, for unit-rates) and the sums of values (a unit's total, for
 * unit-totals). Also the totals that {@code JsonEventReader} hands its sink, event by event.
 */
final class StreamTruth {
    private static final List<Experiment> EXPERIMENTS = StreamScenario.EXPERIMENTS;

    final long[][] events;
    final long[][] units;
    /** [experiment][arm][metric] */
    final long[][][] count;
    final long[][][] successes;
    final double[][][] sum;
    private final BitSet[] seen;
    private final BitSet[][] met;

    /** What the reader emits: one exposure per event, one outcome or value per metric field present. */
    long readerExposures;
    long readerOutcomes;
    long readerSuccesses;
    long readerValues;
    double readerValueSum;

    StreamTruth() {
        int n = EXPERIMENTS.size();
        events = new long[n][];
        units = new long[n][];
        count = new long[n][][];
        successes = new long[n][][];
        sum = new double[n][][];
        seen = new BitSet[n];
        met = new BitSet[n][];
        for (int x = 0; x < n; x++) {
            Experiment e = EXPERIMENTS.get(x);
            int arms = e.arms().size();
            int metrics = e.metrics().size();
            events[x] = new long[arms];
            units[x] = new long[arms];
            count[x] = new long[arms][metrics];
            successes[x] = new long[arms][metrics];
            sum[x] = new double[arms][metrics];
            seen[x] = new BitSet();
            met[x] = new BitSet[metrics];
            for (int m = 0; m < metrics; m++) {
                met[x][m] = new BitSet();
            }
        }
    }

    void record(Event e) {
        int x = e.experiment;
        int a = e.arm;
        Experiment ex = EXPERIMENTS.get(x);
        List<Metric> metrics = ex.metrics();
        events[x][a]++;
        readerExposures++;
        boolean first = !seen[x].get(e.unit);
        if (first) {
            seen[x].set(e.unit);
            units[x][a]++;
        }
        for (int m = 0; m < metrics.size(); m++) {
            Metric metric = metrics.get(m);
            if (first && metric.kind().perUnit) {
                count[x][a][m]++;   // each unit exposed to the arm is an observation, present or not
            }
            boolean present = switch (metric.field()) {
                case LATENCY, STATUS, STEP -> true;
                case AMOUNT -> e.amountQuarters >= 0;
            };
            if (!present) {
                continue;
            }
            if (metric.kind().rate) {
                boolean success = metric.success(e);
                readerOutcomes++;
                if (success) {
                    readerSuccesses++;
                }
                if (metric.kind() == Kind.EVENT_RATE) {
                    count[x][a][m]++;
                    successes[x][a][m] += success ? 1 : 0;
                } else if (success && !met[x][m].get(e.unit)) {
                    met[x][m].set(e.unit);
                    successes[x][a][m]++;
                }
            } else {
                double v = metric.field() == StreamScenario.Field.LATENCY ? e.latency() : e.amount();
                readerValues++;
                readerValueSum += v;
                if (metric.kind() == Kind.EVENT_MEAN) {
                    count[x][a][m]++;
                }
                sum[x][a][m] += v;
            }
        }
    }

    long totalEvents() {
        long n = 0;
        for (long[] byArm : events) {
            for (long v : byArm) {
                n += v;
            }
        }
        return n;
    }

    /**
     * Compares one experiment of the daemon's {@code GET /api/experiments} with the truth.
     *
     * @param sums whether to compare the sums of means and totals too (relative {@code tolerance})
     * @return null when they agree, else the first difference, in words
     */
    String difference(int x, JsonNode experiment, boolean sums, double tolerance) {
        Experiment ex = EXPERIMENTS.get(x);
        if (experiment == null) {
            return ex.id() + ": not in the API's answer yet";
        }
        for (int a = 0; a < ex.arms().size(); a++) {
            String arm = ex.arms().get(a);
            long exposures = experiment.path("exposures").path(arm).asLong(-1);
            if (exposures != units[x][a]) {
                return ex.id() + " " + arm + ": exposures " + shown(exposures) + ", wrote " + units[x][a] + " units ("
                        + events[x][a] + " events)";
            }
            for (int m = 0; m < ex.metrics().size(); m++) {
                Metric metric = ex.metrics().get(m);
                JsonNode t = experiment.path("tallies").path(metric.name()).path(arm);
                long c = t.path("count").asLong(-1);
                if (c != count[x][a][m]) {
                    return ex.id() + " " + arm + " " + metric.name() + ": count " + shown(c) + ", expected " + count[x][a][m];
                }
                if (metric.kind().rate) {
                    long s = t.path("successes").asLong(-1);
                    if (s != successes[x][a][m]) {
                        return ex.id() + " " + arm + " " + metric.name() + ": successes " + shown(s) + ", expected "
                                + successes[x][a][m];
                    }
                } else if (sums && count[x][a][m] > 0) {
                    double want = sum[x][a][m];
                    double got = t.path("sum").asDouble(Double.NaN);
                    if (!(Math.abs(got - want) <= tolerance * Math.max(1, Math.abs(want)))) {
                        return ex.id() + " " + arm + " " + metric.name() + ": sum " + got + ", expected " + want;
                    }
                }
            }
        }
        return null;
    }

    /** The largest relative difference of the daemon's sums from the truth, over every mean and total. */
    double largestSumDeviation(JsonNode[] experiments) {
        double worst = 0;
        for (int x = 0; x < EXPERIMENTS.size(); x++) {
            Experiment ex = EXPERIMENTS.get(x);
            for (int a = 0; a < ex.arms().size(); a++) {
                for (int m = 0; m < ex.metrics().size(); m++) {
                    Metric metric = ex.metrics().get(m);
                    if (metric.kind().rate || count[x][a][m] == 0 || experiments[x] == null) {
                        continue;
                    }
                    double want = sum[x][a][m];
                    double got = experiments[x].path("tallies").path(metric.name()).path(ex.arms().get(a)).path("sum")
                            .asDouble(Double.NaN);
                    worst = Math.max(worst, Math.abs(got - want) / Math.max(1, Math.abs(want)));
                }
            }
        }
        return worst;
    }

    private static String shown(long v) {
        return v < 0 ? "absent" : Long.toString(v);
    }
}
