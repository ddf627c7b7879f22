package dev.interim.signal;

import java.time.Instant;

/**
 * Where the webhook sender remembers which decisions were delivered beyond its own memory, so that a
 * restarted daemon does not call the kill webhook again for a decision it already delivered. The
 * daemon may keep it in a compacted topic or a file; {@link #none()} keeps nothing.
 *
 * <p>Implementations must be thread-safe.
 */
public interface DeliveryLog {

    /** Whether the decision with this id was delivered before. */
    boolean delivered(String decisionId);

    /** Called once the receiver has acknowledged the decision (a 2xx answer). */
    void recordDelivered(String decisionId, Instant at);

    /** Remembers nothing: only the sender's in-memory set guards against a second delivery. */
    static DeliveryLog none() {
        return new DeliveryLog() {
            @Override
            public boolean delivered(String decisionId) {
                return false;
            }

            @Override
            public void recordDelivered(String decisionId, Instant at) {
            }
        };
    }
}
