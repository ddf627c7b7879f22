package dev.interim.sequential;

import dev.interim.stats.Alternative;
import dev.interim.stats.Probabilities;
import org.apache.commons.numbers.rootfinder.BrentSolver;

/**
 * Power, maximum information and expected information of a design at planned fractions
 * (Jennison & Turnbull 2000, ch. 2 and §7.2). Everything is computed by the same recursion as the
 * boundaries, in the drift η = θ·√I_max: a single-look test needs η = z_α + z_β, and the ratio of the
 * squared drifts is the inflation factor of the maximum sample size.
 */
public final class Planning {
    private static final BrentSolver BRENT = new BrentSolver(1e-12, 1e-10, 1e-13);

    private Planning() {}

    /**
     * Probability of rejecting the null hypothesis in the direction of the alternative, when the
     * drift is η (for a two-sided design, either side); futility stops, when planned, are obeyed.
     */
    public static double power(GroupSequentialDesign design, double[] fractions, double drift) {
        CrossingProbabilities p = crossings(design, fractions, drift);
        return design.alternative() == Alternative.TWO_SIDED ? p.totalUpper() + p.totalLower() : p.totalUpper();
    }

    /**
     * Expected information fraction at stopping (the final look always stops), when the drift is η.
     */
    public static double expectedFraction(GroupSequentialDesign design, double[] fractions, double drift) {
        CrossingProbabilities p = crossings(design, fractions, drift);
        double expected = 0;
        double continuing = 1;
        for (int k = 0; k < fractions.length - 1; k++) {
            expected += Math.min(1, fractions[k]) * p.stopAt(k);
            continuing -= p.stopAt(k);
        }
        return expected + Math.min(1, fractions[fractions.length - 1]) * continuing;
    }

    /** The drift at which the design has the given power; for futility designs it also sets the alternative. */
    public static double driftForPower(GroupSequentialDesign design, double[] fractions, double power) {
        Probabilities.requireOpen(power, "power");
        double single = zAlpha(design) + StandardNormal.quantile(power);
        return BRENT.findRoot(eta -> power(aimedAt(design, eta), fractions, eta) - power, single * 0.5, single * 2.5);
    }

    /** Maximum over single-look sample size for the given power (≥ 1). */
    public static double inflationFactor(GroupSequentialDesign design, double[] fractions, double power) {
        double single = zAlpha(design) + StandardNormal.quantile(power);
        double eta = driftForPower(design, fractions, power);
        return (eta / single) * (eta / single);
    }

    /** The sample sizes per arm for detecting {@code effect} with the given power. */
    public static SampleSizePlan sampleSize(GroupSequentialDesign design, double[] fractions, double power,
                                            Effect effect) {
        double zBeta = StandardNormal.quantile(power);
        double fixed = effect.fixedSamplePerArm(zAlpha(design), zBeta);
        double eta = driftForPower(design, fractions, power);
        double single = zAlpha(design) + zBeta;
        double inflation = (eta / single) * (eta / single);
        double maximum = fixed * inflation;
        GroupSequentialDesign sized = aimedAt(design, eta);
        return new SampleSizePlan((long) Math.ceil(fixed - 1e-9), inflation, (long) Math.ceil(maximum - 1e-9),
                maximum * expectedFraction(sized, fractions, 0),
                maximum * expectedFraction(sized, fractions, eta), eta);
    }

    /** z_{1−α} for one-sided designs, z_{1−α/2} for two-sided ones. */
    static double zAlpha(GroupSequentialDesign design) {
        double a = design.alternative() == Alternative.TWO_SIDED ? design.alpha() / 2 : design.alpha();
        return StandardNormal.upperQuantile(a);
    }

    /** The design with its futility rule (if any) aimed at drift η. */
    public static GroupSequentialDesign aimedAt(GroupSequentialDesign design, double eta) {
        Futility f = design.futility();
        return f == null ? design : design.withFutility(new Futility(f.beta(), f.spending(), eta));
    }

    /** Crossing probabilities in the "greater" orientation (a "less" design is its mirror image). */
    private static CrossingProbabilities crossings(GroupSequentialDesign design, double[] fractions, double drift) {
        Look[] looks = design.looksAt(fractions);
        double[] up = new double[looks.length];
        double[] low = new double[looks.length];
        boolean mirror = design.alternative() == Alternative.LESS;
        for (int i = 0; i < looks.length; i++) {
            up[i] = mirror ? -looks[i].lower() : looks[i].upper();
            low[i] = mirror ? -looks[i].upper() : looks[i].lower();
        }
        return CrossingProbabilities.of(fractions, up, low, drift, design.resolution());
    }
}
