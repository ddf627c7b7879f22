package dev.interim.experiment;

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

    /**
     * Enough information to detect {@code effect} (in the metric's units, treatment − control) with
     * the given power: I_max = R·(z_α + z_β)²/δ², R the design's inflation factor over
     * {@code plannedLooks} equally spaced looks (Jennison & Turnbull 2000, §2.4). It needs no
     * variance: the variance is in the information the data bring.
     */
    record Powered(double power, double effect, int plannedLooks) implements Horizon {
        public Powered {
            if (!(power > 0 && power < 1)) {
                throw new IllegalArgumentException("power must lie strictly between 0 and 1, got " + power);
            }
            if (!(effect != 0) || !Double.isFinite(effect)) {
                throw new IllegalArgumentException("effect must be a non-zero number, got " + effect);
            }
            if (plannedLooks < 1 || plannedLooks > 1000) {
                throw new IllegalArgumentException("planned_looks must lie between 1 and 1000, got " + plannedLooks);
            }
        }
    }
}
