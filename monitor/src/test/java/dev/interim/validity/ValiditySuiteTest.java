package dev.interim.validity;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.config.InterimConfig;
import dev.interim.experiment.Decision;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import org.assertj.core.api.SoftAssertions;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.Test;

/**
 * Seeded simulations through the real engine (configuration → JSON events → reader → tally →
 * looks): false stops under no effect, power under the planned effect, and coverage of the repeated
 * confidence intervals, for every metric kind, on independent and on clustered traffic
 * ({@link Traffic}).
 *
 * <p>Expected values and their sources: α = {@value Engine#ALPHA}, from the configuration (each
 * metric's {@code alpha}); power = {@value Engine#POWER}, the plan (each metric's {@code power} with
 * {@code effect}); coverage ≥ 1 − α, the simultaneous coverage of repeated confidence intervals
 * (Jennison &amp; Turnbull 2000, ch. 9). Monte Carlo standard error SE = √(p(1 − p)/n) at the target p
 * (common practice); a cell passes within 3 SE. A false-stop rate below α − 3 SE is accepted as
 * conservative and flagged in the table.
 *
 * <p>Planned effects: sized (by a pilot of the same traffic; revenue's from its variance by
 * construction, Var(total) = E[N]·Var(R) + Var(N)·E[R]², because the pilot's early looks were cut short
 * by tiny-sample information fractions, see the report) so that the planned information is
 * reached near 4,000 units (independent) or 3,000 units of about 7 events (clustered), with looks at
 * the first events (2, 5, 10, … events) and then about every 1/45 of that. The default run is small
 * (about a minute and a half on two busy cores, the runs of a cell sharing them); {@code -Dinterim.validity.full=true} runs 1,000 per cell for the
 * README's figures. Every run prints the table.
 */
class ValiditySuiteTest {
    static final boolean FULL = Boolean.getBoolean("interim.validity.full");
    static final int RUNS = FULL ? 1000 : 120;
    static final int LOOKS = FULL ? 60 : 40;

    /** Planned effects (and the simulated treatment effects) per metric, in {@link Traffic#METRICS} order. */
    static final double[] INDEPENDENT_EFFECTS = {0.025, 25, 0.055, 2.7, 0.9};
    static final double[] CLUSTERED_EFFECTS = {0.02, 37, 0.06, 8.9, 1.1};

    private static final List<String> TABLE = new ArrayList<>();

    /** Rates of one cell, per metric. */
    record Cell(String name, int runs, int[] stops, int[] detections, int[] misses, int incomplete, double looks) {
    }

    static Cell simulate(String name, Traffic.Shape shape, String assignment, double[] plan, boolean effect,
                         int units, long seed) {
        return simulate(name, shape, assignment, plan, effect, units, seed, RUNS, LOOKS);
    }

    static Cell simulate(String name, Traffic.Shape shape, String assignment, double[] plan, boolean effect,
                         int units, long seed, int runs, int lookCount) {
        InterimConfig config = Engine.config(assignment, plan);
        double[] truth = effect ? plan : new double[plan.length];
        int k = Traffic.METRICS.length;
        int[] stops = new int[k];
        int[] detections = new int[k];
        int[] misses = new int[k];
        int incomplete = 0;
        long looks = 0;
        // Traffic for up to 3 times the units at which the planned information is reached: a design
        // that measures its information conservatively runs past the plan, and a run cut short by the
        // end of the traffic would count as a miss that a live experiment, which goes on, never has.
        int cap = units * 3;
        int step = (int) Math.max(1, units * shape.expectedEvents() / lookCount);
        List<Engine.Run> done = Engine.inParallel(runs, () -> Engine.monitor(config), (monitor, run) ->
                Engine.run(config, monitor, Traffic.generate(shape, cap, truth, seed + 7919L * run), step, truth));
        for (Engine.Run r : done) {
            looks += r.looks();
            for (int m = 0; m < k; m++) {
                Decision d = r.decisions()[m];
                if (d == Decision.STOP_BENEFIT || d == Decision.STOP_HARM) {
                    stops[m]++;
                    if (Math.signum(r.stopEffects()[m]) == Math.signum(plan[m])) {
                        detections[m]++;
                    }
                }
                if (r.missed()[m]) {
                    misses[m]++;
                }
                if (!d.isFinal()) {
                    incomplete++;
                }
            }
        }
        return new Cell(name, runs, stops, detections, misses, incomplete, (double) looks / runs);
    }

