package dev.interim.stats;

/**
 * An immutable count of successes out of trials: the sufficient statistic of a proportion metric
 * (conversions out of users, errors out of requests).
 *
 * @param successes number of successes, {@code 0 <= successes <= trials}
 * @param trials    number of trials, {@code >= 0}
 */
public record ProportionCounts(long successes, long trials) {

    /** No trials. */
    public static final ProportionCounts EMPTY = new ProportionCounts(0, 0);

    public ProportionCounts {
        if (trials < 0 || successes < 0 || successes > trials) {
            throw new IllegalArgumentException(
                    "counts need 0 <= successes <= trials, were successes " + successes + ", trials " + trials);
        }
    }

    /** Observed rate {@code successes / trials}; NaN when there are no trials. */
    public double rate() {
        return trials == 0 ? Double.NaN : (double) successes / trials;
    }

    /** {@code trials - successes}. */
    public long failures() {
        return trials - successes;
    }

    /**
     * The counts of the union of two disjoint samples.
     *
     * @throws ArithmeticException if a count overflows a long
     */
    public ProportionCounts plus(ProportionCounts other) {
        Arguments.notNull("other", other);
        return new ProportionCounts(
                Math.addExact(successes, other.successes), Math.addExact(trials, other.trials));
    }
}
