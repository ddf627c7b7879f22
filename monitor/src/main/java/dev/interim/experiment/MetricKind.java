package dev.interim.experiment;

import dev.interim.text.UserText;

/**
 * What a metric counts, and over what: per event (each event is an observation) or per unit (each
 * unit — a user, a session, a device — is one observation, whatever its number of events).
 */
public enum MetricKind {
    /** Share of events meeting a condition (error rate per request). */
    EVENT_RATE("event-rate", true),
    /** Share of units that met a condition at least once (users who saw an error). */
    UNIT_RATE("unit-rate", true),
    /** Mean of a value over events (latency per request). */
    EVENT_MEAN("event-mean", false),
    /** Mean over units of each unit's total (revenue per user). */
    UNIT_TOTAL("unit-total", false),
    /** A numerator field over a denominator field, each summed (revenue per session, items per order). */
    RATIO("ratio", false),
    /** A quantile of a value over events (latency p99), from a histogram of the values. */
    EVENT_QUANTILE("event-quantile", false);

    private final String label;
    private final boolean proportion;

    MetricKind(String label, boolean proportion) {
        this.label = label;
        this.proportion = proportion;
    }

    /** The name used in configuration files. */
    public String label() {
        return label;
    }

    /** True for the rates, whose tally is a count of successes over trials. */
    public boolean isProportion() {
        return proportion;
    }

    /** True when the metric needs per-unit state whatever the assignment (and so input keyed by unit). */
    public boolean perUnit() {
        return this == UNIT_RATE || this == UNIT_TOTAL;
    }

    /** True for the kinds read per event, which become ratios of per-unit sums under per-unit assignment. */
    public boolean perEvent() {
        return this == EVENT_RATE || this == EVENT_MEAN || this == RATIO;
    }

    /** True for the quantile kind, whose metric names a probability and whose tally is a histogram. */
    public boolean isQuantile() {
        return this == EVENT_QUANTILE;
    }

    /** Parses a configuration label; the message lists the accepted ones. */
    public static MetricKind parse(String text) {
        for (MetricKind k : values()) {
            if (k.label.equals(text)) {
                return k;
            }
        }
        throw new IllegalArgumentException("unknown metric kind " + UserText.quoted(text)
                + ": use event-rate, unit-rate, event-mean, unit-total, ratio or event-quantile");
    }
}
