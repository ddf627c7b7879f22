/**
 * How events map to experiments, arms and metric values: the JSON Pointers of the experiment, arm,
 * unit and time ({@link dev.interim.events.EventMapping}), where each metric is read and what
 * counts ({@link dev.interim.events.MetricSource}, {@link dev.interim.events.Condition},
 * {@link dev.interim.events.ValueRange}), per experiment ({@link dev.interim.events.MappedExperiment})
 * and all together ({@link dev.interim.events.EventCatalog}). Read from the configuration by
 * {@code config}; used by the stream and replay, which need nothing else of it.
 */
package dev.interim.events;
