package dev.interim.validity;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.experiment.Comparison;
import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.LookResult;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.Tally;
import dev.interim.stream.JsonEventReader;
import dev.interim.stream.OfflineTally;
import dev.interim.text.Numbers;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import org.assertj.core.api.SoftAssertions;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.Test;

/**
 * Seeded simulations of event-quantile metrics through the real engine (a YAML configuration →
 * JSON events → {@link JsonEventReader} → the tally ({@link OfflineTally}, the daemon's partition
 * state) → {@link ExperimentMonitor#look}), on skewed request latencies ({@link LatencyTraffic}).
 *
 * <p>Null streams: p50, p95 and p99 as one-sided harm guardrails ({@code max_per_arm}) and as
 * two-sided primaries ({@code power} and {@code effect}), on independent requests assigned per event
 * and on clients of several correlated requests assigned per unit, at 50:50 and 80:20, with looks
 * from the first events (2, 5, 10, … 160 events) and then about every 1/50 of the guardrails'
 * horizon. Expected: false-stop rate α = {@value #ALPHA}, from the configuration; repeated confidence
 * intervals covering the true difference 0 with probability ≥ 1 − α (Jennison &amp; Turnbull 2000,
 * ch. 9). Monte Carlo SE = √(p(1 − p)/n) at the target (common practice); a cell passes within 3 SE,
 * and a rate below α − 3 SE is accepted as conservative and flagged, as in {@link ValiditySuiteTest}.
 *
 * <p>Tail-only slowdowns: the treatment makes 1% of requests 400 ms slower (the mean moves by 4 ms,
 * 5.5%), or 0.3% of them (1.2 ms), or 0.5% of them 200 ms slower (mostly below p99), watched on the
 * same streams by a p99 guardrail, an event-mean guardrail and a guardrail on the share of requests
 * of at least 300 ms (about control's p99). Reported: power and the information
 * at the stop. Expected values, from the normal approximations written out at
 * {@link #tailSlowdown()}.
 *
 * <p>The default run (about 1.5 minutes on two busy cores: see {@link #GUARDRAIL_RUNS}) checks every
 * null cell within 3 Monte Carlo standard errors; {@code -Dinterim.validity.full=true} runs 1,000 per
 * cell. Every run prints the tables.
 */
class QuantileValidityTest {
    static final boolean FULL = Boolean.getBoolean("interim.validity.full");
    /*
     * Runs per cell: by default 120 per null cell (60 for the primaries, whose runs are longer) and
     * 100 per slowdown, about 1.5 minutes on two busy cores (the runs of a cell share the cores:
     * Engine.inParallel); each count can be set apart:
     * -Dinterim.quantile.<cell>.runs=n.
     */
    static final int GUARDRAIL_RUNS = runs("guardrails", 120, 1000);
    static final int PRIMARY_RUNS = runs("primaries", 60, 1000);
    static final int UNIT_RUNS = runs("unit", 120, 1000);
    static final int TAIL_RUNS = runs("tail", 100, 1000);
    /** Prints a line per run (its decisions, misses and stops), for long runs: -Dinterim.quantile.trace=true. */
    static final boolean TRACE = Boolean.getBoolean("interim.quantile.trace");
    static final double ALPHA = 0.05;
    /** The guardrails' horizon: events per arm ({@code max_per_arm}). */
    static final int HORIZON = 20_000;
    /** Looks after the first events, over the guardrails' horizon. */
    static final int LOOKS = 40;

    private static int runs(String cell, int byDefault, int full) {
        return Integer.getInteger("interim.quantile." + cell + ".runs", FULL ? full : byDefault);
    }

    private static final List<String> TABLE = new ArrayList<>();
    private static final List<String> POWER_TABLE = new ArrayList<>();

