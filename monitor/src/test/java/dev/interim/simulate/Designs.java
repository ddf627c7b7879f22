package dev.interim.simulate;

import dev.interim.experiment.RunMode;

import dev.interim.experiment.Sides;

import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.Horizon;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.MetricKind;
import dev.interim.experiment.Role;
import dev.interim.experiment.StopAction;
import dev.interim.experiment.Worse;
import dev.interim.sequential.Fractions;
import dev.interim.sequential.SpendingFunction;
import java.time.Duration;
import java.util.List;

/** Invented experiments and metrics for the simulation tests, and their comparisons. */
final class Designs {
    private Designs() {}

    /** A primary metric (an invented "orders per visit" rate), two-sided, with a planned maximum per arm. */
    static MetricDefinition twoSided(double alpha, String spending) {
        return new MetricDefinition("orders", MetricKind.UNIT_RATE, Role.PRIMARY, Worse.LOWER, alpha, Sides.TWO,
                SpendingFunction.parse(spending), null, new Horizon.MaxPerArm(50_000), null, StopAction.NONE);
    }

    /** A guardrail (an invented "page load time") that harms when it goes {@code worse}. */
    static MetricDefinition guardrail(Worse worse, double alpha, String spending) {
        return new MetricDefinition("page-load-ms", MetricKind.EVENT_MEAN, Role.GUARDRAIL, worse, alpha, Sides.ONE,
                SpendingFunction.parse(spending), null, new Horizon.MaxPerArm(80_000), null, StopAction.PAGE);
    }

    /** A one-sided primary metric planned for {@code power} at {@code effect}, with or without futility. */
    static MetricDefinition powered(double alpha, double power, double effect, int plannedLooks, String futility) {
        return new MetricDefinition("signups", MetricKind.UNIT_RATE, Role.PRIMARY, Worse.LOWER, alpha, Sides.ONE,
                SpendingFunction.parse("obf"), futility == null ? null : SpendingFunction.parse(futility),
                new Horizon.Powered(power, effect, plannedLooks), null, StopAction.NONE);
    }

    /** An invented experiment with the given number of treatments and metrics. */
    static ExperimentDefinition experiment(int treatments, MetricDefinition... metrics) {
        List<String> arms = java.util.stream.IntStream.rangeClosed(1, treatments).mapToObj(i -> "variant-" + i).toList();
        return new ExperimentDefinition("mossglint-checkout", "baseline", arms, null, Duration.ofMinutes(1), 100, RunMode.DRY_RUN,
                0.001, List.of(metrics));
    }

    /** The one comparison of a one-metric experiment with one treatment, at K equally spaced looks. */
    static SimulatedComparison comparison(MetricDefinition metric, int looks) {
        return SimulatedComparison.of(experiment(1, metric), name -> true, Fractions.equallySpaced(looks)).get(0);
    }
}
