package dev.interim.stream;

/**
 * An event that cannot be read. It goes to the dead-letter topic with its reason, is counted by
 * reason, and never stops the stream.
 */
public final class BadEventException extends Exception {
    private final Reason reason;

    /** Why an event was refused: a small fixed set, so that counters by reason stay bounded. */
    public enum Reason {
        NOT_JSON("not-json"),
        MISSING_FIELD("missing-field"),
        WRONG_TYPE("wrong-type"),
        NOT_FINITE("not-finite"),
        UNKNOWN_EXPERIMENT("unknown-experiment"),
        UNKNOWN_ARM("unknown-arm"),
        TOO_LARGE("too-large"),
        FORBIDDEN_VALUE("forbidden-value");

        private final String label;

        Reason(String label) {
            this.label = label;
        }

        public String label() {
            return label;
        }
    }

    public BadEventException(Reason reason, String detail) {
        super(detail, null, false, false);   // no stack trace: bad input is routine here
        this.reason = reason;
    }

    public Reason reason() {
        return reason;
    }
}
