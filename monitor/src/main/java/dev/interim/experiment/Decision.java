package dev.interim.experiment;

/**
 * The state of one (arm, metric) comparison. The three stops and {@link #COMPLETE} are absorbing: a
 * stopped arm never flips back. {@link #HELD} is the only state that can return to
 * {@link #CONTINUE}: automated decisions are suspended (sample-ratio mismatch or an operator hold).
 */
public enum Decision {
    CONTINUE("continue"),
    STOP_HARM("stop-harm"),
    STOP_BENEFIT("stop-benefit"),
    STOP_FUTILITY("stop-futility"),
    COMPLETE("complete"),
    HELD("held");

    private final String label;

    Decision(String label) {
        this.label = label;
    }

    /** The name used in decision records and meters. */
    public String label() {
        return label;
    }

    /** True for the states that end the comparison for good. */
    public boolean isFinal() {
        return this == STOP_HARM || this == STOP_BENEFIT || this == STOP_FUTILITY || this == COMPLETE;
    }

    /** A small number per state for a gauge: 0 continue, 1 harm, 2 benefit, 3 futility, 4 complete, 5 held. */
    public int code() {
        return ordinal();
    }
}
