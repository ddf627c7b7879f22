package dev.interim.stats;

/**
 * The values of one arm's quantile metric as they arrive, in groups of units: mutable, one thread.
 * What leaves it is a {@link HistogramCounts} snapshot.
 *
 * <p>A value is kept as the key of its HdrHistogram bucket ({@link HistogramCounts#bucketOf}) in a
 * group's buffer of new values; a snapshot (or a full buffer, {@value #FOLD_AT} values) sorts the
 * buffer and merges it into the group's sorted bucket list. So recording costs a bucket computation
 * and a store, and a snapshot the values new since the last one plus one pass over the buckets in
 * use; walking an HdrHistogram's counters instead cost about 0.1 ms per group (its whole layout from
 * the lowest value to the highest), which at every look and commit was most of a quantile's cost.
 * Memory: the bucket lists, plus at most {@value #FOLD_AT} keys per group.
 */
public final class RunningHistogram {
    /** New values a group buffers before they are merged into its buckets. */
    static final int FOLD_AT = 4096;
    private final HistogramCounts.Sparse[] settled;
    private final long[][] pending;
    private final int[] pendingCount;

    /** Empty, with {@code groups} groups (1 under per-event assignment). */
    public RunningHistogram(int groups) {
        if (groups < 1) {
            throw new IllegalArgumentException("groups must be at least 1, got " + groups);
        }
        settled = new HistogramCounts.Sparse[groups];
        java.util.Arrays.fill(settled, HistogramCounts.Sparse.EMPTY);
        pending = new long[groups][];
        pendingCount = new int[groups];
    }

    /** Counts {@code value} (at least 0) in {@code group}. */
    public void accept(double value, int group) {
        long key = HistogramCounts.bucketOf(HistogramCounts.scaled(value));
        long[] p = pending[group];
        int n = pendingCount[group];
        if (p == null || n == p.length) {
            if (n == FOLD_AT) {
                fold(group);
                n = 0;
            } else {
                p = p == null ? new long[16] : java.util.Arrays.copyOf(p, Math.min(FOLD_AT, 2 * p.length));
                pending[group] = p;
            }
            p = pending[group];
        }
        p[n] = key;
        pendingCount[group] = n + 1;
    }

    private void fold(int g) {
        if (pendingCount[g] > 0) {
            settled[g] = settled[g].plus(HistogramCounts.Sparse.ofKeys(pending[g], pendingCount[g]));
            pendingCount[g] = 0;
        }
    }

    /** The number of groups. */
    public int groupCount() {
        return settled.length;
    }

    /** Values counted so far. */
    public long count() {
        long n = 0;
        for (int g = 0; g < settled.length; g++) {
            n += settled[g].total + pendingCount[g];
        }
        return n;
    }

    /** What has been counted, as an immutable snapshot. */
    public HistogramCounts snapshot() {
        for (int g = 0; g < settled.length; g++) {
            fold(g);
        }
        return HistogramCounts.ofSparse(settled);
    }

    /** A running histogram that continues from {@code counts}. */
    public static RunningHistogram from(HistogramCounts counts) {
        RunningHistogram r = new RunningHistogram(counts.groupCount());
        for (int g = 0; g < counts.groupCount(); g++) {
            r.settled[g] = counts.sparse(g);
        }
        return r;
    }
}
