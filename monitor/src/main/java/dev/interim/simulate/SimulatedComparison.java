package dev.interim.simulate;

import dev.interim.experiment.Comparison;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.Horizon;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.Worse;
import dev.interim.sequential.Fractions;
import dev.interim.sequential.GroupSequentialDesign;
import dev.interim.sequential.Look;
import dev.interim.sequential.Planning;
import dev.interim.sequential.SequentialMonitor;
import dev.interim.stats.Alternative;
import dev.interim.text.Numbers;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.function.Predicate;
import org.apache.commons.statistics.distribution.NormalDistribution;

/**
 * The comparison one simulation runs for an experiment × metric: the first treatment against
 * control, with exactly the design the daemon builds for it (the metric's α shared over the
 * treatments by Bonferroni, the direction from role, worse and sides, a powered horizon's futility
 * aimed at its drift), and its looks at the simulated information fractions. Every treatment of an
 * experiment has the same design, so one stands for all.
 *
 * <p>The looks come from one {@link SequentialMonitor} fed the fractions in order. Boundaries depend
 * on the fractions only, never on the data, so these looks are exactly those a fresh monitor would
 * give in every run; they are computed once and shared.
 *
 * @param experiment the experiment id
 * @param arm the treatment arm simulated (the first)
 * @param treatments the number of treatment arms (the Bonferroni divisor)
 * @param metric the metric and its settings
 * @param design the group-sequential design of one treatment-versus-control comparison
 * @param driftPerUnit for a powered horizon, the drift of an effect of 1 in the metric's units,
 *                     √I_max = η_plan/|δ_plan|; NaN for a maximum per arm (the variance is unknown)
 */
public record SimulatedComparison(String experiment, String arm, int treatments, MetricDefinition metric,
                                  GroupSequentialDesign design, double[] fractions, Look[] looks,
                                  double driftPerUnit) {

    /** Power of the reference drift for horizons without an effect: z_{α per side} + z_{0.90}. */
    static final double REFERENCE_POWER = 0.90;

    public SimulatedComparison {
        fractions = fractions.clone();
        looks = looks.clone();
        if (fractions.length != looks.length) {
            throw new IllegalArgumentException("one look per fraction: " + fractions.length + " fractions, "
                    + looks.length + " looks");
        }
    }

    /**
     * The comparisons of one experiment, one per metric accepted by {@code metrics}, in
     * configuration order, looked at at {@code fractions} (increasing, the last 1).
     */
    public static List<SimulatedComparison> of(ExperimentDefinition experiment, Predicate<String> metrics,
                                               double[] fractions) {
        validate(fractions);
        ExperimentMonitor monitor = new ExperimentMonitor(experiment);
        String arm = experiment.treatments().get(0);
        List<SimulatedComparison> all = new ArrayList<>();
        for (MetricDefinition metric : experiment.metrics()) {
            if (!metrics.test(metric.name())) {
                continue;
            }
            requireQuantileCanLook(experiment, metric);
            Comparison comparison = monitor.comparison(metric.name(), arm);
            GroupSequentialDesign design = comparison.design();
            SequentialMonitor looking = design.monitor();
            Look[] looks = Arrays.stream(fractions).mapToObj(looking::lookAt).toArray(Look[]::new);
            all.add(new SimulatedComparison(experiment.id(), arm, experiment.treatments().size(), metric, design,
                    fractions, looks, driftPerUnit(comparison)));
        }
        return all;
    }

    /**
     * Refuses a quantile metric whose {@code max_per_arm} ends the design before the quantile can be
     * estimated ({@link MetricDefinition#quantileEventsNeeded}): the daemon would never look at it, and
     * no drift describes that.
     */
    static void requireQuantileCanLook(ExperimentDefinition experiment, MetricDefinition metric) {
        if (metric.quantile() != null && metric.horizon() instanceof Horizon.MaxPerArm max) {
            long needed = MetricDefinition.quantileEventsNeeded(metric.quantile());
            if (max.perArm() < needed) {
                throw new IllegalArgumentException("metric '" + metric.name() + "' of experiment '" + experiment.id() + "': its "
                        + Numbers.percentile(metric.quantile()) + " needs " + needed + " events per arm before its first look, "
                        + "more than its max_per_arm " + max.perArm() + ", so the daemon would never look at it: raise max_per_arm, or "
                        + "leave the metric out (--metric)");
            }
        }
    }

    /** Refuses fractions that do not increase or do not end at the planned maximum, 1. */
    public static void validate(double[] fractions) {
        Fractions.validate(fractions);
        double last = fractions[fractions.length - 1];
        if (last != 1.0) {
            throw new IllegalArgumentException("the last look must be at the planned maximum, fraction 1, got " + last);
        }
    }

    /**
     * √I_max of a powered horizon: the daemon plans I_max = (η/δ)² with η the drift at which the
     * design, at its planned looks, has the configured power (see {@code Comparison}). For a relative
     * effect δ is a share of control's level, and so are effects "in the metric's units" here: the
     * drift is proportional to the relative effect whatever that level.
     */
    private static double driftPerUnit(Comparison comparison) {
        if (comparison.metric().horizon() instanceof Horizon.Powered p) {
            return comparison.plannedDrift() / Math.abs(p.effect());
        }
        return Double.NaN;
    }

    @Override
    public double[] fractions() {
        return fractions.clone();
    }

    @Override
    public Look[] looks() {
        return looks.clone();
    }

    public int lookCount() {
        return looks.length;
    }

    /** The α of this comparison: the metric's α over the number of treatments. */
    public double alpha() {
        return design.alpha();
    }

    public Alternative alternative() {
        return design.alternative();
    }

    /** Whether effects can be given in the metric's own units (a powered horizon). */
    public boolean hasMetricUnits() {
        return !Double.isNaN(driftPerUnit);
    }

    /**
     * +1 or −1: the sign of the effect the test is there to find, treatment − control. A guardrail
     * watches for harm, a one-sided primary metric for benefit; a two-sided primary metric for
     * either, and benefit is taken as its direction.
     */
    public int watchedSign() {
        return switch (design.alternative()) {
            case GREATER -> 1;
            case LESS -> -1;
            case TWO_SIDED -> metric.worse() == Worse.HIGHER ? -1 : 1;
        };
    }

    /**
     * The drift the default effects are multiples of, signed the watched way. A powered horizon: the
     * configured effect. Otherwise the drift a single-look test at this α needs for 90% power,
     * z_{α'} + z_{0.90} with α' the α of one side (common practice; about 2.9 at α' = 0.025).
     */
    public double referenceDrift() {
        if (metric.horizon() instanceof Horizon.Powered p) {
            return p.effect() * driftPerUnit;
        }
        double perSide = design.alternative() == Alternative.TWO_SIDED ? design.alpha() / 2 : design.alpha();
        NormalDistribution normal = NormalDistribution.of(0, 1);
        return watchedSign() * (normal.inverseSurvivalProbability(perSide)
                + normal.inverseCumulativeProbability(REFERENCE_POWER));
    }

    /** Whether an effect of this sign harms users (worse is higher and the effect positive, or the reverse). */
    public boolean harmful(double drift) {
        return metric.worse() == Worse.HIGHER ? drift > 0 : drift < 0;
    }
}
