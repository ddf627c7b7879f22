package dev.interim.sequential;

import dev.interim.stats.Probabilities;

/**
 * Non-binding futility stopping by β spending (one-sided designs only): at each look the futility
 * boundary a_k is set so that, under the alternative the design is powered for, the probability of
 * stopping for futility by look k equals the spent β. Non-binding: the efficacy boundaries are
 * computed as if futility stops never happen, so ignoring a futility signal never inflates α
 * (Jennison & Turnbull 2000, §7.2; the convention most regulators expect).
 *
 * @param beta type II error to spend, 1 − power
 * @param spending how β is spent over the information fraction
 * @param drift the alternative's drift η = θ₁·√I_max (positive, in the direction of the alternative)
 */
public record Futility(double beta, SpendingFunction spending, double drift) {
    public Futility {
        Probabilities.requireOpen(beta, "beta (1 - power)");
        if (spending == null) {
            throw new IllegalArgumentException("futility needs a beta-spending function");
        }
        if (!(drift > 0) || Double.isInfinite(drift)) {
            throw new IllegalArgumentException("futility needs a positive, finite drift of the alternative, got " + drift);
        }
    }
}
