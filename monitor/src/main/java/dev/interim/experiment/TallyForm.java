package dev.interim.experiment;

/**
 * What a metric's tally holds in an experiment, from its kind and the experiment's assignment:
 * successes over trials, moments of one value per observation, or moments of a (numerator,
 * denominator) pair per unit for a ratio with a delta-method variance.
 */
public enum TallyForm {
    /** {@link Tally.Rate}: event-rate under per-event assignment, unit-rate. */
    RATE,
    /** {@link Tally.Mean}: event-mean under per-event assignment, unit-total. */
    MEAN,
    /** {@link Tally.Ratio}: ratio metrics, and event-rate and event-mean under per-unit assignment. */
    RATIO,
    /** {@link Tally.Quantile}: event-quantile metrics (one group of values per event, groups of units per unit). */
    QUANTILE;

    /** The form of {@code kind} under {@code assignment}. */
    public static TallyForm of(MetricKind kind, Assignment assignment) {
        return switch (kind) {
            case UNIT_RATE -> RATE;
            case UNIT_TOTAL -> MEAN;
            case RATIO -> RATIO;
            case EVENT_QUANTILE -> QUANTILE;
            case EVENT_RATE -> assignment == Assignment.UNIT ? RATIO : RATE;
            case EVENT_MEAN -> assignment == Assignment.UNIT ? RATIO : MEAN;
        };
    }
}
