package dev.interim.experiment;

import dev.interim.sequential.Fractions;
import dev.interim.sequential.Futility;
import dev.interim.sequential.GroupSequentialDesign;
import dev.interim.sequential.Look;
import dev.interim.sequential.Planning;
import dev.interim.sequential.RepeatedConfidenceInterval;
import dev.interim.sequential.SequentialMonitor;
import dev.interim.stats.Alternative;
import dev.interim.stats.ConfidenceInterval;
import java.util.ArrayList;
import java.util.List;
import java.util.Optional;

/**
 * One treatment arm against control (or against a baseline) on one metric: its group-sequential
 * design, the looks so far, and the decision state machine.
 *
 * <p>States: {@link Decision#CONTINUE} until a boundary is crossed; then {@link Decision#STOP_HARM},
 * {@link Decision#STOP_BENEFIT} or {@link Decision#STOP_FUTILITY}, or {@link Decision#COMPLETE} when
 * the planned information is reached without a crossing — all four absorbing. {@link Decision#HELD}
 * suspends looks (sample-ratio mismatch, operator hold) and returns to continue on resume; a final
 * state is never held. Looks skipped while held cost nothing: spending functions spend by
 * information, not by look count.
 *
 * <p>Mutable and not thread-safe; time is passed in. The state is rebuilt after a restart from the
 * monitor's {@link #snapshot()}, the decision, the last look's result and the kept look points
 * ({@link #restore}), so α already spent, the decision and the history survive restarts.
 */
public final class Comparison {
    private final ExperimentDefinition experiment;
    private final MetricDefinition metric;
    private final String arm;
    private final GroupSequentialDesign design;
    /** The drift a powered horizon plans for (I_max = (drift/δ)²); NaN for a maximum per arm. */
    private final double plannedDrift;
    /** Why the last look due found nothing to look at, or null. */
    private String skipped;
    /**
     * The horizons in observations per arm that the looks of the latest half of the data implied, as
     * (count, need) with decreasing needs, the largest first (see {@link #fraction}); empty before the
     * first look and again after a restart.
     */
    private final java.util.ArrayDeque<double[]> needs = new java.util.ArrayDeque<>();
    private SequentialMonitor monitor;
    /** The recent fractions, oldest first: {@code recentCount} of them, unboxed. */
    private double[] recent = new double[16];
    private int recentCount;
    private Decision decision = Decision.CONTINUE;
    private LookResult last;
    /** Looks kept for views and charts; beyond this, every other older point is dropped. */
    static final int KEPT_POINTS = 2048;
    /** Recent fractions kept in memory; the state itself is the monitor's snapshot. */
    static final int KEPT_FRACTIONS = 10_000;
    private final List<LookPoint> points = new ArrayList<>();
    /** The first kept point not yet persisted, or changed since (thinning moves them all). */
    private int unsavedFrom;

    Comparison(ExperimentDefinition experiment, MetricDefinition metric, String arm) {
        this.experiment = experiment;
        this.metric = metric;
        this.arm = arm;
        GroupSequentialDesign base = GroupSequentialDesign.spending(experiment.comparisonAlpha(metric),
                alternative(metric), metric.spending());
        if (metric.horizon() instanceof Horizon.Powered p) {
            double[] planned = Fractions.equallySpaced(p.plannedLooks());
            if (metric.futility() != null) {
                base = base.withFutility(new Futility(1 - p.power(), metric.futility(), 1));
            }
            double drift = Planning.driftForPower(base, planned, p.power());
            this.design = Planning.aimedAt(base, drift);
            this.plannedDrift = drift;
        } else {
            this.design = base;
            this.plannedDrift = Double.NaN;
        }
        this.monitor = design.monitor();
    }

    /**
     * The direction of the test: guardrails watch for harm only; a two-sided primary metric for a
     * difference either way; a one-sided primary metric for benefit.
     */
    static Alternative alternative(MetricDefinition metric) {
        if (metric.role() == Role.GUARDRAIL) {
            return metric.worse().harm();
        }
        if (metric.sides() == Sides.TWO) {
            return Alternative.TWO_SIDED;
        }
        return metric.worse().harm() == Alternative.GREATER ? Alternative.LESS : Alternative.GREATER;
    }

    public String arm() {
        return arm;
    }

    /**
     * The drift η at which the design has the planned power at its planned looks (a powered horizon:
     * the planned information is I_max = (η/δ)²); NaN for a maximum per arm.
     */
    public double plannedDrift() {
        return plannedDrift;
    }

    public MetricDefinition metric() {
        return metric;
    }

    public GroupSequentialDesign design() {
        return design;
    }

    public Decision decision() {
        return decision;
    }

    /** The last look's result, or null before the first look. */
    public LookResult last() {
        return last;
    }