    /** The configuration of experiment "vellumd", control "steady", treatment "brisk". */
    static InterimConfig config(String assignment, LatencyTraffic.Shape shape, String metrics) {
        long brisk = Math.round(100 * shape.treatmentShare());
        String yaml = Engine.head("vellumd.requests") + """
                experiments:
                  - id: vellumd
                    control: steady
                    treatments: [brisk]
                    split: {steady: %d, brisk: %d}
                    assignment: %s
                    min_per_arm: 100
                    sample_ratio_threshold: 0.000000001
                    metrics:
                """.formatted(100 - brisk, brisk, assignment) + metrics.indent(6);
        return ConfigLoader.parseWithoutSecrets(yaml);
    }

    /** What one run found for one metric. */
    record Outcome(Decision decision, boolean missed, int stopLook, double stopPerArm, int firstLook) {
    }

    /**
     * Feeds {@code events}, looking after 2, 5, 10, 20, 40, 80, 160 events and then every {@code step}
     * events, until every comparison is final or the events run out. {@code truth} is the true
     * difference of every metric (NaN: coverage not checked).
     */
    static Outcome[] run(InterimConfig config, ExperimentMonitor monitor, Iterable<Traffic.Event> events, int step,
                         double truth, int[] looksOut) {
        List<MetricDefinition> metrics = monitor.definition().metrics();
        int k = metrics.size();
        boolean[] missed = new boolean[k];
        int[] stopLook = new int[k];
        double[] stopPerArm = new double[k];
        int[] firstLook = new int[k];
        int[] fed = Engine.feed(config, monitor, "vellumd", events, step, (look, s, report) -> {
            for (LookResult r : report.results()) {
                int m = index(metrics, r.metric());
                if (firstLook[m] == 0) {
                    firstLook[m] = look;
                }
                if (!Double.isNaN(truth) && !r.interval().contains(truth)) {
                    missed[m] = true;
                }
                if (r.changed() && (r.decision() == Decision.STOP_HARM || r.decision() == Decision.STOP_BENEFIT)) {
                    stopLook[m] = look;
                    Map<String, Tally> byArm = s.tallies().get(r.metric());
                    stopPerArm[m] = (byArm.get("steady").count() + byArm.get("brisk").count()) / 2.0;
                }
            }
        });
        int looks = fed[0];
        Outcome[] out = new Outcome[k];
        for (Comparison c : monitor.comparisons()) {
            int m = index(metrics, c.metric().name());
            out[m] = new Outcome(c.decision(), missed[m], stopLook[m], stopPerArm[m], firstLook[m]);
        }
        looksOut[0] = looks;
        return out;
    }

    private static int index(List<MetricDefinition> metrics, String name) {
        for (int i = 0; i < metrics.size(); i++) {
            if (metrics.get(i).name().equals(name)) {
                return i;
            }
        }
        throw new IllegalArgumentException(name);
    }

    /** What one run found, per metric, and how many looks it took. */
    private record Done(Outcome[] outcomes, int looks) {
    }

    /** Totals of one cell, per metric. */
    record Cell(String name, List<String> metrics, int runs, int[] harm, int[] benefit, int[] misses, int[] incomplete,
                double[] stopPerArm, double[] stopLook, double[] firstLook, double looks) {
        double stopRate(int m) {
            return (double) (harm[m] + benefit[m]) / runs;
        }
    }

    /**
     * {@code runs} seeded runs of {@code units} units each (traffic beyond the horizon, so that a design
     * that measures its information conservatively is not cut short).
     */
    static Cell simulate(String name, InterimConfig config, LatencyTraffic.Shape shape, int units, int step,
                         double slowShare, double truth, long seed, int runs) {
        return simulate(name, config, shape, units, step, slowShare, 400, truth, seed, runs);
    }

