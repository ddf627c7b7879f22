package dev.interim.config;

import com.fasterxml.jackson.core.JsonPointer;

/**
 * Where a metric is read in an event. An event is an observation of the metric when {@code field}
 * is present in it (and not null). A mean or a total takes the field's number; a rate counts the
 * event (or, per unit, the unit) as a success when the field meets the condition.
 */
public sealed interface MetricSource permits MetricSource.Value, MetricSource.Counted {

    /** The field read. */
    JsonPointer field();

    /** Means and totals (event-mean, unit-total): the field holds the number. */
    record Value(JsonPointer field) implements MetricSource {
    }

    /** Rates (event-rate, unit-rate): a success when the field meets {@code countsIf}. */
    record Counted(JsonPointer field, Condition countsIf) implements MetricSource {
    }
}
