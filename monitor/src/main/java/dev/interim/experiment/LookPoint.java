package dev.interim.experiment;

import dev.interim.stats.ConfidenceInterval;
import java.time.Instant;

/**
 * One look of one comparison as the API and the charts show it: where the statistic stood against
 * the boundaries at that information fraction, and what was decided; the relative change
 * (treatment/control − 1) with its repeated interval, NaN where undefined (a level not positive).
 */
public record LookPoint(int look, Instant at, double fraction, double statistic, double upper, double lower,
                        double alphaSpent, double estimate, double intervalLower, double intervalUpper,
                        Decision decision, double relative, double relativeLower, double relativeUpper) {

    /** A look without a relative change. */
    public LookPoint(int look, Instant at, double fraction, double statistic, double upper, double lower,
                     double alphaSpent, double estimate, double intervalLower, double intervalUpper, Decision decision) {
        this(look, at, fraction, statistic, upper, lower, alphaSpent, estimate, intervalLower, intervalUpper, decision,
                Double.NaN, Double.NaN, Double.NaN);
    }

    static LookPoint of(LookResult r) {
        ConfidenceInterval rel = r.relativeInterval();
        return new LookPoint(r.look().number(), r.at(), r.look().fraction(), r.estimate().z(), r.look().upper(),
                r.look().lower(), r.look().alphaSpent(), r.estimate().effect(), r.interval().lower(),
                r.interval().upper(), r.decision(), rel == null ? Double.NaN : r.estimate().relative(),
                rel == null ? Double.NaN : rel.lower(), rel == null ? Double.NaN : rel.upper());
    }
}
