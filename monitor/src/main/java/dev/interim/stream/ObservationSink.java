package dev.interim.stream;

/**
 * Where an {@link EventReader} puts what one event says. An event is an exposure of its unit to an
 * arm, and may also carry observations of metrics. Experiments, arms and metrics travel as their
 * indices in the shared {@link dev.interim.events.Catalog} (resolved once, by the reader).
 */
public interface ObservationSink {

    /** The event's unit (null when the input is not keyed by unit) was exposed to {@code arm}. */
    void exposure(int experiment, int arm, String unit);

    /** A rate metric: this event (or unit) met the metric's condition, or did not. */
    void outcome(int experiment, int arm, String unit, int metric, boolean success);

    /** A mean or total metric: the event's value. */
    void value(int experiment, int arm, String unit, int metric, double value);

    /**
     * A ratio metric: what this event adds to its numerator and its denominator (0 for a part the
     * event does not carry).
     */
    void ratio(int experiment, int arm, String unit, int metric, double numerator, double denominator);
}
