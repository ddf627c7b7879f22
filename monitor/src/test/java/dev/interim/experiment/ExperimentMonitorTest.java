package dev.interim.experiment;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import dev.interim.sequential.SpendingFunction;
import dev.interim.stats.Alternative;
import dev.interim.stats.Moments;
import dev.interim.stats.ProportionCounts;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * The decision state machine with time passed in. Data are drawn from seeded generators; the
 * statistical claims (false stops at about α, harm found) are checked against binomial bands or
 * against the published boundaries, never against numbers produced by this code.
 */
class ExperimentMonitorTest {
    private static final Instant T0 = Instant.parse("2026-03-01T00:00:00Z");

    static MetricDefinition errorRate(long maxPerArm, StopAction action) {
        return new MetricDefinition("errors", MetricKind.EVENT_RATE, Role.GUARDRAIL, Worse.HIGHER, 0.05, Sides.ONE,
                SpendingFunction.parse("obf"), null, new Horizon.MaxPerArm(maxPerArm), null, action);
    }

    static ExperimentDefinition rollout(List<String> treatments, MetricDefinition... metrics) {
        return new ExperimentDefinition("checkout-canary", "stable", treatments, null, Duration.ofMinutes(1), 50,
                RunMode.LIVE, 0.001, List.of(metrics));
    }

    /** Cumulative error counts per arm, drawn look by look. */
    static final class Traffic {
        final Map<String, long[]> counts = new HashMap<>();
        final SplittableRandom random;

        Traffic(long stream) {
            random = new SplittableRandom(stream);
        }

        void add(String arm, int events, double rate) {
            long[] c = counts.computeIfAbsent(arm, a -> new long[2]);
            for (int i = 0; i < events; i++) {
                if (random.nextDouble() < rate) {
                    c[0]++;
                }
            }
            c[1] += events;
        }

        Map<String, Map<String, Tally>> tallies(String metric) {
            Map<String, Tally> byArm = new HashMap<>();
            counts.forEach((arm, c) -> byArm.put(arm, new Tally.Rate(new ProportionCounts(c[0], c[1]))));
            return Map.of(metric, byArm);
        }

        Map<String, Long> exposures() {
            Map<String, Long> e = new HashMap<>();
            counts.forEach((arm, c) -> e.put(arm, c[1]));
            return e;
        }
    }

    @Test
    void aHarmfulArmIsStoppedForHarmAndStaysStopped() {
        ExperimentMonitor monitor = new ExperimentMonitor(rollout(List.of("candidate"), errorRate(20_000, StopAction.KILL)));
        Traffic traffic = new Traffic(11);
        List<DecisionRecord> records = new ArrayList<>();
        Instant at = T0;
        for (int look = 0; look < 40; look++) {
            traffic.add("stable", 500, 0.01);
            traffic.add("candidate", 500, 0.03);      // three times the error rate
            at = at.plus(Duration.ofMinutes(1));
            records.addAll(monitor.look(at, traffic.exposures(), traffic.tallies("errors")).decisions());
        }
        assertThat(records).hasSize(1);
        DecisionRecord stop = records.get(0);
        assertThat(stop.decision()).isEqualTo("stop-harm");
        assertThat(stop.previous()).isEqualTo("continue");
        assertThat(stop.statistic()).isGreaterThanOrEqualTo(stop.boundary());
        assertThat(stop.estimate()).isPositive();
        assertThat(stop.intervalLower()).isPositive();           // the one-sided RCI excludes no harm
        assertThat(stop.intervalUpper()).isEqualTo(Double.POSITIVE_INFINITY);
        assertThat(stop.killRequested()).isTrue();
        assertThat(stop.decisionId()).isEqualTo(DecisionRecord.id("", "checkout-canary", "candidate", "errors",
                Decision.STOP_HARM, stop.look()));
        assertThat(monitor.comparison("errors", "candidate").decision()).isEqualTo(Decision.STOP_HARM);
        // Absorbing: more data, even reassuring data, changes nothing.
        traffic.add("candidate", 50_000, 0.0);
        assertThat(monitor.look(at.plusSeconds(60), traffic.exposures(), traffic.tallies("errors")).results()).isEmpty();
        assertThat(monitor.comparison("errors", "candidate").decision()).isEqualTo(Decision.STOP_HARM);
    }

