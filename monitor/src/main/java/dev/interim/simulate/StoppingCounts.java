package dev.interim.simulate;

/**
 * How many simulated runs ended at each look, by the way they ended. Mutable and not thread-safe:
 * each worker keeps its own and they are {@linkplain #combine combined} at the end. Integer counts
 * add up to the same totals in any order, which is what makes results independent of the number of
 * threads.
 */
final class StoppingCounts {
    private final long[][] counts;

    StoppingCounts(int looks) {
        if (looks < 1) {
            throw new IllegalArgumentException("need at least one look, got " + looks);
        }
        counts = new long[Stop.values().length][looks];
    }

    /** One run that stopped at look {@code look} (0-based) by {@code stop} (its ordinal). */
    void record(int stop, int look) {
        counts[stop][look]++;
    }

    void combine(StoppingCounts other) {
        if (other.counts[0].length != counts[0].length) {
            throw new IllegalArgumentException("cannot combine counts over " + other.counts[0].length + " and "
                    + counts[0].length + " looks");
        }
        for (int s = 0; s < counts.length; s++) {
            for (int k = 0; k < counts[s].length; k++) {
                counts[s][k] += other.counts[s][k];
            }
        }
    }

    /** A copy: counts[stop ordinal][look, 0-based]. */
    long[][] snapshot() {
        long[][] copy = new long[counts.length][];
        for (int s = 0; s < counts.length; s++) {
            copy[s] = counts[s].clone();
        }
        return copy;
    }
}