    /** {@link #simulate} with the slow requests {@code delay} ms slower. */
    static Cell simulate(String name, InterimConfig config, LatencyTraffic.Shape shape, int units, int step,
                         double slowShare, double delay, double truth, long seed, int runs) {
        List<String> names = config.experiments().get(0).definition().metrics().stream().map(MetricDefinition::name).toList();
        int k = names.size();
        int[] harm = new int[k];
        int[] benefit = new int[k];
        int[] misses = new int[k];
        int[] incomplete = new int[k];
        double[] stopPerArm = new double[k];
        double[] stopLook = new double[k];
        double[] firstLook = new double[k];
        long looks = 0;
        List<Done> done = Engine.inParallel(runs, () -> Engine.monitor(config), (monitor, run) -> {
            int[] looksOut = new int[1];
            Outcome[] o = QuantileValidityTest.run(config, monitor,
                    LatencyTraffic.generate(shape, units, slowShare, delay, seed + 7919L * run), step, truth, looksOut);
            return new Done(o, looksOut[0]);
        });
        for (int run = 0; run < runs; run++) {
            Outcome[] o = done.get(run).outcomes();
            looks += done.get(run).looks();
            if (TRACE) {
                StringBuilder line = new StringBuilder("run ").append(name).append(" | ").append(run);
                for (Outcome x : o) {
                    line.append(" | ").append(x.decision().name()).append(' ').append(x.missed() ? 1 : 0).append(' ')
                            .append(x.stopPerArm()).append(' ').append(x.stopLook());
                }
                System.out.println(line);
            }
            for (int m = 0; m < k; m++) {
                Decision d = o[m].decision();
                if (d == Decision.STOP_HARM) {
                    harm[m]++;
                } else if (d == Decision.STOP_BENEFIT) {
                    benefit[m]++;
                }
                if (d == Decision.STOP_HARM || d == Decision.STOP_BENEFIT) {
                    stopPerArm[m] += o[m].stopPerArm();
                    stopLook[m] += o[m].stopLook();
                }
                if (o[m].missed()) {
                    misses[m]++;
                }
                if (!d.isFinal()) {
                    incomplete[m]++;
                }
                firstLook[m] += o[m].firstLook();
            }
        }
        for (int m = 0; m < k; m++) {
            int stops = harm[m] + benefit[m];
            stopPerArm[m] = stops == 0 ? Double.NaN : stopPerArm[m] / stops;
            stopLook[m] = stops == 0 ? Double.NaN : stopLook[m] / stops;
            firstLook[m] /= runs;
        }
        return new Cell(name, names, runs, harm, benefit, misses, incomplete, stopPerArm, stopLook, firstLook,
                (double) looks / runs);
    }

    static double se(double p, int n) {
        return Math.sqrt(p * (1 - p) / n);
    }

    /** Table rows and soft assertions of a null cell. */
    static void reportNull(Cell c, SoftAssertions soft) {
        TABLE.add(String.format(Locale.ROOT, "%s: %d runs, %.0f looks per run on average", c.name(), c.runs(),
                c.looks()));
        for (int m = 0; m < c.metrics().size(); m++) {
            String metric = c.metrics().get(m);
            double rate = c.stopRate(m);
            double se = se(ALPHA, c.runs());
            String verdict = rate > ALPHA + 3 * se ? "OUT" : rate < ALPHA - 3 * se ? "conservative" : "ok";
            TABLE.add(row(c.name(), metric, "false stops", rate, ALPHA, se, verdict, c.firstLook()[m], c.incomplete()[m]));
            soft.assertThat(rate).as("%s %s: false-stop rate %s, alpha %s (+3 SE = %s)", c.name(), metric, rate, ALPHA,
                    3 * se).isLessThanOrEqualTo(ALPHA + 3 * se);
            double coverage = 1 - (double) c.misses()[m] / c.runs();
            double cse = se(1 - ALPHA, c.runs());
            TABLE.add(row(c.name(), metric, "RCI coverage", coverage, 1 - ALPHA, cse,
                    coverage >= 1 - ALPHA - 3 * cse ? "ok" : "OUT", c.firstLook()[m], c.incomplete()[m]));
            soft.assertThat(coverage).as("%s %s: coverage of the repeated intervals %s, target >= %s (-3 SE = %s)",
                    c.name(), metric, coverage, 1 - ALPHA, 3 * cse).isGreaterThanOrEqualTo(1 - ALPHA - 3 * cse);
            soft.assertThat(c.incomplete()[m]).as("%s %s: comparisons not final at the end of the traffic", c.name(),
                    metric).isZero();
        }
    }

