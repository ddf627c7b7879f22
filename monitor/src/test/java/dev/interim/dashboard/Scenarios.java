package dev.interim.dashboard;

import dev.interim.experiment.RunMode;

import dev.interim.experiment.Sides;

import dev.interim.experiment.Assignment;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.Horizon;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.MetricKind;
import dev.interim.experiment.Role;
import dev.interim.experiment.StopAction;
import dev.interim.experiment.Tally;
import dev.interim.experiment.Worse;
import dev.interim.sequential.SpendingFunction;
import dev.interim.stats.ProportionCounts;
import dev.interim.experiment.TallyForm;
import dev.interim.stats.RunningHistogram;
import dev.interim.stats.RunningMoments;
import dev.interim.stats.RunningRatioMoments;
import java.time.Duration;
import java.time.Instant;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;

/**
 * Invented experiments run through the real decision state machine ({@link ExperimentMonitor}),
 * look after look, with traffic drawn from fixed random streams, so that the pages show what the
 * daemon would show: a stop for harm, healthy arms that continue, a held experiment with a broken
 * split, a futility boundary. The names and rates are made up; no statistical value is checked
 * against them.
 */
final class Scenarios {
    static final Instant T0 = Instant.parse("2027-03-08T09:00:00Z");

    private Scenarios() {}

    /** Three experiments after their looks, keyed by id. */
    static Map<String, ExperimentView> invented() {
        Map<String, ExperimentView> views = new LinkedHashMap<>();
        for (ExperimentView v : List.of(onboarding(), searchRanking(), pricing())) {
            views.put(v.id(), v);
        }
        return views;
    }

    /**
     * "mossglint-onboarding": a new sign-up flow in two variants; 'express' fails 2.6% of sign-ups
     * instead of 1% and must be stopped for harm; 'guided' is healthy.
     */
    static ExperimentView onboarding() {
        ExperimentDefinition d = new ExperimentDefinition("mossglint-onboarding", "classic", List.of("guided", "express"), null,
                Duration.ofMinutes(1), 200, RunMode.DRY_RUN, 0.001, List.of(
                        metric("signup-errors", MetricKind.EVENT_RATE, Role.GUARDRAIL, Worse.HIGHER, 1, "obf", 60_000, StopAction.KILL),
                        metric("first-task-seconds", MetricKind.EVENT_MEAN, Role.GUARDRAIL, Worse.HIGHER, 1, "pocock", 60_000, StopAction.PAGE),
                        metric("activated", MetricKind.UNIT_RATE, Role.PRIMARY, Worse.LOWER, 2, "obf", 60_000, StopAction.NONE)));
        Map<String, double[]> arms = new LinkedHashMap<>();
        // error rate, mean seconds, activation rate
        arms.put("classic", new double[] {0.010, 42, 0.30});
        arms.put("guided", new double[] {0.010, 40, 0.32});
        arms.put("express", new double[] {0.026, 43, 0.30});
        return run(d, arms, 14, 1500, Map.of(), 71);
    }

    /** "varrow-search-ranking": the treatment gets a third of the traffic it should; decisions are held. */
    static ExperimentView searchRanking() {
        ExperimentDefinition d = new ExperimentDefinition("varrow-search-ranking", "bm25", List.of("learned"), null,
                Duration.ofMinutes(1), 200, RunMode.LIVE, 0.001, List.of(
                        metric("zero-result-rate", MetricKind.EVENT_RATE, Role.GUARDRAIL, Worse.HIGHER, 1, "obf", 50_000, StopAction.KILL)));
        Map<String, double[]> arms = new LinkedHashMap<>();
        arms.put("bm25", new double[] {0.05, 0, 0});
        arms.put("learned", new double[] {0.05, 0, 0});
        return run(d, arms, 6, 2000, Map.of("learned", 0.34), 72);
    }

    /** "tamsel-pricing": a one-sided primary metric with a powered horizon and a futility boundary; no true effect. */
    static ExperimentView pricing() {
        MetricDefinition conversion = new MetricDefinition("checkout-conversion", MetricKind.UNIT_RATE, Role.PRIMARY, Worse.LOWER, 0.05, Sides.ONE,
                SpendingFunction.parse("hsd:-4"), SpendingFunction.parse("hsd:-2"), new Horizon.Powered(0.9, 0.02, 4), null,
                StopAction.NONE);
        ExperimentDefinition d = new ExperimentDefinition("tamsel-pricing", "list-price", List.of("bundle"), null,
                Duration.ofMinutes(1), 200, RunMode.DRY_RUN, 0.001, List.of(conversion));
        Map<String, double[]> arms = new LinkedHashMap<>();
        arms.put("list-price", new double[] {0.10, 0, 0.10});
        arms.put("bundle", new double[] {0.10, 0, 0.11});
        return run(d, arms, 9, 250, Map.of(), 73);
    }

