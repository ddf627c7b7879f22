package dev.interim.signal;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import dev.interim.experiment.Comparison;
import dev.interim.experiment.Decision;
import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.LookReport;
import dev.interim.experiment.LookResult;
import dev.interim.experiment.StopAction;
import dev.interim.experiment.Tally;
import java.time.Duration;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

/**
 * The meters of a monitor that has looked, read back from the Prometheus text. Counts are the
 * numbers fed in; the statistics are those of the monitor's own last look (the experiment layer is
 * the source here, the meters only carry it).
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class MetersTest {
    private static final String EXPERIMENT = "basket-v7";
    private static final String[] CANDIDATE = {"experiment", EXPERIMENT, "arm", "candidate", "metric", "failed_payments"};
    private static final String[] IDLE = {"experiment", EXPERIMENT, "arm", "idle", "metric", "failed_payments"};

    /**
     * Three arms: control, a candidate with three times the control's failure rate, and an arm with
     * exposures but no metric data yet (it never looks). Looks until the candidate is stopped.
     */
    static int lookUntilStopped(ExperimentMonitor monitor, Meters meters) {
        int looks = 0;
        for (int look = 1; look <= 30; look++) {
            long n = 1000L * look;
            Map<String, Map<String, Tally>> tallies = Fixtures.rates("failed_payments",
                    Map.of("current", new long[] {n / 100, n}, "candidate", new long[] {3 * n / 100, n}));
            LookReport report = monitor.look(Fixtures.T0.plusSeconds(60L * look),
                    Map.of("current", n, "candidate", n, "idle", n), tallies);
            meters.looked(report, tallies, Duration.ofMillis(250));
            report.decisions().forEach(meters::decided);
            looks++;
            if (monitor.comparison("failed_payments", "candidate").decision() == Decision.STOP_HARM) {
                break;
            }
        }
        return looks;
    }

    static ExperimentMonitor killOnHarm() {
        return new ExperimentMonitor(Fixtures.basketRollout(List.of("candidate", "idle"), false,
                Fixtures.failedPayments(StopAction.KILL)));
    }

    @Test
    void aStoppedComparisonShowsItsLastLook() {
        Meters meters = new Meters();
        ExperimentMonitor monitor = killOnHarm();
        meters.register(monitor);
        int looks = lookUntilStopped(monitor, meters);
        assertThat(looks).isBetween(2, 29);
        Comparison c = monitor.comparison("failed_payments", "candidate");
        LookResult last = c.last();
        Scrape s = Scrape.of(meters.scrape());

        assertThat(s.value("interim_decision", CANDIDATE)).isEqualTo(1);          // stop-harm
        assertThat(s.one("interim_decision", CANDIDATE).labels()).containsEntry("role", "guardrail").containsEntry("action", "kill");
        assertThat(s.value("interim_estimate", CANDIDATE)).isCloseTo(last.estimate().effect(), within(1e-12));
        assertThat(s.value("interim_statistic", CANDIDATE)).isCloseTo(last.estimate().z(), within(1e-12));
        assertThat(s.value("interim_boundary", add(CANDIDATE, "side", "upper"))).isCloseTo(last.look().upper(), within(1e-12));
        assertThat(s.value("interim_statistic", CANDIDATE)).isGreaterThanOrEqualTo(s.value("interim_boundary", add(CANDIDATE, "side", "upper")));
        assertThat(s.value("interim_alpha_spent", CANDIDATE)).isCloseTo(last.look().alphaSpent(), within(1e-15)).isPositive();
        assertThat(s.value("interim_information_fraction", CANDIDATE)).isCloseTo(last.look().fraction(), within(1e-12));
        assertThat(s.value("interim_interval_lower", CANDIDATE)).isCloseTo(last.interval().lower(), within(1e-12));
        assertThat(s.value("interim_last_look", CANDIDATE)).isEqualTo(looks);
        // A one-sided guardrail without futility has no lower boundary, and its interval no upper end.
        assertThat(s.one("interim_boundary", add(CANDIDATE, "side", "lower")).value()).isEqualTo("-Inf");
        assertThat(s.one("interim_interval_upper", CANDIDATE).value()).isEqualTo("+Inf");

        long n = 1000L * looks;
        assertThat(s.value("interim_observations", CANDIDATE)).isEqualTo(n);
        assertThat(s.value("interim_observations", "experiment", EXPERIMENT, "arm", "current", "metric", "failed_payments")).isEqualTo(n);
        assertThat(s.value("interim_looks_total", "experiment", EXPERIMENT)).isEqualTo(looks);
        assertThat(s.value("interim_look_duration_seconds_count", "experiment", EXPERIMENT)).isEqualTo(looks);
        assertThat(s.value("interim_look_duration_seconds_sum", "experiment", EXPERIMENT)).isCloseTo(0.25 * looks, within(1e-9));
        assertThat(s.value("interim_decisions_total", "experiment", EXPERIMENT, "decision", "stop-harm")).isEqualTo(1);

        assertThat(s.value("interim_paging", "experiment", EXPERIMENT)).isEqualTo(1);
        assertThat(s.value("interim_held", "experiment", EXPERIMENT)).isZero();
        assertThat(s.value("interim_sample_ratio_mismatch", "experiment", EXPERIMENT)).isZero();
        assertThat(s.value("interim_sample_ratio_p_value", "experiment", EXPERIMENT)).isEqualTo(monitor.sampleRatio().pValue());
        assertThat(s.value("interim_dry_run", "experiment", EXPERIMENT)).isZero();
    }

    /** Before its first look a comparison has no statistics: NaN, and no α spent. */
    @Test
    void aComparisonThatHasNotLookedShowsNaN() {
        Meters meters = new Meters();
        ExperimentMonitor monitor = killOnHarm();
        meters.register(monitor);
        lookUntilStopped(monitor, meters);
        Scrape s = Scrape.of(meters.scrape());
        assertThat(s.value("interim_decision", IDLE)).isZero();
        for (String name : List.of("interim_estimate", "interim_statistic", "interim_information_fraction",
                "interim_interval_lower", "interim_interval_upper")) {
            assertThat(s.one(name, IDLE).value()).as(name).isEqualTo("NaN");
        }
        assertThat(s.find("interim_boundary", IDLE)).hasSize(2).allSatisfy(x -> assertThat(x.value()).isEqualTo("NaN"));
        assertThat(s.value("interim_alpha_spent", IDLE)).isZero();
        assertThat(s.value("interim_last_look", IDLE)).isZero();
        assertThat(s.find("interim_observations", IDLE)).isEmpty();
    }

    @Test
    void pagingNeedsAStopForHarmWithAPageOrKillAction() {
        Meters meters = new Meters();
        ExperimentMonitor recordOnly = new ExperimentMonitor(Fixtures.basketRollout(List.of("candidate", "idle"), false,
                Fixtures.failedPayments(StopAction.NONE)));
        meters.register(recordOnly);
        lookUntilStopped(recordOnly, meters);
        Scrape s = Scrape.of(meters.scrape());
        assertThat(s.value("interim_decision", CANDIDATE)).isEqualTo(1);
        assertThat(s.value("interim_paging", "experiment", EXPERIMENT)).isZero();
    }

    @Test
    void aHeldExperimentShowsItsHold() {
        Meters meters = new Meters();
        ExperimentMonitor monitor = killOnHarm();
        meters.register(monitor);
        List<DecisionRecord> held = monitor.hold(Fixtures.T0, "incident");
        held.forEach(meters::decided);
        Scrape s = Scrape.of(meters.scrape());
        assertThat(s.value("interim_held", "experiment", EXPERIMENT)).isEqualTo(1);
        assertThat(s.value("interim_decision", CANDIDATE)).isEqualTo(Decision.HELD.code()).isEqualTo(5);
        assertThat(s.value("interim_decisions_total", "experiment", EXPERIMENT, "decision", "held")).isEqualTo(2);
        assertThat(s.value("interim_sample_ratio_p_value", "experiment", EXPERIMENT)).isEqualTo(1);
    }

    @Test
    void eventCountersStartAtZeroAndCountByReason() {
        Meters meters = new Meters();
        meters.register(killOnHarm());
        Scrape before = Scrape.of(meters.scrape());
        assertThat(before.value("interim_events_accepted_total", "experiment", EXPERIMENT)).isZero();
        assertThat(before.value("interim_looks_total", "experiment", EXPERIMENT)).isZero();

        meters.eventsAccepted(EXPERIMENT, 1200);
        meters.eventsAccepted(EXPERIMENT, 34);
        meters.eventRejected("not-json");
        meters.eventRejected("not-json");
        meters.eventRejected("unknown-arm");
        meters.webhook(new DeliveryResult("x", DeliveryResult.Outcome.DELIVERED, 1, 200, null));
        meters.webhook(new DeliveryResult("y", DeliveryResult.Outcome.DRY_RUN, 0, 0, null));
        Scrape s = Scrape.of(meters.scrape());
        assertThat(s.value("interim_events_accepted_total", "experiment", EXPERIMENT)).isEqualTo(1234);
        assertThat(s.value("interim_events_rejected_total", "reason", "not-json")).isEqualTo(2);
        assertThat(s.value("interim_events_rejected_total", "reason", "unknown-arm")).isEqualTo(1);
        assertThat(s.value("interim_webhook_deliveries_total", "outcome", "delivered")).isEqualTo(1);
        assertThat(s.value("interim_webhook_deliveries_total", "outcome", "dry_run")).isEqualTo(1);
        assertThatThrownBy(() -> meters.eventRejected("Field 'amount' is missing")).hasMessageContaining("fixed token");
    }

    /** Gauges hold their monitor: one registered and then forgotten by the caller still reads. */
    @Test
    void gaugesOutliveTheCallersReference() {
        Meters meters = new Meters();
        meters.register(killOnHarm());
        for (int i = 0; i < 3; i++) {
            System.gc();
        }
        Scrape s = Scrape.of(meters.scrape());
        assertThat(s.value("interim_decision", CANDIDATE)).isZero();
        assertThat(s.value("interim_held", "experiment", EXPERIMENT)).isZero();
    }

    @Test
    void registeringAgainReplacesAndRemovingDeletes() {
        Meters meters = new Meters();
        ExperimentMonitor first = killOnHarm();
        meters.register(first);
        lookUntilStopped(first, meters);
        meters.register(killOnHarm());   // a restart: a fresh monitor for the same experiment
        Scrape s = Scrape.of(meters.scrape());
        assertThat(s.value("interim_decision", CANDIDATE)).isZero();
        assertThat(s.value("interim_looks_total", "experiment", EXPERIMENT)).isZero();
        meters.remove(EXPERIMENT);
        assertThat(Scrape.of(meters.scrape()).samples()).noneMatch(x -> EXPERIMENT.equals(x.labels().get("experiment")));
    }

    /**
     * Regression (issue 10, defect 4): the series of an experiment another instance decides used to
     * vanish. They stay, with interim_owned 0 and the state gauges NaN (never a stale value), and come
     * back to the owner's values when this instance owns the experiment again; counters keep counting.
     */
    @Test
    void anExperimentNotOwnedHereKeepsItsSeriesWithNaNAndOwnedZero() {
        Meters meters = new Meters();
        ExperimentMonitor first = killOnHarm();
        meters.expect(first.definition());
        Scrape before = Scrape.of(meters.scrape());
        assertThat(before.value("interim_owned", "experiment", EXPERIMENT)).isZero();
        assertThat(before.value("interim_assigned")).isZero();
        assertThat(before.one("interim_decision", CANDIDATE).value()).isEqualTo("NaN");
        assertThat(before.one("interim_paging", "experiment", EXPERIMENT).value()).isEqualTo("NaN");
        assertThat(before.one("interim_held", "experiment", EXPERIMENT).value()).isEqualTo("NaN");
        assertThat(before.value("interim_dry_run", "experiment", EXPERIMENT)).isZero();   // from the configuration
        assertThat(before.value("interim_looks_total", "experiment", EXPERIMENT)).isZero();

        meters.assignment(() -> true);
        meters.own(first);
        int looks = lookUntilStopped(first, meters);
        meters.eventsAccepted(EXPERIMENT, 500);
        Scrape owned = Scrape.of(meters.scrape());
        assertThat(owned.value("interim_assigned")).isEqualTo(1);
        assertThat(owned.value("interim_owned", "experiment", EXPERIMENT)).isEqualTo(1);
        assertThat(owned.value("interim_decision", CANDIDATE)).isEqualTo(1);
        assertThat(owned.value("interim_paging", "experiment", EXPERIMENT)).isEqualTo(1);

        meters.disown(EXPERIMENT);   // a rebalance gave the experiment to another instance
        Scrape elsewhere = Scrape.of(meters.scrape());
        assertThat(elsewhere.value("interim_owned", "experiment", EXPERIMENT)).isZero();
        for (String name : List.of("interim_decision", "interim_estimate", "interim_statistic", "interim_alpha_spent",
                "interim_last_look", "interim_observations")) {
            assertThat(elsewhere.one(name, CANDIDATE).value()).as(name).isEqualTo("NaN");
        }
        assertThat(elsewhere.one("interim_paging", "experiment", EXPERIMENT).value()).isEqualTo("NaN");
        assertThat(elsewhere.value("interim_looks_total", "experiment", EXPERIMENT)).isEqualTo(looks);
        assertThat(elsewhere.value("interim_events_accepted_total", "experiment", EXPERIMENT)).isEqualTo(500);

        ExperimentMonitor again = killOnHarm();   // owned again, restored afresh: its own values, counters kept
        meters.own(again);
        Scrape back = Scrape.of(meters.scrape());
        assertThat(back.value("interim_owned", "experiment", EXPERIMENT)).isEqualTo(1);
        assertThat(back.value("interim_decision", CANDIDATE)).isZero();
        assertThat(back.value("interim_paging", "experiment", EXPERIMENT)).isZero();
        assertThat(back.value("interim_looks_total", "experiment", EXPERIMENT)).isEqualTo(looks);
    }

    private static String[] add(String[] labels, String key, String value) {
        String[] more = java.util.Arrays.copyOf(labels, labels.length + 2);
        more[labels.length] = key;
        more[labels.length + 1] = value;
        return more;
    }
}