    /**
     * Information fractions of the recent looks, in order (at most {@link #KEPT_FRACTIONS}, and at
     * least half that many once so many looks were made; for tests and tools).
     */
    public List<Double> fractions() {
        List<Double> out = new ArrayList<>(recentCount);
        for (int i = 0; i < recentCount; i++) {
            out.add(recent[i]);
        }
        return out;
    }

    /** The sequential state, a few kilobytes whatever the number of looks: with the decision, all a restart needs. */
    public SequentialMonitor.Snapshot snapshot() {
        return monitor.snapshot();
    }

    /** Rebuilds the state after a restart from a {@link #snapshot()} and the decision. */
    public void restore(SequentialMonitor.Snapshot snapshot, Decision restored) {
        restore(snapshot, restored, null, List.of());
    }

    /**
     * Rebuilds the state after a restart: the monitor from its {@link #snapshot()}, the decision, the
     * last look's result ({@link #last()}, null if none was kept) and the kept look points
     * ({@link #points()}), so that views, meters and the records of later holds carry on from them.
     */
    public void restore(SequentialMonitor.Snapshot snapshot, Decision restored, LookResult lastLook,
                        List<LookPoint> kept) {
        monitor = SequentialMonitor.restore(design, snapshot);
        recentCount = 0;
        needs.clear();
        decision = restored == null ? Decision.CONTINUE : restored;
        last = lastLook;
        points.clear();
        points.addAll(kept);
        unsavedFrom = points.size();
    }

    /** The look points kept for views and charts, oldest first (unmodifiable; call on the owning thread). */
    public List<LookPoint> points() {
        return java.util.Collections.unmodifiableList(points);
    }

    /** The index of the first kept point not persisted since {@link #saved()} (the size when none). */
    public int unsavedFrom() {
        return Math.min(unsavedFrom, points.size());
    }

    /** The kept points are persisted as they are now. */
    public void saved() {
        unsavedFrom = points.size();
    }

    /** Rebuilds the state after a restart: the same looks, the same α spent, the same decision. */
    public void restore(List<Double> seen, Decision restored) {
        monitor = design.monitor();
        recentCount = 0;
        needs.clear();
        for (double t : seen) {
            monitor.lookAt(t);
            remember(t);
        }
        decision = restored == null ? Decision.CONTINUE : restored;
    }

    /** Suspends looks; a final decision stays as it is. Returns whether the state changed. */
    boolean hold() {
        if (decision.isFinal() || decision == Decision.HELD) {
            return false;
        }
        decision = Decision.HELD;
        return true;
    }

    /**
     * An operator's stop for harm: final, like a boundary's, and with the same consequences (the
     * metric's action, the kill webhook outside dry-run). Returns whether the state changed.
     */
    boolean forceStop() {
        if (decision.isFinal()) {
            return false;
        }
        decision = Decision.STOP_HARM;
        return true;
    }

    /** Ends a hold. Returns whether the state changed. */
    boolean resume() {
        if (decision != Decision.HELD) {
            return false;
        }
        decision = Decision.CONTINUE;
        return true;
    }

    /**
     * A look with the tallies of this arm and of control (ignored against a baseline). Returns the
     * result, or empty when there is nothing to look at: a final or held state, too few
     * observations, or no variance yet.
     */
    Optional<LookResult> look(Tally treatment, Tally control, java.time.Instant at) {
        if (decision.isFinal() || decision == Decision.HELD) {
            return Optional.empty();
        }
        boolean twoSample = metric.baseline() == null;
        if (treatment.count() < experiment.minPerArm() || (twoSample && control.count() < experiment.minPerArm())) {
            skipped = "too few observations: each arm needs min_per_arm = " + experiment.minPerArm() + ", has "
                    + treatment.count() + (twoSample ? " and " + control.count() + " (control)" : "");
            return Optional.empty();
        }
        Estimate.Result result = Estimate.of(metric, treatment, control);
        if (result.estimate() == null) {
            skipped = result.reason();
            return Optional.empty();
        }
        Estimate e = result.estimate();
        double fraction = fraction(e, treatment.count(), twoSample ? control.count() : -1);
        if (!(fraction > 0) || !Double.isFinite(fraction)) {
            skipped = "no information yet: the planned information cannot be measured (information fraction " + fraction + ")";
            return Optional.empty();
        }
        skipped = null;
        Look look = monitor.lookAt(fraction);
        remember(fraction);
        Decision previous = decision;
        if (look.informationAdded()) {
            decision = Decision.at(look, e.z(), metric.worse());
        }
        ConfidenceInterval interval = RepeatedConfidenceInterval.at(design, look, e.effect(), e.standardError(),
                e.degreesOfFreedom());
        ConfidenceInterval relative = RepeatedConfidenceInterval.relative(design, look, e.relative(),
                e.relativeLogError(), e.degreesOfFreedom());
        last = new LookResult(experiment.id(), arm, metric.name(), previous, decision, look, e, interval, relative, at);
        keep(LookPoint.of(last));
        return Optional.of(last);
    }