    /**
     * A healthy arm is stopped falsely in about α of experiments, however many looks: 400 seeded
     * null experiments of 20 looks each. The one-sided guardrail at α = 0.05 has a false-stop rate of
     * at most 0.05 (a little less with discrete data); the check is 0.05 + 4 binomial standard errors
     * from above, and more than 0 from below so that the test can tell "never stops" from "stops
     * at α". Without boundaries, 20 looks at 0.05 one-sided would stop about 25% of them
     * (Armitage, McPherson & Rowe 1969, from memory).
     */
    @Test
    void aHealthyArmIsStoppedFalselyAtMostAboutAlpha() {
        int runs = 400;
        int falseStops = 0;
        for (int run = 0; run < runs; run++) {
            ExperimentMonitor monitor = new ExperimentMonitor(rollout(List.of("candidate"), errorRate(4_000, StopAction.NONE)));
            Traffic traffic = new Traffic(1000 + run);
            Instant at = T0;
            for (int look = 0; look < 20; look++) {
                traffic.add("stable", 200, 0.05);
                traffic.add("candidate", 200, 0.05);
                at = at.plus(Duration.ofMinutes(1));
                monitor.look(at, traffic.exposures(), traffic.tallies("errors"));
            }
            if (monitor.comparison("errors", "candidate").decision() == Decision.STOP_HARM) {
                falseStops++;
            }
        }
        double rate = (double) falseStops / runs;
        assertThat(rate).isLessThanOrEqualTo(0.05 + 4 * Math.sqrt(0.05 * 0.95 / runs)).isGreaterThan(0);
    }

    @Test
    void aBrokenSplitHoldsEveryComparisonAndItsRecoveryResumesThem() {
        ExperimentMonitor monitor = new ExperimentMonitor(rollout(List.of("candidate"), errorRate(20_000, StopAction.KILL)));
        Traffic traffic = new Traffic(3);
        traffic.add("stable", 1000, 0.01);
        traffic.add("candidate", 700, 0.01);          // 50/50 expected: p far below 0.001
        LookReport held = monitor.look(T0, traffic.exposures(), traffic.tallies("errors"));
        assertThat(held.sampleRatio().mismatch()).isTrue();
        assertThat(held.sampleRatio().pValue()).isLessThan(0.001);
        assertThat(held.decisions()).singleElement().satisfies(r -> {
            assertThat(r.decision()).isEqualTo("held");
            assertThat(r.previous()).isEqualTo("continue");
        });
        assertThat(held.results()).isEmpty();
        traffic.add("candidate", 300, 0.01);          // now 1000 : 1000
        LookReport resumed = monitor.look(T0.plusSeconds(60), traffic.exposures(), traffic.tallies("errors"));
        assertThat(resumed.sampleRatio().mismatch()).isFalse();
        assertThat(resumed.decisions()).extracting(DecisionRecord::decision).containsExactly("continue");
        assertThat(resumed.results()).hasSize(1);
    }

    @Test
    void anOperatorHoldSuspendsAndAFinalDecisionIsNeverHeld() {
        ExperimentMonitor monitor = new ExperimentMonitor(rollout(List.of("a", "b"), errorRate(20_000, StopAction.NONE)));
        List<DecisionRecord> held = monitor.hold(T0, "incident 42");
        assertThat(held).hasSize(2).allSatisfy(r -> assertThat(r.decision()).isEqualTo("held"));
        assertThat(monitor.hold(T0, "again")).isEmpty();
        monitor.comparison("errors", "a").restore(List.of(), Decision.STOP_HARM);
        List<DecisionRecord> resumed = monitor.resume(T0.plusSeconds(5));
        assertThat(resumed).singleElement().satisfies(r -> assertThat(r.arm()).isEqualTo("b"));
        assertThat(monitor.comparison("errors", "a").decision()).isEqualTo(Decision.STOP_HARM);
    }

    @Test
    void lookingIsDueEveryInterval() {
        ExperimentMonitor monitor = new ExperimentMonitor(rollout(List.of("candidate"), errorRate(20_000, StopAction.NONE)));
        assertThat(monitor.due(T0)).isTrue();
        monitor.look(T0, Map.of(), Map.of());
        assertThat(monitor.due(T0.plusSeconds(59))).isFalse();
        assertThat(monitor.due(T0.plusSeconds(60))).isTrue();
    }

    /**
     * Several treatments share the metric's α equally (Bonferroni): with two candidates each
     * comparison runs at 0.025, and its first O'Brien–Fleming-type boundary at information 0.2 is
     * the published 4.877 for one-sided 0.025 (Lan & DeMets 1983; from memory).
     */
    @Test
    void treatmentsShareAlphaByBonferroni() {
        ExperimentDefinition two = rollout(List.of("a", "b"), errorRate(1000, StopAction.NONE));
        ExperimentMonitor monitor = new ExperimentMonitor(two);
        Comparison a = monitor.comparison("errors", "a");
        assertThat(a.design().alpha()).isEqualTo(0.025);
        assertThat(a.design().alternative()).isEqualTo(Alternative.GREATER);
        assertThat(a.design().looksAt(0.2)[0].upper()).isCloseTo(4.877, within(0.001));
    }

