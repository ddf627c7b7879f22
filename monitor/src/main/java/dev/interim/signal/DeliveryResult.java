package dev.interim.signal;

/**
 * What became of one call of {@link WebhookSender#send}.
 *
 * @param decisionId the record's decision id (also the {@code webhook-id} header)
 * @param outcome what happened
 * @param attempts HTTP requests made by this call (0 when nothing was sent)
 * @param lastStatus the last HTTP status received, or 0 when none was (nothing sent, or no answer)
 * @param lastError the last transport error (type and message), or null
 */
public record DeliveryResult(String decisionId, Outcome outcome, int attempts, int lastStatus, String lastError) {

    public enum Outcome {
        /** The receiver answered 2xx. */
        DELIVERED,
        /** Delivered before (by this process, or as the delivery log says): not sent again. */
        DUPLICATE,
        /** Being delivered by another thread right now: not sent twice at once. */
        IN_FLIGHT,
        /** The record is a dry run: never sent. */
        DRY_RUN,
        /** The receiver refused it for good (4xx other than 408 and 429): not retried. */
        REJECTED,
        /** Every attempt failed with a retriable answer or a transport error. */
        EXHAUSTED,
        /** The thread was interrupted while waiting to retry (shutdown); its interrupt flag is set again. */
        INTERRUPTED;

        /** A lower-case name for meters and logs: {@code delivered}, {@code dry_run}, ... */
        public String label() {
            return name().toLowerCase(java.util.Locale.ROOT);
        }
    }

    /** True when the receiver has the decision: delivered now or before (not while another thread is still trying). */
    public boolean delivered() {
        return outcome == Outcome.DELIVERED || outcome == Outcome.DUPLICATE;
    }
}
