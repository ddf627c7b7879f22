package dev.interim.experiment;

import java.nio.charset.StandardCharsets;
import java.time.Instant;
import java.util.List;
import java.util.UUID;

/**
 * An operator's acknowledgement of an experiment's stops for harm: the paging signal clears until a
 * new stop. Published on the decisions topic beside the decision records (never to a webhook), so
 * that who acted when is on record, and kept in the experiment's state, so that a restart does not
 * page again for a stop already seen.
 *
 * @param stops the comparisons stopped for harm when it was acknowledged (possibly none)
 * @param id a name-based UUID of the run, experiment and instant: unique per acknowledgement
 */
public record Acknowledgement(String experiment, Instant at, List<Stop> stops, String id, boolean dryRun) {

    /** One comparison stopped for harm. */
    public record Stop(String arm, String metric) {}

    public Acknowledgement {
        stops = List.copyOf(stops);
    }

    static Acknowledgement of(String run, String experiment, Instant at, List<Stop> stops, RunMode mode) {
        String key = run + '\u0000' + experiment + '\u0000' + "acknowledged" + '\u0000' + at;
        return new Acknowledgement(experiment, at, stops,
                UUID.nameUUIDFromBytes(key.getBytes(StandardCharsets.UTF_8)).toString(), mode == RunMode.DRY_RUN);
    }
}