    static double se(double p, int n) {
        return Math.sqrt(p * (1 - p) / n);
    }

    /** Rows of the table; returns the soft assertions of the cell. */
    static void report(Cell c, boolean effect, SoftAssertions soft) {
        TABLE.add(String.format(Locale.ROOT, "%s: %d runs, %.0f looks per run on average, %d comparisons not final at the"
                + " end of the traffic", c.name(), c.runs(), c.looks(), c.incomplete()));
        for (int m = 0; m < Traffic.METRICS.length; m++) {
            String metric = Traffic.METRICS[m];
            if (effect) {
                double power = (double) c.detections()[m] / c.runs();
                double se = se(Engine.POWER, c.runs());
                TABLE.add(row(c.name(), metric, "power", power, Engine.POWER, se,
                        Math.abs(power - Engine.POWER) <= 3 * se ? "ok" : "OUT"));
                soft.assertThat(power).as("%s %s: power %s, plan %s (±3 SE = %s)", c.name(), metric, power,
                        Engine.POWER, 3 * se).isBetween(Engine.POWER - 3 * se, Engine.POWER + 3 * se);
            } else {
                double rate = (double) c.stops()[m] / c.runs();
                double se = se(Engine.ALPHA, c.runs());
                String verdict = rate > Engine.ALPHA + 3 * se ? "OUT" : rate < Engine.ALPHA - 3 * se ? "conservative" : "ok";
                TABLE.add(row(c.name(), metric, "false stops", rate, Engine.ALPHA, se, verdict));
                soft.assertThat(rate).as("%s %s: false-stop rate %s, alpha %s (+3 SE = %s)", c.name(), metric, rate,
                        Engine.ALPHA, 3 * se).isLessThanOrEqualTo(Engine.ALPHA + 3 * se);
            }
            double coverage = 1 - (double) c.misses()[m] / c.runs();
            double se = se(1 - Engine.ALPHA, c.runs());
            TABLE.add(row(c.name(), metric, "RCI coverage", coverage, 1 - Engine.ALPHA, se,
                    coverage >= 1 - Engine.ALPHA - 3 * se ? "ok" : "OUT"));
            soft.assertThat(coverage).as("%s %s: coverage of the repeated intervals %s, target >= %s (-3 SE = %s)",
                    c.name(), metric, coverage, 1 - Engine.ALPHA, 3 * se)
                    .isGreaterThanOrEqualTo(1 - Engine.ALPHA - 3 * se);
        }
    }

    static String row(String cell, String metric, String what, double measured, double target, double se, String verdict) {
        return String.format(Locale.ROOT, "| %-30s | %-8s | %-12s | %6.3f | %6.3f | %5.3f | %-12s |", cell, metric, what,
                measured, target, se, verdict);
    }

    @AfterAll
    static void printTable() {
        System.out.println("Validity (" + (FULL ? "full" : "default") + " run; target: alpha from the configuration,"
                + " power from the plan, coverage 1 - alpha; SE = sqrt(p(1-p)/n) at the target)");
        System.out.println(String.format(Locale.ROOT, "| %-30s | %-8s | %-12s | %6s | %6s | %5s | %-12s |", "cell",
                "metric", "measure", "rate", "target", "SE", "verdict"));
        TABLE.forEach(System.out::println);
    }

    @Test
    void independentEventsUnderNoEffect() {
        SoftAssertions soft = new SoftAssertions();
        report(simulate("independent, event, null", Traffic.INDEPENDENT, "event", INDEPENDENT_EFFECTS, false, 4000,
                11L), false, soft);
        soft.assertAll();
    }

