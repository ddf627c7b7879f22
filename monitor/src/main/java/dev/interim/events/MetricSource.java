package dev.interim.events;

import com.fasterxml.jackson.core.JsonPointer;

/**
 * Where a metric is read in an event. An event is an observation of the metric when {@code field}
 * is present in it (and not null). A mean or a total takes the field's number, which must lie in
 * its range; a rate counts the event (or, per unit, the unit) as a success when the field meets the
 * condition.
 */
public sealed interface MetricSource permits MetricSource.Value, MetricSource.Counted, MetricSource.Ratio {

    /** The field read. */
    JsonPointer field();

    /**
     * Means and totals (event-mean, unit-total): the field holds the number, and an event whose number
     * lies outside {@code range} is refused. For a total the range bounds each event's value, not the
     * unit's sum.
     */
    record Value(JsonPointer field, ValueRange range) implements MetricSource {
        public Value {
            if (range == null) {
                throw new IllegalArgumentException("range must be given; ValueRange.ANY allows every value");
            }
        }

        /** A source that allows every finite value. */
        public Value(JsonPointer field) {
            this(field, ValueRange.ANY);
        }
    }

    /** Rates (event-rate, unit-rate): a success when the field meets {@code countsIf}. */
    record Counted(JsonPointer field, Condition countsIf) implements MetricSource {
    }

    /**
     * Ratios: an event adds the number in {@code field} to the numerator and the number in
     * {@code denominator} to the denominator (an absent one adds 0); each must lie in its range. An
     * event is an observation of the ratio when it carries either field.
     */
    record Ratio(JsonPointer field, ValueRange range, JsonPointer denominator, ValueRange denominatorRange)
            implements MetricSource {
        public Ratio {
            if (range == null || denominatorRange == null) {
                throw new IllegalArgumentException("ranges must be given; ValueRange.ANY allows every value");
            }
        }
    }
}