    static String row(String cell, String metric, String what, double measured, double target, double se,
                      String verdict, double firstLook, int incomplete) {
        return String.format(Locale.ROOT, "| %-28s | %-11s | %-12s | %6.3f | %6.3f | %5.3f | %-12s | %5.1f | %3d |", cell,
                metric, what, measured, target, se, verdict, firstLook, incomplete);
    }

    @AfterAll
    static void printTables() {
        System.out.println("Quantile validity (" + (FULL ? "full" : "default") + " run; target: alpha from the"
                + " configuration, coverage 1 - alpha; SE = sqrt(p(1-p)/n) at the target; first: mean number of the"
                + " first look with an estimate; open: comparisons not final at the end of the traffic)");
        System.out.println(String.format(Locale.ROOT, "| %-28s | %-11s | %-12s | %6s | %6s | %5s | %-12s | %5s | %3s |",
                "cell", "metric", "measure", "rate", "target", "SE", "verdict", "first", "open"));
        TABLE.forEach(System.out::println);
        if (!POWER_TABLE.isEmpty()) {
            System.out.println("Tail-only slowdowns (a share of the treatment's requests slower by a delay; " + (FULL ? "full" : "default")
                    + " run; power = share of runs stopped for harm, SE = sqrt(p(1-p)/n); at the stop: mean events per"
                    + " arm and mean look number over the runs that stopped)");
            System.out.println(String.format(Locale.ROOT, "| %-28s | %-12s | %6s | %5s | %10s | %6s |", "cell",
                    "guardrail", "power", "SE", "events/arm", "look"));
            POWER_TABLE.forEach(System.out::println);
        }
    }

    // ---- null streams ----

    /**
     * p50, p95 and p99 as one-sided harm guardrails ({@code max_per_arm} = {@value #HORIZON}), or, with
     * {@code effects} (ms), as two-sided primaries powered for those effects.
     */
    static String nullMetrics(double[] effects) {
        StringBuilder b = new StringBuilder();
        double[] q = {0.5, 0.95, 0.99};
        String[] names = {"p50", "p95", "p99"};
        for (int i = 0; i < 3; i++) {
            if (effects == null) {
                b.append(String.format(Locale.ROOT, "- {name: %s-guard, kind: event-quantile, quantile: %s, field: /ms, "
                        + "role: guardrail, worse: higher, alpha: %s, sides: 1, spending: obf, max_per_arm: %d}%n",
                        names[i], q[i], ALPHA, HORIZON));
            } else {
                b.append(String.format(Locale.ROOT, "- {name: %s, kind: event-quantile, quantile: %s, field: /ms, "
                        + "role: primary, worse: higher, alpha: %s, sides: 2, spending: obf, power: 0.8, effect: %s, "
                        + "planned_looks: 60}%n", names[i], q[i], ALPHA, effects[i]));
            }
        }
        return b.toString();
    }

    /**
     * Planned effects (ms) of the primaries under per-event assignment, so that the planned
     * information ((z_{α/2} + z_β)/δ)²·1.03 (the O'Brien–Fleming-type inflation for many looks, about
     * 3%; from memory) is reached where the guardrails' horizon is, 2·n_t·n_c/(n_t + n_c) =
     * {@value #HORIZON}: δ = 2.80·√1.03·c·√(2/{@value #HORIZON}), with c = √(p(1 − p))/f(ξ_p) the
     * asymptotic per-arm constant of a sample quantile (Woodruff 1952) for this traffic (3% zeros,
     * lognormal of mean 75 ms and log-sd 0.7): c = 51.7, 274 and 779 ms at p50, p95, p99 (Source:
     * computed with SciPy, scipy.stats.norm and scipy.optimize.brentq).
     */
    static final double[] EVENT_EFFECTS = {1.47, 7.8, 22.1};

