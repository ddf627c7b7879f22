package dev.interim.experiment;

import dev.interim.stats.Probabilities;

/**
 * How much information a comparison plans for: the information fraction of a look is the
 * information gathered so far over the planned maximum, I/I_max, with I = 1/Var(estimate).
 */
public sealed interface Horizon permits Horizon.MaxPerArm, Horizon.Powered {

    /**
     * A planned maximum of units (or events) per arm; I_max is the information that many would give
     * at the variance seen so far.
     */
    record MaxPerArm(long perArm) implements Horizon {
        public MaxPerArm {
            if (perArm < 2) {
                throw new IllegalArgumentException("max_per_arm must be at least 2, got " + perArm);
            }
        }
    }

    /** How a planned effect is given. */
    enum Scale {
        /** In the metric's own units: treatment − control. */
        ABSOLUTE,
        /** As a relative change: treatment / control − 1 (0.05 is 5% up). */
        RELATIVE
    }

    /**
     * Enough information to detect {@code effect} with the given power: I_max = R·(z_α + z_β)²/δ², R
     * the design's inflation factor over {@code plannedLooks} equally spaced looks (Jennison &
     * Turnbull 2000, §2.4). It needs no variance: the variance is in the information the data bring.
     * A relative effect is turned into δ at each look as effect × |control's estimate| (or ×
     * |baseline|).
     */
    record Powered(double power, double effect, int plannedLooks, Scale scale) implements Horizon {
        /** An effect in the metric's units. */
        public Powered(double power, double effect, int plannedLooks) {
            this(power, effect, plannedLooks, Scale.ABSOLUTE);
        }

        public Powered {
            if (scale == null) {
                throw new IllegalArgumentException("the scale of the effect is required: absolute or relative");
            }
            Probabilities.requireOpen(power, "power");
            if (!(effect != 0) || !Double.isFinite(effect)) {
                throw new IllegalArgumentException("effect must be a non-zero number, got " + effect);
            }
            if (plannedLooks < 1 || plannedLooks > 1000) {
                throw new IllegalArgumentException("planned_looks must lie between 1 and 1000, got " + plannedLooks);
            }
        }
    }
}
