package dev.interim.experiment;

import dev.interim.sequential.SpendingFunction;
import dev.interim.stats.Probabilities;
import dev.interim.stats.QuantileSignificance;
import dev.interim.text.Numbers;
import dev.interim.text.UserText;
import java.util.regex.Pattern;

/**
 * One metric of an experiment and the sequential test that watches it. Immutable and validated:
 * every message names the setting, the value and the rule.
 *
 * @param name metric name (letters, digits, '_', '-', '.')
 * @param kind what is counted and over what
 * @param role primary or guardrail
 * @param worse which direction of the metric hurts users
 * @param alpha type I error for this metric, shared out over the treatment arms (Bonferroni)
 * @param sides one (guardrails: harm only; primary: benefit only) or two (primary: either way)
 * @param spending α-spending function
 * @param futility β-spending function for non-binding futility (one-sided primary metrics with a
 *                 powered horizon only), or null
 * @param horizon the planned information
 * @param baseline a fixed value to compare each arm with (single-arm rollouts: one-sample tests), or
 *                 null to compare each treatment with control
 * @param action what a stop for harm triggers besides the record
 * @param cap winsorising of heavy tails, or null: each event value of an event-mean, each unit's total
 *            of a unit-total, each numerator (per unit, or per event under per-event assignment) of a
 *            ratio is taken as at most this value (common practice for revenue-like metrics)
 * @param denominatorCap the same for a ratio's denominator, or null
 * @param quantile the probability of an event-quantile metric (0.99 for the 99th percentile), else null
 */
public record MetricDefinition(String name, MetricKind kind, Role role, Worse worse, double alpha, Sides sides,
                               SpendingFunction spending, SpendingFunction futility, Horizon horizon,
                               Double baseline, StopAction action, Double cap, Double denominatorCap,
                               Double quantile) {

    /** A metric that is not a quantile. */
    public MetricDefinition(String name, MetricKind kind, Role role, Worse worse, double alpha, Sides sides,
                            SpendingFunction spending, SpendingFunction futility, Horizon horizon,
                            Double baseline, StopAction action, Double cap, Double denominatorCap) {
        this(name, kind, role, worse, alpha, sides, spending, futility, horizon, baseline, action, cap, denominatorCap,
                null);
    }

    /** A metric without caps. */
    public MetricDefinition(String name, MetricKind kind, Role role, Worse worse, double alpha, Sides sides,
                            SpendingFunction spending, SpendingFunction futility, Horizon horizon,
                            Double baseline, StopAction action) {
        this(name, kind, role, worse, alpha, sides, spending, futility, horizon, baseline, action, null, null, null);
    }

    private static final Pattern NAME = Pattern.compile("[A-Za-z0-9_.-]{1,64}");

    public MetricDefinition {
        if (name == null || !NAME.matcher(name).matches()) {
            throw new IllegalArgumentException("name must be 1 to 64 letters, digits, '_', '-' or '.', got " + UserText.quoted(name));
        }
        require(kind != null, "kind is required: event-rate, unit-rate, event-mean, unit-total, ratio or event-quantile");
        require(role != null, "role is required: primary or guardrail");
        require(worse != null, "worse is required: higher or lower");
        Probabilities.requireOpen(alpha, "alpha");
        require(sides != null, "sides is required: 1 or 2");
        require(role != Role.GUARDRAIL || sides == Sides.ONE,
                "sides must be 1 for a guardrail (it watches for harm only), got " + sides.count());
        require(spending != null, "spending is required: obf, pocock, power:RHO or hsd:GAMMA");
        require(horizon != null, "a horizon is required: max_per_arm, or power with effect");
        require(futility == null || (role == Role.PRIMARY && sides == Sides.ONE && horizon instanceof Horizon.Powered),
                "futility needs a one-sided primary metric with power and effect");
        if (baseline != null) {
            require(Double.isFinite(baseline), "baseline must be a finite number, got " + baseline);
            if (kind.isProportion()) {
                Probabilities.requireOpen(baseline, "baseline of a rate");
            }
        }
        if (horizon instanceof Horizon.Powered p) {
            require(baseline == null || p.scale() == Horizon.Scale.ABSOLUTE || baseline != 0,
                    "a relative effect needs a non-zero baseline, got " + baseline);
            boolean harmful = worse == Worse.HIGHER ? p.effect() > 0 : p.effect() < 0;
            require(role != Role.GUARDRAIL || harmful,
                    "effect of a guardrail must point the harmful way (worse: " + worse.name().toLowerCase() + "), got " + p.effect());
        }
        require(action != null, "action is required: none, kill or page");
        require(cap == null || (Double.isFinite(cap) && !kind.isProportion()),
                "cap applies to event-mean, unit-total and ratio metrics and must be a finite number, got " + cap);
        require(kind.isQuantile() == (quantile != null), kind.isQuantile()
                ? "quantile is required for an event-quantile metric: the probability, such as 0.99 for the 99th percentile"
                : "quantile applies to event-quantile metrics only");
        require(quantile == null || (quantile >= 0.01 && quantile <= 0.999),
                "quantile must lie in [0.01, 0.999], such as 0.5, 0.95, 0.99 or 0.999, got " + quantile);
        require(cap == null || !kind.isQuantile(),
                "cap does not apply to an event-quantile metric: a cap above the quantile leaves it as it is");
        require(denominatorCap == null || (kind == MetricKind.RATIO && Double.isFinite(denominatorCap) && denominatorCap > 0),
                "denominator_cap applies to ratio metrics and must be a positive number, got " + denominatorCap);
    }

    /** {@code value}, winsorised at {@link #cap()} when one is set. */
    public double capped(double value) {
        return cap == null ? value : Math.min(value, cap);
    }

    /** A ratio's denominator, winsorised at {@link #denominatorCap()} when one is set. */
    public double cappedDenominator(double value) {
        return denominatorCap == null ? value : Math.min(value, denominatorCap);
    }

    private static void require(boolean ok, String message) {
        if (!ok) {
            throw new IllegalArgumentException(message);
        }
    }

    /** The metric as people read it: its name, preceded by its percentile for a quantile ({@code p99 latency-ms}). */
    public String label() {
        return quantile == null ? name : Numbers.percentileLabel(quantile, name);
    }

    /**
     * Events each arm needs before a quantile at probability {@code p} is estimated:
     * {@link QuantileSignificance#MIN_TAIL} beyond it, so ⌈50 / min(p, 1 − p)⌉ (5,000 for p = 0.99,
     * 50,000 for 0.999, 100 for the median).
     */
    public static long quantileEventsNeeded(double p) {
        // 1e-9: 1 − 0.999 is 0.0010000000000000009 in binary, and 50 over it a hair below 50,000.
        return (long) Math.ceil(QuantileSignificance.MIN_TAIL / Math.min(p, 1 - p) - 1e-9);
    }
}