    /**
     * "ember-basket": arms assigned per unit (each shopper keeps an arm); the primary metric is a
     * ratio, basket value per session, summed per shopper. 'bundle-hint' raises the value per
     * session by about 5%. Not part of {@link #invented()}.
     */
    static ExperimentView perUnitRatio() {
        MetricDefinition value = new MetricDefinition("value-per-session", MetricKind.RATIO, Role.PRIMARY, Worse.LOWER, 0.05, Sides.TWO,
                SpendingFunction.parse("obf"), null, new Horizon.MaxPerArm(40_000), null, StopAction.NONE);
        ExperimentDefinition d = new ExperimentDefinition("ember-basket", "plain", List.of("bundle-hint"), null,
                Duration.ofMinutes(1), 200, RunMode.DRY_RUN, 0.001, List.of(value), Assignment.UNIT);
        ExperimentMonitor monitor = new ExperimentMonitor(d);
        SplittableRandom random = new SplittableRandom(74);
        Map<String, Double> perSession = Map.of("plain", 20.0, "bundle-hint", 21.0);
        Map<String, RunningRatioMoments> sums = new LinkedHashMap<>();
        Map<String, Long> exposures = new HashMap<>();
        for (int look = 1; look <= 6; look++) {
            for (String arm : List.of("plain", "bundle-hint")) {
                RunningRatioMoments r = sums.computeIfAbsent(arm, a -> new RunningRatioMoments());
                for (int i = 0; i < 800; i++) {
                    int sessions = 1 + (int) (-Math.log(1 - random.nextDouble()) * 2);
                    double total = 0;
                    for (int k = 0; k < sessions; k++) {
                        total += perSession.get(arm) * (0.2 - Math.log(1 - random.nextDouble()) * 0.8);
                    }
                    r.accept(total, sessions);
                }
                exposures.merge(arm, 800L, Long::sum);
            }
            Map<String, Tally> byArm = new HashMap<>();
            sums.forEach((arm, r) -> byArm.put(arm, new Tally.Ratio(r.snapshot())));
            monitor.look(T0.plus(Duration.ofMinutes(look)), Map.copyOf(exposures), Map.of(value.name(), byArm));
        }
        return monitor.view();
    }

    /** The latencies of {@link #quantile}, per arm, in the order counted (for checks by a sort). */
    record QuantileScenario(ExperimentView view, Map<String, double[]> values) {}

    /**
     * "wicken-render": a p99 render-time guardrail, arms assigned per event. 'v2' sends 5% of its
     * renders down a slow path (2.5 times as long), which lifts its p99; 'v3' is exposed but its
     * events carry no render time yet (an empty tally). {@code looks} looks of {@code perLook} renders per arm each: below 5,000 per arm the
     * p99 cannot be estimated yet. Not part of {@link #invented()}.
     */
    static QuantileScenario quantile(int looks, int perLook) {
        MetricDefinition render = new MetricDefinition("render-ms", MetricKind.EVENT_QUANTILE, Role.GUARDRAIL, Worse.HIGHER, 0.05,
                Sides.ONE, SpendingFunction.parse("obf"), null, new Horizon.MaxPerArm(40_000), null, StopAction.KILL, null, null,
                0.99);
        ExperimentDefinition d = new ExperimentDefinition("wicken-render", "v1", List.of("v2", "v3"), null,
                Duration.ofMinutes(1), 200, RunMode.DRY_RUN, 0.001, List.of(render));
        ExperimentMonitor monitor = new ExperimentMonitor(d);
        SplittableRandom random = new SplittableRandom(75);
        Map<String, RunningHistogram> histograms = new LinkedHashMap<>();
        Map<String, double[]> values = new LinkedHashMap<>();
        Map<String, Long> exposures = new HashMap<>();
        for (int look = 1; look <= looks; look++) {
            for (String arm : List.of("v1", "v2")) {
                RunningHistogram h = histograms.computeIfAbsent(arm, a -> new RunningHistogram(1));
                double[] kept = values.merge(arm, new double[0], (a, b) -> a);
                double[] more = java.util.Arrays.copyOf(kept, kept.length + perLook);
                for (int i = 0; i < perLook; i++) {
                    // log-normal around 120 ms, rounded to 0.1 ms
                    double ms = 120 * Math.exp(0.4 * gaussian(random));
                    if (arm.equals("v2") && random.nextDouble() < 0.05) {
                        ms *= 2.5;
                    }
                    ms = Math.round(ms * 10) / 10.0;
                    h.accept(ms, 0);
                    more[kept.length + i] = ms;
                }
                values.put(arm, more);
                exposures.merge(arm, (long) perLook, Long::sum);
            }
            exposures.merge("v3", (long) perLook, Long::sum); // exposed, but its events carry no render time
            Map<String, Tally> byArm = new HashMap<>();
            histograms.forEach((arm, h) -> byArm.put(arm, new Tally.Quantile(h.snapshot())));
            byArm.put("v3", Tally.empty(TallyForm.QUANTILE));
            monitor.look(T0.plus(Duration.ofMinutes(look)), Map.copyOf(exposures), Map.of(render.name(), byArm));
        }
        return new QuantileScenario(monitor.view(), values);
    }

