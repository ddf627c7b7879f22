package dev.interim.stream;

import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.LookReport;
import dev.interim.experiment.Tally;
import java.time.Duration;
import java.util.List;
import java.util.Map;

/**
 * What the stages tell the rest of the daemon (meters, logs, webhooks). Called on the stages'
 * threads; implementations must be quick and thread-safe. Decisions are reported only after the
 * transaction that published them has committed.
 */
public interface StageEvents {
    default void accepted(String experiment, long events) {}

    default void rejected(BadEventException.Reason reason) {}

    default void owned(ExperimentMonitor monitor) {}

    default void disowned(ExperimentMonitor monitor) {}

    /** A look; {@code tallies} (metric → arm → tally) are what it was given. */
    default void looked(LookReport report, Map<String, Map<String, Tally>> tallies, Duration took) {}

    default void committed(List<DecisionRecord> decisions) {}

    StageEvents NONE = new StageEvents() {};
}