    @Test
    void restoringTheFractionsRebuildsTheSpentAlpha() {
        ExperimentMonitor monitor = new ExperimentMonitor(rollout(List.of("candidate"), errorRate(4_000, StopAction.NONE)));
        Traffic traffic = new Traffic(5);
        for (int look = 0; look < 6; look++) {
            traffic.add("stable", 300, 0.05);
            traffic.add("candidate", 300, 0.05);
            monitor.look(T0.plusSeconds(60L * look), traffic.exposures(), traffic.tallies("errors"));
        }
        Comparison live = monitor.comparison("errors", "candidate");
        ExperimentMonitor restarted = new ExperimentMonitor(monitor.definition());
        Comparison restored = restarted.comparison("errors", "candidate");
        restored.restore(live.fractions(), live.decision());
        traffic.add("stable", 300, 0.05);
        traffic.add("candidate", 300, 0.05);
        LookResult a = monitor.look(T0.plusSeconds(600), traffic.exposures(), traffic.tallies("errors")).results().get(0);
        LookResult b = restarted.look(T0.plusSeconds(600), traffic.exposures(), traffic.tallies("errors")).results().get(0);
        assertThat(b.look()).isEqualTo(a.look());
    }

    /**
     * A one-sample comparison against a configured baseline (single-arm rollouts): latency with a
     * known service-level mean of 120 ms. A candidate at 150 ms is stopped for harm.
     */
    @Test
    void aSingleArmRolloutIsComparedWithItsBaseline() {
        MetricDefinition latency = new MetricDefinition("latency_ms", MetricKind.EVENT_MEAN, Role.GUARDRAIL, Worse.HIGHER,
                0.05, Sides.ONE, SpendingFunction.parse("pocock"), null, new Horizon.MaxPerArm(5000), 120.0, StopAction.PAGE);
        ExperimentMonitor monitor = new ExperimentMonitor(rollout(List.of("candidate"), latency));
        SplittableRandom random = new SplittableRandom(8);
        dev.interim.stats.RunningMoments m = new dev.interim.stats.RunningMoments();
        Decision decision = Decision.CONTINUE;
        for (int look = 0; look < 20 && decision == Decision.CONTINUE; look++) {
            for (int i = 0; i < 100; i++) {
                m.accept(150 + 40 * dev.interim.reference.Draws.gaussian(random));
            }
            Map<String, Map<String, Tally>> tallies = Map.of("latency_ms", Map.of("candidate", new Tally.Mean(m.snapshot())));
            LookReport report = monitor.look(T0.plusSeconds(60L * look), Map.of("candidate", m.count()), tallies);
            assertThat(report.sampleRatio().mismatch()).as("no split to check without control traffic").isFalse();
            decision = monitor.comparison("latency_ms", "candidate").decision();
        }
        assertThat(decision).isEqualTo(Decision.STOP_HARM);
    }

    @Test
    void definitionsRefuseImpossibleSettingsNamingThem() {
        assertThatThrownBy(() -> rollout(List.of("stable"), errorRate(100, StopAction.NONE)))
                .hasMessageContaining("listed twice");
        assertThatThrownBy(() -> new MetricDefinition("errors", MetricKind.EVENT_RATE, Role.GUARDRAIL, Worse.HIGHER, 0.05, Sides.TWO,
                SpendingFunction.parse("obf"), null, new Horizon.MaxPerArm(100), null, StopAction.NONE))
                .hasMessageContaining("sides must be 1 for a guardrail");
        assertThatThrownBy(() -> new Horizon.MaxPerArm(1)).hasMessageContaining("max_per_arm");
        assertThatThrownBy(() -> new MetricDefinition("errors", MetricKind.EVENT_RATE, Role.GUARDRAIL, Worse.HIGHER, 0.05, Sides.ONE,
                SpendingFunction.parse("obf"), null, new Horizon.Powered(0.8, -0.01, 10), null, StopAction.NONE))
                .hasMessageContaining("harmful way");
        assertThatThrownBy(() -> MetricKind.parse("p99")).hasMessageContaining("event-rate");
        Tally.Mean empty = new Tally.Mean(Moments.EMPTY);
        assertThat(empty.count()).isZero();
    }
}