    @Test
    void independentEventsUnderThePlannedEffect() {
        SoftAssertions soft = new SoftAssertions();
        report(simulate("independent, event, effect", Traffic.INDEPENDENT, "event", INDEPENDENT_EFFECTS, true, 4000,
                12L), true, soft);
        soft.assertAll();
    }

    @Test
    void clusteredUnitsUnderNoEffect() {
        SoftAssertions soft = new SoftAssertions();
        report(simulate("clustered, unit, null", Traffic.CLUSTERED, "unit", CLUSTERED_EFFECTS, false, 3000, 21L),
                false, soft);
        soft.assertAll();
    }

    @Test
    void clusteredUnitsUnderThePlannedEffect() {
        SoftAssertions soft = new SoftAssertions();
        report(simulate("clustered, unit, effect", Traffic.CLUSTERED, "unit", CLUSTERED_EFFECTS, true, 3000, 22L),
                true, soft);
        soft.assertAll();
    }

    /**
     * Continuous monitoring: the same clustered null traffic looked at about every 1/1,000 of the
     * planned information (the full run only: about a second per run).
     */
    @Test
    void clusteredUnitsUnderNoEffectWithAThousandLooks() {
        org.junit.jupiter.api.Assumptions.assumeTrue(FULL, "SKIPPED: a thousand looks per run only in the full run "
                + "(-Dinterim.validity.full=true)");
        SoftAssertions soft = new SoftAssertions();
        report(simulate("clustered, unit, null, 1000 looks", Traffic.CLUSTERED, "unit", CLUSTERED_EFFECTS, false, 3000,
                41L, 400, 1000), false, soft);
        soft.assertAll();
    }

    /**
     * The defect per-unit analysis fixes: clustered traffic analysed per event takes a user's events as
     * independent, so the event-mean variance is far too small (here the design effect is about 13: the
     * pilot's per-event δ for the same information was 10.3 ms against 36.6 ms per unit) and false stops
     * are far above α. The suite detects it; per-unit analysis of the same traffic
     * ({@link #clusteredUnitsUnderNoEffect}) stays within bounds.
     */
    @Test
    void eventAssignmentOnClusteredTrafficStopsFalselyFarAboveAlpha() {
        int runs = Math.min(RUNS, 60);
        Cell c = simulateRuns("clustered, event (defect)", runs);
        double rate = (double) c.stops()[Engine.index("latency")] / c.runs();
        double se = se(Engine.ALPHA, c.runs());
        TABLE.add(row(c.name(), "latency", "false stops", rate, Engine.ALPHA, se,
                rate > Engine.ALPHA + 3 * se ? "OUT (expected)" : "ok"));
        assertThat(rate).as("event-mean false stops when clustered traffic is analysed per event")
                .isGreaterThan(Engine.ALPHA + 3 * se);
    }

    private static Cell simulateRuns(String name, int runs) {
        InterimConfig config = Engine.config("event", CLUSTERED_EFFECTS);
        int[] stops = new int[Traffic.METRICS.length];
        long looks = 0;
        int step = (int) (3000 * Traffic.CLUSTERED.expectedEvents() / LOOKS);
        List<Engine.Run> done = Engine.inParallel(runs, () -> Engine.monitor(config), (monitor, run) -> Engine.run(config,
                monitor, Traffic.generate(Traffic.CLUSTERED, 5400, new double[5], 31L + 7919L * run), step, new double[5]));
        for (Engine.Run r : done) {
            looks += r.looks();
            for (int m = 0; m < stops.length; m++) {
                Decision d = r.decisions()[m];
                if (d == Decision.STOP_BENEFIT || d == Decision.STOP_HARM) {
                    stops[m]++;
                }
            }
        }
        return new Cell(name, runs, stops, stops.clone(), new int[stops.length], 0, (double) looks / runs);
    }
}
