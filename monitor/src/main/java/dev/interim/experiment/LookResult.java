package dev.interim.experiment;

import dev.interim.sequential.Look;
import dev.interim.stats.ConfidenceInterval;
import java.time.Instant;

/**
 * What one look of one comparison found: the boundaries, the estimate, its repeated confidence
 * interval and the decision before and after. {@code relativeInterval} is the repeated interval of
 * the relative change (treatment/control − 1), null where that change is undefined.
 */
public record LookResult(String experiment, String arm, String metric, Decision previous, Decision decision,
                         Look look, Estimate estimate, ConfidenceInterval interval, ConfidenceInterval relativeInterval,
                         Instant at) {

    /** True when this look changed the state (a decision record is due). */
    public boolean changed() {
        return previous != decision;
    }

    /** The boundary that matters for the decision: the one crossed, else the efficacy boundary. */
    public double boundary() {
        double z = estimate.z();
        if (decision == Decision.STOP_FUTILITY) {
            return look.futilityBoundary();
        }
        if (look.alternative() == dev.interim.stats.Alternative.TWO_SIDED && z < 0) {
            return look.lower();
        }
        return look.efficacyBoundary();
    }
}
