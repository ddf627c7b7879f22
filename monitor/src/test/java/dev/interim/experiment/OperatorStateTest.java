package dev.interim.experiment;

import static dev.interim.experiment.ExperimentMonitorTest.errorRate;
import static dev.interim.experiment.ExperimentMonitorTest.rollout;
import static org.assertj.core.api.Assertions.assertThat;

import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * What operators set survives a restart exactly, and a restart writes no record of anything that did
 * not happen: a monitor rebuilt from another's persisted state (its {@link ExperimentMonitor.OperatorState},
 * each comparison's snapshot, decision, last look and kept points) behaves as the original would.
 * Decision ids are unique per run and repeat within one.
 */
// Source: expected values come from the original monitor of each test (its own ground truth); no
// published statistical values are checked here.
class OperatorStateTest {
    private static final Instant T0 = Instant.parse("2026-04-01T00:00:00Z");

    /** The state a daemon persists, restored into a new monitor of the same definition. */
    static ExperimentMonitor restart(ExperimentMonitor before) {
        ExperimentMonitor after = new ExperimentMonitor(before.definition());
        after.restore(before.operatorState());
        for (Comparison c : before.comparisons()) {
            after.comparison(c.metric().name(), c.arm()).restore(c.snapshot(), c.decision(), c.last(), c.points());
        }
        return after;
    }

    private static ExperimentMonitor looked(String run, int looks, double candidateRate, long seed) {
        ExperimentMonitor monitor = new ExperimentMonitor(
                rollout(List.of("candidate"), errorRate(40_000, StopAction.KILL)), run);
        ExperimentMonitorTest.Traffic traffic = new ExperimentMonitorTest.Traffic(seed);
        for (int look = 1; look <= looks; look++) {
            traffic.add("stable", 400, 0.02);
            traffic.add("candidate", 400, candidateRate);
            monitor.look(T0.plusSeconds(60L * look), traffic.exposures(), traffic.tallies("errors"));
        }
        return monitor;
    }

    /** Regression: after a restart a hold came back undone, with a resume record at look 0 nobody asked for. */
    @Test
    void aRestoredHoldStaysHeldWritesNothingAndResumesFromTheLastLook() {
        ExperimentMonitor before = looked("run-1", 13, 0.02, 3);
        assertThat(before.hold(T0.plusSeconds(900), "incident 42")).hasSize(1);
        ExperimentMonitor after = restart(before);

        assertThat(after.held()).isTrue();
        ExperimentMonitorTest.Traffic more = new ExperimentMonitorTest.Traffic(4);
        more.add("stable", 10_000, 0.02);
        more.add("candidate", 10_000, 0.02);
        LookReport first = after.look(T0.plusSeconds(960), more.exposures(), more.tallies("errors"));
        assertThat(first.decisions()).as("a restart writes no record").isEmpty();
        assertThat(after.view().held()).isTrue();
        assertThat(after.view().holdReason()).isEqualTo("incident 42");

        Instant at = T0.plusSeconds(1000);
        List<DecisionRecord> resumed = after.resume(at);
        assertThat(resumed).hasSize(1);
        DecisionRecord r = resumed.get(0);
        assertThat(r.previous()).isEqualTo("held");
        assertThat(r.decision()).isEqualTo("continue");
        assertThat(r.look()).isEqualTo(13);
        // the same record, id included, as the monitor that never restarted writes
        assertThat(r).isEqualTo(before.resume(at).get(0));
    }

    @Test
    void anAcknowledgementSurvivesARestartAndIsRecordedOnce() {
        ExperimentMonitor before = looked("run-1", 40, 0.06, 5);
        assertThat(before.comparison("errors", "candidate").decision()).isEqualTo(Decision.STOP_HARM);
        Acknowledgement ack = before.acknowledge(T0.plusSeconds(5000)).orElseThrow();
        assertThat(ack.stops()).containsExactly(new Acknowledgement.Stop("candidate", "errors"));
        assertThat(before.acknowledge(T0.plusSeconds(5001))).as("already acknowledged").isEmpty();

        ExperimentMonitor after = restart(before);
        assertThat(after.acknowledged()).isTrue();
        assertThat(after.acknowledge(T0.plusSeconds(5002))).isEmpty();
        assertThat(after.comparison("errors", "candidate").decision()).isEqualTo(Decision.STOP_HARM);
    }

    @Test
    void aRestoredComparisonKeepsItsLastLookAndPoints() {
        ExperimentMonitor before = looked("run-1", 20, 0.02, 6);
        ExperimentMonitor after = restart(before);
        Comparison b = before.comparison("errors", "candidate");
        Comparison a = after.comparison("errors", "candidate");
        assertThat(a.last()).isEqualTo(b.last());
        assertThat(a.points()).isEqualTo(b.points()).hasSize(20);
        assertThat(after.view().comparisons().get(0).looks()).isEqualTo(before.view().comparisons().get(0).looks());
        assertThat(a.unsavedFrom()).as("restored points are persisted already").isEqualTo(20);
    }

    @Test
    void decisionIdsDifferBetweenRunsAndRepeatWithinOne() {
        List<String> first = stopIds(looked("run-1", 40, 0.06, 5));
        List<String> again = stopIds(looked("run-1", 40, 0.06, 5));
        List<String> other = stopIds(looked("run-2", 40, 0.06, 5));
        assertThat(first).hasSize(1);
        assertThat(again).isEqualTo(first);
        assertThat(other).hasSize(1).doesNotContainAnyElementsOf(first);
    }

    private static List<String> stopIds(ExperimentMonitor m) {
        List<String> ids = new ArrayList<>();
        // the stop is final: a force-stop adds nothing, so read the stop's id back by re-looking a twin
        Comparison c = m.comparison("errors", "candidate");
        if (c.decision() == Decision.STOP_HARM) {
            ids.add(DecisionRecord.id(m.run(), m.definition().id(), c.arm(), "errors", Decision.STOP_HARM,
                    c.last().look().number()));
        }
        return ids;
    }

    @Test
    void keptPointsNotYetPersistedAreTrackedThroughThinning() {
        ExperimentMonitor monitor = looked("run-1", 3, 0.02, 7);
        Comparison c = monitor.comparison("errors", "candidate");
        assertThat(c.unsavedFrom()).isZero();
        c.saved();
        assertThat(c.unsavedFrom()).isEqualTo(3);
        ExperimentMonitorTest.Traffic traffic = new ExperimentMonitorTest.Traffic(8);
        traffic.add("stable", 400, 0.02);
        traffic.add("candidate", 400, 0.02);
        int look = 0;
        while (c.points().size() < Comparison.KEPT_POINTS) {
            traffic.add("stable", 1, 0.02);
            traffic.add("candidate", 1, 0.02);
            monitor.look(T0.plusSeconds(60L * ++look), traffic.exposures(), traffic.tallies("errors"));
            assertThat(c.unsavedFrom()).isEqualTo(3);
        }
        c.saved();
        traffic.add("candidate", 1, 0.02);
        traffic.add("stable", 1, 0.02);
        monitor.look(T0.plusSeconds(60L * ++look), traffic.exposures(), traffic.tallies("errors"));
        assertThat(c.points().size()).isLessThan(Comparison.KEPT_POINTS);
        assertThat(c.unsavedFrom()).as("thinning moved every point").isZero();
    }
}
