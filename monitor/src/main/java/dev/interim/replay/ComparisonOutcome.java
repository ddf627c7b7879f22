package dev.interim.replay;

import dev.interim.experiment.Decision;
import dev.interim.experiment.LookResult;

/**
 * Where one treatment arm stands on one metric at the end of a replay.
 *
 * @param role guardrail or primary
 * @param decision the final state
 * @param last the last look that counted (the one that stopped it, for a stopped arm), or null when
 *     the comparison never had enough data to look
 * @param skipped why the last look due found nothing to look at (too few observations, no variance
 *     yet), or null
 */
public record ComparisonOutcome(String arm, String metric, String role, Decision decision, LookResult last,
                                String skipped) {

    /** An outcome without a reason for a skipped look. */
    public ComparisonOutcome(String arm, String metric, String role, Decision decision, LookResult last) {
        this(arm, metric, role, decision, last, null);
    }
}
