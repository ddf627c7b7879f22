package dev.interim.stats;

/**
 * A running count of successes out of trials.
 *
 * <p><b>Mutable and not thread-safe:</b> confine an instance to one thread and hand out
 * {@link #snapshot()}s, which are immutable.
 */
public final class RunningProportion {

    private long successes;
    private long trials;

    /** Records one trial. */
    public void accept(boolean success) {
        trials = Math.addExact(trials, 1);
        if (success) {
            successes++;
        }
    }

    /**
     * Adds the counts of {@code other} (a disjoint sample) to this one; {@code other} is unchanged.
     *
     * @return this
     */
    public RunningProportion combine(RunningProportion other) {
        Arguments.notNull("other", other);
        long newTrials = Math.addExact(trials, other.trials);
        successes += other.successes;
        trials = newTrials;
        return this;
    }

    public long successes() {
        return successes;
    }

    public long trials() {
        return trials;
    }

    /** An immutable copy of the current counts. */
    public ProportionCounts snapshot() {
        return new ProportionCounts(successes, trials);
    }
}
