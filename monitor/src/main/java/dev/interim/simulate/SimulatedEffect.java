package dev.interim.simulate;

import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;

/**
 * One true effect a comparison is simulated under, treatment − control.
 *
 * @param drift the drift η: the mean of Z at the planned maximum information
 * @param inMetricUnits the same effect in the metric's units (powered horizons), or null
 * @param direction "none" (the null hypothesis), "harm" or "benefit"
 */
public record SimulatedEffect(double drift, Double inMetricUnits, String direction) {

    /** Multiples of the reference effect simulated when no effects are given. */
    static final double[] DEFAULT_MULTIPLES = {0, 0.5, 1, 1.5};

    public SimulatedEffect {
        if (!Double.isFinite(drift)) {
            throw new IllegalArgumentException("an effect must be a finite number, got " + drift);
        }
    }

    public boolean isNull() {
        return drift == 0;
    }

    /**
     * The default effects of a comparison: 0 (the null), and ½, 1 and 1½ times its reference effect
     * ({@link SimulatedComparison#referenceDrift()}: the configured effect of a powered horizon, else
     * the drift a single look needs for 90% power), in the direction the test watches.
     */
    public static List<SimulatedEffect> defaults(SimulatedComparison c) {
        double reference = c.referenceDrift();
        List<SimulatedEffect> effects = new ArrayList<>();
        for (double m : DEFAULT_MULTIPLES) {
            effects.add(ofDrift(c, m * reference));
        }
        return effects;
    }

    /**
     * Effects as given, in {@code unit}; the null (0) comes first whether given or not, and
     * repeated values count once.
     *
     * @throws IllegalArgumentException for metric units on a comparison without a powered horizon
     */
    public static List<SimulatedEffect> given(SimulatedComparison c, double[] values, EffectUnit unit) {
        if (unit == EffectUnit.METRIC && !c.hasMetricUnits()) {
            throw new IllegalArgumentException("effects in metric units need a horizon with power and effect, but metric '"
                    + c.metric().name() + "' of experiment '" + c.experiment() + "' has max_per_arm: give the effects"
                    + " as drift (--effect-unit drift), or leave that metric out (--metric)");
        }
        Set<Double> seen = new LinkedHashSet<>();
        seen.add(0.0);
        for (double v : values) {
            if (!Double.isFinite(v)) {
                throw new IllegalArgumentException("an effect must be a finite number, got " + v);
            }
            seen.add(v == 0 ? 0.0 : v); // -0.0 is the null too
        }
        List<SimulatedEffect> effects = new ArrayList<>();
        for (double v : seen) {
            effects.add(unit == EffectUnit.METRIC ? ofMetricUnits(c, v) : ofDrift(c, v));
        }
        return effects;
    }

    static SimulatedEffect ofDrift(SimulatedComparison c, double drift) {
        double d = drift == 0 ? 0.0 : drift; // -0.0 prints as the null too
        return new SimulatedEffect(d, c.hasMetricUnits() ? d / c.driftPerUnit() : null, direction(c, d));
    }

    static SimulatedEffect ofMetricUnits(SimulatedComparison c, double effect) {
        double drift = effect * c.driftPerUnit();
        return new SimulatedEffect(drift == 0 ? 0.0 : drift, effect == 0 ? 0.0 : effect, direction(c, drift));
    }

    private static String direction(SimulatedComparison c, double drift) {
        if (drift == 0) {
            return "none";
        }
        return c.harmful(drift) ? "harm" : "benefit";
    }
}
