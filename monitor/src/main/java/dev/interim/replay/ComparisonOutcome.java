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
 */
public record ComparisonOutcome(String arm, String metric, String role, Decision decision, LookResult last) {
}