    /** A standard normal draw (Box–Muller). */
    private static double gaussian(SplittableRandom random) {
        return Math.sqrt(-2 * Math.log(1 - random.nextDouble())) * Math.cos(2 * Math.PI * random.nextDouble());
    }

    static MetricDefinition metric(String name, MetricKind kind, Role role, Worse worse, int sides, String spending, long maxPerArm,
                                   StopAction action) {
        return new MetricDefinition(name, kind, role, worse, 0.05, Sides.of(sides), SpendingFunction.parse(spending), null,
                new Horizon.MaxPerArm(maxPerArm), null, action);
    }

    /**
     * Looks once a minute; each look adds {@code perLook} events per arm (times the arm's share, 1
     * unless given), drawn from the arm's parameters.
     */
    private static ExperimentView run(ExperimentDefinition d, Map<String, double[]> arms, int looks, int perLook,
                                      Map<String, Double> share, long stream) {
        ExperimentMonitor monitor = new ExperimentMonitor(d);
        SplittableRandom random = new SplittableRandom(stream);
        Map<String, long[]> rates = new HashMap<>();
        Map<String, RunningMoments> means = new HashMap<>();
        Map<String, long[]> units = new HashMap<>();
        Map<String, Long> exposures = new HashMap<>();
        for (int look = 1; look <= looks; look++) {
            for (Map.Entry<String, double[]> arm : arms.entrySet()) {
                int n = (int) Math.round(perLook * share.getOrDefault(arm.getKey(), 1.0));
                double[] p = arm.getValue();
                long[] r = rates.computeIfAbsent(arm.getKey(), a -> new long[2]);
                long[] u = units.computeIfAbsent(arm.getKey(), a -> new long[2]);
                RunningMoments m = means.computeIfAbsent(arm.getKey(), a -> new RunningMoments());
                for (int i = 0; i < n; i++) {
                    r[0] += random.nextDouble() < p[0] ? 1 : 0;
                    u[0] += random.nextDouble() < p[2] ? 1 : 0;
                    m.accept(p[1] * (0.4 - Math.log(1 - random.nextDouble()) * 0.6));
                }
                r[1] += n;
                u[1] += n;
                exposures.merge(arm.getKey(), (long) n, Long::sum);
            }
            Map<String, Map<String, Tally>> tallies = new HashMap<>();
            for (MetricDefinition metric : d.metrics()) {
                Map<String, Tally> byArm = new HashMap<>();
                for (String arm : arms.keySet()) {
                    byArm.put(arm, switch (metric.kind()) {
                        case EVENT_RATE -> new Tally.Rate(new ProportionCounts(rates.get(arm)[0], rates.get(arm)[1]));
                        case UNIT_RATE -> new Tally.Rate(new ProportionCounts(units.get(arm)[0], units.get(arm)[1]));
                        default -> new Tally.Mean(means.get(arm).snapshot());
                    });
                }
                tallies.put(metric.name(), byArm);
            }
            monitor.look(T0.plus(Duration.ofMinutes(look)), Map.copyOf(exposures), tallies);
        }
        return monitor.view();
    }
}
