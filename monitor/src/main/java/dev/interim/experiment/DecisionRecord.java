package dev.interim.experiment;

import java.nio.charset.StandardCharsets;
import java.time.Instant;
import java.util.UUID;

/**
 * One change of state of one comparison, as published on the decisions topic (JSON, keyed by
 * experiment) and sent to the kill webhook. The id is a name-based UUID of the run, experiment, arm,
 * metric, decision and look: stable, so a record written again after a restart, or delivered twice,
 * is recognisably the same decision; and unique per run, so a later run of an experiment with the
 * same id (a fresh state, next week's rerun) never repeats an id that a receiver may remember. The
 * run is created when the daemon first writes the experiment's state and kept in it; offline tools
 * (replay, simulation) name no run, so the same looks give the same ids there. {@code relative}, {@code relativeLower} and {@code relativeUpper}
 * are the relative change (treatment/control − 1) and its repeated interval at the same level, NaN
 * where undefined. {@code kind} is the metric's kind label (null when not known: records of older
 * writers), {@code quantile} the probability of an event-quantile metric (NaN for other kinds), and
 * {@code treatmentLevel} and {@code controlLevel} the arms' levels at the look (rates, means, ratios,
 * or the arms' quantiles, in the metric's units; control's is the baseline against one), NaN before
 * any look.
 */
public record DecisionRecord(String experiment, String arm, String metric, String role, String decision,
                             String previous, int look, double fraction, double statistic, double boundary,
                             double alphaSpent, double estimate, double intervalLower, double intervalUpper,
                             double intervalLevel, Instant at, String decisionId, boolean dryRun, String action,
                             double relative, double relativeLower, double relativeUpper, String kind,
                             double quantile, double treatmentLevel, double controlLevel) {

    /** A record that names no kind, quantile or levels (as records were before they had them). */
    public DecisionRecord(String experiment, String arm, String metric, String role, String decision,
                          String previous, int look, double fraction, double statistic, double boundary,
                          double alphaSpent, double estimate, double intervalLower, double intervalUpper,
                          double intervalLevel, Instant at, String decisionId, boolean dryRun, String action,
                          double relative, double relativeLower, double relativeUpper) {
        this(experiment, arm, metric, role, decision, previous, look, fraction, statistic, boundary, alphaSpent,
                estimate, intervalLower, intervalUpper, intervalLevel, at, decisionId, dryRun, action,
                relative, relativeLower, relativeUpper, null, Double.NaN, Double.NaN, Double.NaN);
    }

    /** A record without a relative change. */
    public DecisionRecord(String experiment, String arm, String metric, String role, String decision,
                          String previous, int look, double fraction, double statistic, double boundary,
                          double alphaSpent, double estimate, double intervalLower, double intervalUpper,
                          double intervalLevel, Instant at, String decisionId, boolean dryRun, String action) {
        this(experiment, arm, metric, role, decision, previous, look, fraction, statistic, boundary, alphaSpent,
                estimate, intervalLower, intervalUpper, intervalLevel, at, decisionId, dryRun, action,
                Double.NaN, Double.NaN, Double.NaN);
    }

    /** The record of a look that changed the state. */
    static DecisionRecord of(String run, LookResult r, MetricDefinition metric, RunMode mode) {
        String id = id(run, r.experiment(), r.arm(), r.metric(), r.decision(), r.look().number());
        return new DecisionRecord(r.experiment(), r.arm(), r.metric(), metric.role().name().toLowerCase(),
                r.decision().label(), r.previous().label(), r.look().number(), r.look().fraction(),
                r.estimate().z(), r.boundary(), r.look().alphaSpent(), r.estimate().effect(),
                r.interval().lower(), r.interval().upper(), r.interval().level(), r.at(), id, mode == RunMode.DRY_RUN,
                metric.action().name().toLowerCase(), relative(r), r.relativeInterval() == null ? Double.NaN
                        : r.relativeInterval().lower(), r.relativeInterval() == null ? Double.NaN : r.relativeInterval().upper(),
                metric.kind().label(), quantile(metric), r.estimate().treatmentLevel(), r.estimate().controlLevel());
    }

    private static double quantile(MetricDefinition metric) {
        return metric.quantile() == null ? Double.NaN : metric.quantile();
    }

    /** A hold or resume, which has no look of its own: the last look's numbers, or NaN before any. */
    static DecisionRecord ofStateChange(String run, String experiment, Comparison c, Decision previous, Instant at,
                                        RunMode mode, String reason) {
        LookResult last = c.last();
        int look = last == null ? 0 : last.look().number();
        String id = id(run, experiment, c.arm(), c.metric().name(), c.decision(), look) + "-" + UUID.nameUUIDFromBytes(
                (reason + "|" + at).getBytes(StandardCharsets.UTF_8)).toString().substring(0, 8);
        double nan = Double.NaN;
        return new DecisionRecord(experiment, c.arm(), c.metric().name(), c.metric().role().name().toLowerCase(),
                c.decision().label(), previous.label(), look,
                last == null ? nan : last.look().fraction(), last == null ? nan : last.estimate().z(),
                last == null ? nan : last.boundary(), last == null ? 0 : last.look().alphaSpent(),
                last == null ? nan : last.estimate().effect(), last == null ? nan : last.interval().lower(),
                last == null ? nan : last.interval().upper(), last == null ? nan : last.interval().level(),
                at, id, mode == RunMode.DRY_RUN, c.metric().action().name().toLowerCase(), last == null ? nan : relative(last),
                last == null || last.relativeInterval() == null ? nan : last.relativeInterval().lower(),
                last == null || last.relativeInterval() == null ? nan : last.relativeInterval().upper(),
                c.metric().kind().label(), quantile(c.metric()), last == null ? nan : last.estimate().treatmentLevel(),
                last == null ? nan : last.estimate().controlLevel());
    }

    private static double relative(LookResult r) {
        return r.relativeInterval() == null ? Double.NaN : r.estimate().relative();
    }

    /** The id of a decision: see the class comment. An empty run gives the ids of runs before runs had ids. */
    static String id(String run, String experiment, String arm, String metric, Decision decision, int look) {
        String key = (run.isEmpty() ? "" : run + '\u0000') + experiment + '\u0000' + arm + '\u0000' + metric + '\u0000' + decision.label() + '\u0000' + look;
        return UUID.nameUUIDFromBytes(key.getBytes(StandardCharsets.UTF_8)).toString();
    }

    /** True for a stop for harm that should trigger the kill webhook (never in dry-run). */
    public boolean killRequested() {
        return !dryRun && "kill".equals(action) && Decision.STOP_HARM.label().equals(decision);
    }
}
