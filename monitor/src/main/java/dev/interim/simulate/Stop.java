package dev.interim.simulate;

import dev.interim.experiment.Decision;

/** The four ways a simulated run ends, in the order results list them. */
public enum Stop {
    HARM(Decision.STOP_HARM),
    BENEFIT(Decision.STOP_BENEFIT),
    FUTILITY(Decision.STOP_FUTILITY),
    COMPLETE(Decision.COMPLETE);

    private static final Stop[] ALL = values();

    private final Decision decision;

    Stop(Decision decision) {
        this.decision = decision;
    }

    /** The decision the daemon would record. */
    public Decision decision() {
        return decision;
    }

    /** Its name in decision records: stop-harm, stop-benefit, stop-futility, complete. */
    public String label() {
        return decision.label();
    }

    /** True for the stops that reject the null hypothesis. */
    public boolean rejects() {
        return this == HARM || this == BENEFIT;
    }

    static Stop of(int ordinal) {
        return ALL[ordinal];
    }
}
