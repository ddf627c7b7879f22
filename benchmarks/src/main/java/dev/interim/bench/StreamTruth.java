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
 * unit is mapped, so an exposure is a unit's first event in the experiment). Every experiment
 * assigns arms per unit, so every metric's count is the number of units exposed in the arm
 * (present or not). Unit-rates: the units that ever met the condition. Unit-totals: the sum of
 * the units' totals. Event-rates and event-means are ratios of per-unit sums ({@code Tally.Ratio}):
 * the numerator sum Σx (successes of an event-rate, values of an event-mean) and the denominator
 * sum Σy (events carrying the metric). Also the totals that {@code JsonEventReader} hands its sink,
 * event by event.
 */
final class StreamTruth {
    private static final List<Experiment> EXPERIMENTS = StreamScenario.EXPERIMENTS;

    final long[][] events;
    final long[][] units;
    /** [experiment][arm][metric]: units exposed in the arm, for every metric. */
    final long[][][] count;
    /** Units that met a unit-rate's condition; events that met an event-rate's (its Σx). */
    final long[][][] successes;
    /** Sums of a unit-total's values, or of an event-mean's (its Σx). */
    final double[][][] sum;
    /** Events carrying an event-level metric (its Σy). */
    final long[][][] denominator;
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
        denominator = new long[n][][];
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
            denominator[x] = new long[arms][metrics];
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
            if (first) {
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
                    denominator[x][a][m]++;
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
                    denominator[x][a][m]++;
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
     * Compares one experiment of the daemon's {@code GET /api/experiments} with the truth: exposures
     * and every tally's count exactly, a unit-rate's successes exactly, and an event-level metric's
     * ratio sums (numerator_mean · count and denominator_mean · count). The denominator (events) and
     * an event-rate's numerator (successes) are whole numbers that the daemon holds as running means:
     * they must be within 0.5 of the truth, so that one event missing shows.
     *
     * @param sums whether to compare the sums of values too (unit-totals, event-means' numerators),
     *     and every ratio sum within the relative {@code tolerance}
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
                String what = ex.id() + " " + arm + " " + metric.name();
                JsonNode t = experiment.path("tallies").path(metric.name()).path(arm);
                long c = t.path("count").asLong(-1);
                if (c != count[x][a][m]) {
                    return what + ": count " + shown(c) + ", expected " + count[x][a][m];
                }
                if (ratio(metric)) {
                    if (!"ratio".equals(t.path("kind").asText())) {
                        return what + ": not shown as a ratio of per-unit sums (kind " + t.path("kind") + ")";
                    }
                    if (c == 0) {
                        continue;
                    }
                    double numerator = numerator(x, a, m);
                    String d = compare(what + ": numerator sum", t.path("numerator_mean").asDouble(Double.NaN) * c, numerator,
                            metric.kind() == Kind.EVENT_RATE ? 0.5 : Double.POSITIVE_INFINITY, sums, tolerance);
                    if (d == null) {
                        d = compare(what + ": denominator sum", t.path("denominator_mean").asDouble(Double.NaN) * c,
                                denominator[x][a][m], 0.5, sums, tolerance);
                    }
                    if (d != null) {
                        return d;
                    }
                } else if (metric.kind().rate) {
                    long s = t.path("successes").asLong(-1);
                    if (s != successes[x][a][m]) {
                        return what + ": successes " + shown(s) + ", expected " + successes[x][a][m];
                    }
                } else if (sums && c > 0) {
                    String d = compare(what + ": sum", t.path("sum").asDouble(Double.NaN), sum[x][a][m],
                            Double.POSITIVE_INFINITY, true, tolerance);
                    if (d != null) {
                        return d;
                    }
                }
            }
        }
        return null;
    }

    /**
     * Null when {@code got} is within {@code absolute} of {@code want} and, if {@code relative}, within
     * {@code tolerance} of it relatively (to at least 1); else the difference, in words.
     */
    private static String compare(String what, double got, double want, double absolute, boolean relative, double tolerance) {
        double off = Math.abs(got - want);
        if (!(off <= absolute) || relative && !(off <= tolerance * Math.max(1, Math.abs(want)))) {
            return what + " " + got + ", expected " + want;
        }
        return null;
    }

    /** Whether the daemon tallies {@code metric} as a ratio of per-unit sums: the event-level kinds. */
    private static boolean ratio(Metric metric) {
        return !metric.kind().perUnit;
    }

    /** Σx of an event-level metric: successes of an event-rate, values of an event-mean. */
    private double numerator(int x, int a, int m) {
        return EXPERIMENTS.get(x).metrics().get(m).kind() == Kind.EVENT_RATE ? successes[x][a][m] : sum[x][a][m];
    }

    /**
     * The largest relative difference of the daemon's sums from the truth, over every unit-total's
     * sum and every ratio's numerator and denominator sums.
     */
    double largestSumDeviation(JsonNode[] experiments) {
        double worst = 0;
        for (int x = 0; x < EXPERIMENTS.size(); x++) {
            Experiment ex = EXPERIMENTS.get(x);
            for (int a = 0; a < ex.arms().size(); a++) {
                for (int m = 0; m < ex.metrics().size(); m++) {
                    Metric metric = ex.metrics().get(m);
                    long c = count[x][a][m];
                    if (c == 0 || experiments[x] == null || metric.kind() == Kind.UNIT_RATE) {
                        continue;
                    }
                    JsonNode t = experiments[x].path("tallies").path(metric.name()).path(ex.arms().get(a));
                    if (ratio(metric)) {
                        worst = Math.max(worst, deviation(t.path("numerator_mean").asDouble(Double.NaN) * c, numerator(x, a, m)));
                        worst = Math.max(worst, deviation(t.path("denominator_mean").asDouble(Double.NaN) * c,
                                denominator[x][a][m]));
                    } else {
                        worst = Math.max(worst, deviation(t.path("sum").asDouble(Double.NaN), sum[x][a][m]));
                    }
                }
            }
        }
        return worst;
    }

    private static double deviation(double got, double want) {
        return Math.abs(got - want) / Math.max(1, Math.abs(want));
    }

    private static String shown(long v) {
        return v < 0 ? "absent" : Long.toString(v);
    }
}
