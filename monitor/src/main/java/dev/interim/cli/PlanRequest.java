package dev.interim.cli;

import dev.interim.sequential.Effect;
import dev.interim.sequential.SpendingFunction;
import dev.interim.stats.Alternative;

/**
 * What {@code interim plan} was asked for, checked. Optional parts are null when absent.
 *
 * @param alpha total type I error
 * @param alternative two-sided, or the one-sided direction
 * @param efficacy how the design rejects
 * @param fractions the information fractions of the looks, increasing
 * @param power the power to plan for, or null
 * @param effect the effect to size for (needs a power), or null
 * @param futility the β-spending function of a non-binding futility rule (needs a power), or null
 */
record PlanRequest(double alpha, Alternative alternative, EfficacyRule efficacy, double[] fractions,
                   Double power, Effect effect, SpendingFunction futility) {

    int sides() {
        return alternative == Alternative.TWO_SIDED ? 2 : 1;
    }

    /** {@code greater} or {@code less}; null for a two-sided design. */
    String direction() {
        return switch (alternative) {
            case TWO_SIDED -> null;
            case GREATER -> "greater";
            case LESS -> "less";
        };
    }
}
