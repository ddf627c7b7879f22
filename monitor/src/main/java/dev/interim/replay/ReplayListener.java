package dev.interim.replay;

import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.LookReport;

/**
 * What a replay tells as it goes, on the replaying thread: each look, each decision record, and
 * its progress a few times per second. Every method does nothing by default.
 */
public interface ReplayListener {
    /** A listener that ignores everything. */
    ReplayListener NONE = new ReplayListener() {};

    /** One look of one experiment, at its scheduled instant of event time. */
    default void looked(LookReport report) {}

    /** A change of state of one comparison, as the daemon would publish it (after {@link #looked}). */
    default void decided(DecisionRecord record) {}

    /** How far the replay has got: about four times per second, and once when the file is read. */
    default void progressed(Progress progress) {}

    /**
     * @param events lines read so far that hold an event (blank lines are not events)
     * @param bytesRead bytes read from the file so far (compressed bytes for gzip)
     * @param bytesTotal the file's size
     * @param elapsedNanos time since the replay started
     * @param done true for the last report, once the whole file is read
     */
    record Progress(long events, long bytesRead, long bytesTotal, long elapsedNanos, boolean done) {
        /** Share of the file read, 0 to 1 (1 for an empty file). */
        public double fractionRead() {
            return bytesTotal <= 0 ? 1 : Math.min(1, (double) bytesRead / bytesTotal);
        }
    }
}
