package dev.interim.cli;

import dev.interim.sequential.Futility;
import dev.interim.sequential.GroupSequentialDesign;
import dev.interim.sequential.Look;
import dev.interim.sequential.Planning;
import dev.interim.sequential.SampleSizePlan;
import java.util.List;

/**
 * The computed plan: the looks of the design and, when a power was given, its inflation and drift,
 * and, when an effect was given too, its sample sizes. Built by {@link #of}; rendered by
 * {@link PlanFormat}.
 *
 * @param request what was asked
 * @param design the design, with its futility rule (if any) aimed at the planned drift
 * @param looks the looks at the requested fractions
 * @param power the power summary, or null without {@code --power}
 * @param sampleSize the sample sizes, or null without an effect
 */
record PlanReport(PlanRequest request, GroupSequentialDesign design, List<Look> looks,
                  PowerSummary power, SampleSizePlan sampleSize) {

    /**
     * Power, inflation of the maximum information over a single-look test, and the drift
     * η = θ·√I_max at which the design has that power.
     */
    record PowerSummary(double power, double inflation, double drift) {}

    /** Placeholder drift for building a futility rule; {@link Planning} re-aims it at the drift that gives the power. */
    private static final double PROVISIONAL_DRIFT = 3;

    static PlanReport of(PlanRequest request) {
        double[] fractions = request.fractions();
        GroupSequentialDesign design = request.efficacy().design(request.alpha(), request.alternative(), fractions);
        if (request.futility() != null) {
            design = design.withFutility(new Futility(1 - request.power(), request.futility(), PROVISIONAL_DRIFT));
        }
        PowerSummary power = null;
        SampleSizePlan sampleSize = null;
        if (request.effect() != null) {
            sampleSize = Planning.sampleSize(design, fractions, request.power(), request.effect());
            power = new PowerSummary(request.power(), sampleSize.inflation(), sampleSize.drift());
        } else if (request.power() != null) {
            double drift = Planning.driftForPower(design, fractions, request.power());
            power = new PowerSummary(request.power(), Planning.inflationFactor(design, fractions, request.power()), drift);
        }
        if (power != null) {
            design = Planning.aimedAt(design, power.drift());
        }
        return new PlanReport(request, design, List.of(design.looksAt(fractions)), power, sampleSize);
    }

    boolean sized() {
        return sampleSize != null;
    }

    boolean hasFutility() {
        return design.futility() != null;
    }

    /**
     * Cumulative sample size per arm at a look: the maximum scaled by the look's fraction, rounded
     * up. The 1e-9 keeps 0.2 × 1000 = 200.00000000000003 at 200.
     */
    long perArmAt(Look look) {
        return (long) Math.ceil(sampleSize.maximumPerArm() * look.fraction() - 1e-9);
    }
}
