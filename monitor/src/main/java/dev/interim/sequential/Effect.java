package dev.interim.sequential;

import dev.interim.stats.Probabilities;

/**
 * The smallest effect a design must detect, with what its variance depends on. Both compare two arms
 * of equal size; {@link #fixedSamplePerArm} is the textbook single-look sample size per arm.
 */
public sealed interface Effect permits Effect.MeanDifference, Effect.ProportionDifference {

    /** Sample size per arm of a single-look test with the given normal quantiles z_α and z_β (not rounded). */
    double fixedSamplePerArm(double zAlpha, double zBeta);

    /**
     * A difference of means δ with a common standard deviation σ: n = 2σ²(z_α + z_β)²/δ² per arm
     * (any textbook of experimental design; common practice).
     */
    record MeanDifference(double delta, double sd) implements Effect {
        public MeanDifference {
            if (!(delta != 0) || !Double.isFinite(delta)) {
                throw new IllegalArgumentException("the effect to detect must be a non-zero number, got " + delta);
            }
            if (!(sd > 0) || Double.isInfinite(sd)) {
                throw new IllegalArgumentException("the standard deviation must be positive, got " + sd);
            }
        }

        @Override
        public double fixedSamplePerArm(double zAlpha, double zBeta) {
            double k = (zAlpha + zBeta) * sd / delta;
            return 2 * k * k;
        }
    }

    /**
     * A difference δ between a baseline rate p₁ and p₂ = p₁ + δ: n = (z_α√(2p̄q̄) + z_β√(p₁q₁ + p₂q₂))²/δ²
     * per arm, with p̄ the mean of the two rates (Fleiss, Levin & Paik 2003, §4.2, without continuity
     * correction).
     */
    record ProportionDifference(double baseline, double delta) implements Effect {
        public ProportionDifference {
            Probabilities.requireOpen(baseline, "the baseline rate");
            double other = baseline + delta;
            if (!(delta != 0) || !(other > 0 && other < 1)) {
                throw new IllegalArgumentException("baseline rate + effect must be a different rate strictly between 0 and 1, got "
                        + baseline + " + " + delta);
            }
        }

        @Override
        public double fixedSamplePerArm(double zAlpha, double zBeta) {
            double p1 = baseline;
            double p2 = baseline + delta;
            double mean = (p1 + p2) / 2;
            double k = zAlpha * Math.sqrt(2 * mean * (1 - mean)) + zBeta * Math.sqrt(p1 * (1 - p1) + p2 * (1 - p2));
            return k * k / (delta * delta);
        }
    }
}
