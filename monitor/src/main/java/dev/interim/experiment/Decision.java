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

    /**
     * The decision rule at a look that added information: a crossed efficacy boundary stops for harm
     * or benefit by the direction {@code worse} says hurts users, a crossed futility boundary for
     * futility, the final look completes; otherwise continue. The daemon's comparisons and the
     * simulation of a design's error rates both decide by this one rule.
     *
     * @param z the statistic on the standard normal scale, treatment − control
     */
    public static Decision at(dev.interim.sequential.Look look, double z, Worse worse) {
        if (look.rejects(z)) {
            boolean harmful = worse == Worse.HIGHER ? z > 0 : z < 0;
            return harmful ? STOP_HARM : STOP_BENEFIT;
        }
        if (look.futile(z)) {
            return STOP_FUTILITY;
        }
        return look.last() ? COMPLETE : CONTINUE;
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