    /**
     * A null cell: units for {@code reach} times the events at the guardrails' horizon, looks after the
     * first events and then every 1/{@value #LOOKS} of the horizon. Reach: guardrails 1.25 (per unit the
     * split and the requests per client vary, and at 1.05, 2 runs of 103 ended a few looks short);
     * primaries 3, as in {@link ValiditySuiteTest}: the information of a quantile is measured on its
     * Woodruff width, whose sampling noise the horizon's "never shortened over the latest half" rule
     * and the chi-square limit on the tail's count turn into a later horizon (at reach 2, 11 runs of
     * 300 of the p99 primary and 1 of p95 had not reached it).
     */
    static Cell nullCell(String name, String assignment, LatencyTraffic.Shape shape, double[] effects, double reach,
                         long seed, int runs) {
        InterimConfig config = config(assignment, shape, nullMetrics(effects));
        double share = shape.treatmentShare();
        // Events at which 2·n_t·n_c/(N·(n_t + n_c)) = 1, n_t = share·n and n_c = (1 − share)·n.
        double horizonEvents = HORIZON / (2 * share * (1 - share));
        int units = (int) Math.ceil(reach * horizonEvents / shape.meanEvents());
        int step = (int) Math.round(horizonEvents / LOOKS);
        return simulate(name, config, shape, units, step, 0, 0, seed, runs);
    }

    @Test
    void guardrailsOnIndependentRequestsPerEvent() {
        SoftAssertions soft = new SoftAssertions();
        reportNull(nullCell("independent, event, 50:50", "event", LatencyTraffic.INDEPENDENT, null, 1.25, 101L,
                GUARDRAIL_RUNS),
                soft);
        soft.assertAll();
    }

    @Test
    void primariesOnIndependentRequestsPerEventUneven() {
        SoftAssertions soft = new SoftAssertions();
        reportNull(nullCell("independent, event, 80:20", "event", LatencyTraffic.INDEPENDENT_UNEVEN, EVENT_EFFECTS,
                3, 102L, PRIMARY_RUNS), soft);
        soft.assertAll();
    }

    @Test
    void guardrailsOnClusteredClientsPerUnitUneven() {
        SoftAssertions soft = new SoftAssertions();
        reportNull(nullCell("clustered, unit, 80:20", "unit", LatencyTraffic.CLUSTERED_UNEVEN, null, 1.25, 103L,
                UNIT_RUNS), soft);
        soft.assertAll();
    }

    // ---- tail-only slowdown ----

    /** Three guardrails of the same latency, each one-sided at α = {@value #ALPHA} with {@code max_per_arm}. */
    static String tailMetrics(int horizon) {
        return """
                - {name: p99, kind: event-quantile, quantile: 0.99, field: /ms, role: guardrail, worse: higher,
                   alpha: %2$s, sides: 1, spending: obf, max_per_arm: %1$d}
                - {name: mean, kind: event-mean, field: /ms, role: guardrail, worse: higher,
                   alpha: %2$s, sides: 1, spending: obf, max_per_arm: %1$d}
                - {name: share-300ms, kind: event-rate, field: /ms, counts_if: {at_least: 300}, role: guardrail,
                   worse: higher, alpha: %2$s, sides: 1, spending: obf, max_per_arm: %1$d}
                """.formatted(horizon, ALPHA);
    }

