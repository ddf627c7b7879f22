package dev.interim.stats;

import org.HdrHistogram.PackedHistogram;

/**
 * The values of one arm's quantile metric as they arrive, in groups of units: mutable, one thread.
 * What leaves it is a {@link HistogramCounts} snapshot. Recording a value allocates nothing once its
 * bucket has been used.
 */
public final class RunningHistogram {
    private final PackedHistogram[] groups;

    /** Empty, with {@code groups} groups (1 under per-event assignment). */
    public RunningHistogram(int groups) {
        if (groups < 1) {
            throw new IllegalArgumentException("groups must be at least 1, got " + groups);
        }
        this.groups = new PackedHistogram[groups];
    }

    /** Counts {@code value} (at least 0) in {@code group}. */
    public void accept(double value, int group) {
        PackedHistogram h = groups[group];
        if (h == null) {
            h = HistogramCounts.newHistogram();
            groups[group] = h;
        }
        h.recordValue(HistogramCounts.scaled(value));
    }

    /** The number of groups. */
    public int groupCount() {
        return groups.length;
    }

    /** Values counted so far. */
    public long count() {
        long n = 0;
        for (PackedHistogram g : groups) {
            n += g == null ? 0 : g.getTotalCount();
        }
        return n;
    }

    /** What has been counted, as an immutable snapshot. */
    public HistogramCounts snapshot() {
        return HistogramCounts.of(groups);
    }

    /** A running histogram that continues from {@code counts}. */
    public static RunningHistogram from(HistogramCounts counts) {
        RunningHistogram r = new RunningHistogram(counts.groupCount());
        for (int g = 0; g < counts.groupCount(); g++) {
            if (counts.count(g) > 0) {
                r.groups[g] = counts.group(g);
            }
        }
        return r;
    }
}
