package dev.interim.experiment;

import java.time.Instant;

/**
 * One look of one comparison as the API and the charts show it: where the statistic stood against
 * the boundaries at that information fraction, and what was decided.
 */
public record LookPoint(int look, Instant at, double fraction, double statistic, double upper, double lower,
                        double alphaSpent, double estimate, double intervalLower, double intervalUpper,
                        Decision decision) {

    static LookPoint of(LookResult r) {
        return new LookPoint(r.look().number(), r.at(), r.look().fraction(), r.estimate().z(), r.look().upper(),
                r.look().lower(), r.look().alphaSpent(), r.estimate().effect(), r.interval().lower(),
                r.interval().upper(), r.decision());
    }
}