    /**
     * 1% of the treatment's requests 400 ms slower, independent requests at 50:50 assigned per event,
     * the three guardrails of {@link #tailMetrics} on the same streams, for a horizon of 20,000 and of
     * 100,000 requests per arm; looks every 1/{@value #LOOKS} of the horizon.
     *
     * <p>Expected (normal approximations for n requests per arm, from the lognormal mixture of
     * {@link LatencyTraffic}; Source: computed with SciPy, scipy.stats.norm and scipy.optimize.brentq):
     * p99 moves from 297 to 431 ms, the densities there are 1.28e-4 and 1.40e-4 per ms, so Woodruff's
     * standard error of the difference is about √(0.0099/n)·√(1/1.28e-4² + 1/1.40e-4²) ≈ 1,054/√n ms
     * and z ≈ 9.0 at the first look p99 can have (5,000 per arm: {@code QuantileSignificance.MIN_TAIL}
     * values beyond it); the share of at least 300 ms moves from 0.0096 to 0.0195, z ≈ 8.3 at 20,000 per
     * arm; the mean moves by 4 ms (72.75 to 76.75) with standard deviations 60 and 72 ms, z ≈ 6.0 at
     * 20,000. Each is far beyond the last O'Brien–Fleming-type boundary (below 2), so each guardrail's
     * power should be near 1 (asserted: at least 0.9); what tells them apart is when they stop.
     */
    @Test
    void tailSlowdown() {
        SoftAssertions soft = new SoftAssertions();
        for (int horizon : new int[] {HORIZON, 5 * HORIZON}) {
            Cell c = tailCell(horizon, 0.01, 400);
            for (int m = 0; m < c.metrics().size(); m++) {
                double power = (double) c.harm()[m] / c.runs();
                soft.assertThat(power).as("%s %s: power against the tail-only slowdown", c.name(), c.metrics().get(m))
                        .isGreaterThanOrEqualTo(0.9);
            }
        }
        // A rarer slowdown, 0.3% of requests 400 ms slower (Source: the lognormal mixture of LatencyTraffic,
        // worked by hand with the normal approximations above; from the same densities): the mean moves
        // by 1.2 ms, z ≈ 1.9 at 20,000 per arm, near the last boundary, so its power is about one half;
        // the treatment's p99 is control's quantile at 0.99/0.997, about 329 ms against 297, z ≈ 4 at
        // 20,000; the share of at least 300 ms goes from 0.0096 to 0.0126, z ≈ 2.9. The p99 must be
        // clearly ahead of the mean: by more than 3 standard errors of the difference of the powers.
        Cell rare = tailCell(HORIZON, 0.003, 400);
        double p99 = (double) rare.harm()[0] / rare.runs();
        double mean = (double) rare.harm()[1] / rare.runs();
        double seDifference = Math.sqrt((p99 * (1 - p99) + mean * (1 - mean)) / rare.runs());
        soft.assertThat(p99 - mean).as("%s: p99's power above the mean's (%s against %s)", rare.name(), p99, mean)
                .isGreaterThan(3 * Math.max(seDifference, 0.5 / rare.runs()));
        // And where a quantile guardrail is blind: 0.5% of requests 200 ms slower mostly stay below
        // p99 (a request crosses 297 ms only if it took more than 97 ms before, a quarter of them), so the
        // p99 barely moves while the mean moves by 1 ms. Reported, not asserted: it is what the README
        // warns of (a tail guardrail watches its own quantile, nothing below it).
        tailCell(HORIZON, 0.005, 200);
        soft.assertAll();
    }

    /** One cell of {@link #tailSlowdown}: its power table rows are added. */
    private static Cell tailCell(int horizon, double share, double delay) {
        InterimConfig config = config("event", LatencyTraffic.INDEPENDENT, tailMetrics(horizon));
        double horizonEvents = 2.0 * horizon;
        Cell c = simulate(String.format(Locale.ROOT, "%s%% +%.0fms, N=%d", Numbers.plain(100 * share), delay, horizon),
                config, LatencyTraffic.INDEPENDENT, (int) (1.05 * horizonEvents), (int) Math.round(horizonEvents / LOOKS),
                share, delay, Double.NaN, 201L + horizon + Math.round(1000 * share), TAIL_RUNS);
        for (int m = 0; m < c.metrics().size(); m++) {
            double power = (double) c.harm()[m] / c.runs();
            POWER_TABLE.add(String.format(Locale.ROOT, "| %-28s | %-12s | %6.3f | %5.3f | %10.0f | %6.1f |",
                    c.name(), c.metrics().get(m), power, se(power, c.runs()), c.stopPerArm()[m], c.stopLook()[m]));
        }
        return c;
    }
}