    /** Why the last look due found nothing to look at (too few observations, no variance yet), or null. */
    public String skipped() {
        return skipped;
    }

    /** Keeps a look's fraction; when full, the older half goes at once (so a look never shifts them all). */
    private void remember(double fraction) {
        if (recentCount == recent.length) {
            if (recent.length < KEPT_FRACTIONS) {
                recent = java.util.Arrays.copyOf(recent, Math.min(KEPT_FRACTIONS, 2 * recent.length));
            } else {
                int kept = KEPT_FRACTIONS / 2;
                System.arraycopy(recent, recentCount - kept, recent, 0, kept);
                recentCount = kept;
            }
        }
        recent[recentCount++] = fraction;
    }

    private void keep(LookPoint p) {
        unsavedFrom = Math.min(unsavedFrom, points.size());
        points.add(p);
        if (points.size() > KEPT_POINTS) {
            unsavedFrom = 0;
            // Thin the older half: keep every other point of it, so the whole run stays drawable.
            List<LookPoint> thinned = new ArrayList<>(KEPT_POINTS);
            int half = points.size() / 2;
            for (int i = 0; i < half; i += 2) {
                thinned.add(points.get(i));
            }
            thinned.addAll(points.subList(half, points.size()));
            points.clear();
            points.addAll(thinned);
        }
    }

    /** An immutable view of this comparison (call on the owning thread). */
    ExperimentView.ComparisonView view() {
        return new ExperimentView.ComparisonView(arm, metric.name(), metric.kind().label(),
                metric.role().name().toLowerCase(java.util.Locale.ROOT), metric.worse().name().toLowerCase(java.util.Locale.ROOT),
                metric.action().name().toLowerCase(java.util.Locale.ROOT), design.alpha(),
                design.alternative().name().toLowerCase(java.util.Locale.ROOT), design.efficacyLabel(), decision,
                points, skipped, metric.quantile() == null ? Double.NaN : metric.quantile());
    }

    /**
     * The information fraction of a look. For a maximum per arm N: the share of the planned counts,
     * 2·n_t·n_c / (N·(n_t + n_c)) — the information of the two arms over that of N each when the
     * per-observation variances are equal (information proportional to sample size: common practice in
     * group-sequential designs). It comes from both arms, never the larger one alone, does not depend on a
     * variance estimated from a few observations, and is exactly 1 when both arms hold N (computed
     * from whole numbers, so no rounding keeps a design short of its end). Against a baseline, n_t/N.
     * For a powered horizon: the conservative information over I_max = (drift/δ)², δ the planned
     * effect (a relative one times the control's level, or the baseline's), at most n/{@link #FULL_COUNT}.
     * That information implies a horizon in observations, N* = n·I_max/I; the fraction is n/N* with
     * the largest N* implied by the looks made since the data were half what they are. A
     * heavy-tailed variance estimated low at one look (a tail met less often lately) would otherwise
     * end the design at the first look whose estimate happened to be low: the final look would come at
     * the minimum of many noisy horizons, short of the planned information, and the power below the
     * plan. Looks on less than half the data are forgotten, as their estimates are the least precise.
     */
    private double fraction(Estimate e, long treatmentCount, long controlCount) {
        if (metric.horizon() instanceof Horizon.MaxPerArm max) {
            double n = max.perArm();
            if (controlCount < 0) {
                return treatmentCount / n;
            }
            double t = treatmentCount;
            double c = controlCount;
            return (2 * t * c) / (n * (t + c));
        }
        Horizon.Powered p = (Horizon.Powered) metric.horizon();
        double delta = p.scale() == Horizon.Scale.RELATIVE ? p.effect() * Math.abs(e.controlLevel()) : p.effect();
        double planned = (plannedDrift / delta) * (plannedDrift / delta);
        double t = treatmentCount;
        double counted = controlCount < 0 ? t : 2 * t * controlCount / (t + controlCount);
        // The horizon in observations that this look's information implies, and the largest of those
        // implied by the looks of the latest half of the data (a sliding-window maximum: a deque of
        // (count, need) with decreasing needs).
        double needed = counted * planned / e.conservativeInformation();
        while (!needs.isEmpty() && needs.peekLast()[1] <= needed) {
            needs.pollLast();
        }
        needs.addLast(new double[] {counted, needed});
        while (needs.peekFirst()[0] < counted / 2) {
            needs.pollFirst();
        }
        return Math.min(counted / needs.peekFirst()[1], counted / FULL_COUNT);
    }

    /**
     * A powered horizon is not taken as reached before each arm holds this many observations: the
     * fraction is at most n/30 (n the harmonic mean of the arms' counts). A plan whose effect is large
     * against the spread asks for only a few observations, and a look at those would be final at
     * once, judged by a normal approximation that a few skewed values do not support; 30 is the
     * usual rule of thumb for it (common practice).
     */
    static final double FULL_COUNT = 30;
}
