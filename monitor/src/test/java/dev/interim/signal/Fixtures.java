package dev.interim.signal;

import dev.interim.experiment.RunMode;

import dev.interim.experiment.Sides;

import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.Horizon;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.MetricKind;
import dev.interim.experiment.Role;
import dev.interim.experiment.StopAction;
import dev.interim.experiment.Tally;
import dev.interim.experiment.Worse;
import dev.interim.sequential.SpendingFunction;
import dev.interim.stats.ProportionCounts;
import java.time.Duration;
import java.time.Instant;
import java.util.HashMap;
import java.util.List;
import java.util.Map;

/** Invented experiments and records for the signal tests. */
final class Fixtures {
    static final Instant T0 = Instant.parse("2026-03-01T00:00:00Z");

    private Fixtures() {}

    /** An error-rate guardrail, one-sided at α = 0.05, O'Brien–Fleming-type spending. */
    static MetricDefinition failedPayments(StopAction action) {
        return new MetricDefinition("failed_payments", MetricKind.EVENT_RATE, Role.GUARDRAIL, Worse.HIGHER, 0.05, Sides.ONE,
                SpendingFunction.parse("obf"), null, new Horizon.MaxPerArm(20_000), null, action);
    }

    static ExperimentDefinition basketRollout(List<String> treatments, boolean dryRun, MetricDefinition... metrics) {
        return new ExperimentDefinition("basket-v7", "current", treatments, null, Duration.ofMinutes(1), 50,
                RunMode.dryRun(dryRun), 0.001, List.of(metrics));
    }

    /** Cumulative counts per arm as a metric → arm → tally map, fixed numbers (no randomness). */
    static Map<String, Map<String, Tally>> rates(String metric, Map<String, long[]> successesAndTrials) {
        Map<String, Tally> byArm = new HashMap<>();
        successesAndTrials.forEach((arm, c) -> byArm.put(arm, new Tally.Rate(new ProportionCounts(c[0], c[1]))));
        return Map.of(metric, byArm);
    }

    static DecisionRecord stopForHarm(String id, boolean dryRun) {
        return new DecisionRecord("basket-v7", "candidate", "failed_payments", "guardrail", "stop-harm", "continue",
                4, 0.375, 3.912, 3.471, 0.00211, 0.0184, 0.0071, Double.POSITIVE_INFINITY, 0.95,
                Instant.parse("2026-03-01T00:04:00Z"), id, dryRun, "kill");
    }
}
