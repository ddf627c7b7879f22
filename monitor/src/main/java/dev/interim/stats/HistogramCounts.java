package dev.interim.stats;

import org.HdrHistogram.AbstractHistogram;
import org.HdrHistogram.HistogramIterationValue;
import org.HdrHistogram.PackedHistogram;

/**
 * Counts of one arm's values of a quantile metric in HdrHistogram buckets, kept in groups of units:
 * an immutable snapshot. Sums of snapshots (partitions, arms) are exact, bucket by bucket, because
 * every histogram has the same bucket layout; the size follows the number of distinct buckets
 * used, never the number of values.
 *
 * <p>Buckets: values are recorded in units of {@link #RESOLUTION} (so 1e-6 of the metric's unit is
 * the smallest step told apart) up to {@link #HIGHEST}, in HdrHistogram's layout with
 * {@link #SIGNIFICANT_DIGITS} significant decimal digits: a bucket at value v is at most v/128 wide,
 * so a quantile read from the buckets lies within {@link #RELATIVE_PRECISION} (0.79%) of a value of
 * the sample at its rank (Tene, HdrHistogram documentation: "value precision … expressed as the
 * number of significant digits"). Within a bucket, values are taken as spread evenly: the quantile
 * function and the distribution function are interpolated linearly, so both are continuous.
 *
 * <p>Groups: under per-unit assignment each unit's events go to the group its key's hash names
 * ({@link #UNIT_GROUPS} groups), so the groups are independent sums of whole units: the random
 * groups from which the variance of the share below a quantile is estimated (see
 * {@link QuantileSignificance}). Under per-event assignment there is one group.
 */
public final class HistogramCounts {
    /** HdrHistogram's precision setting: 2 significant digits, buckets at most 1/128 of their value wide. */
    public static final int SIGNIFICANT_DIGITS = 2;
    /** The smallest step told apart, in the metric's units. */
    public static final double RESOLUTION = 1e-6;
    /** The largest value kept apart, in the metric's units; larger ones count as this value. */
    public static final double HIGHEST = 1e12;
    /** Groups of units under per-unit assignment. */
    public static final int UNIT_GROUPS = 32;
    /** How far a bucket's values may lie from each other, relative to the lowest: 1/128. */
    public static final double RELATIVE_PRECISION = 1.0 / 128;

    private static final long HIGHEST_SCALED = Math.round(HIGHEST / RESOLUTION);

    /** One group's histogram, never changed once here (null: the group has no value). */
    private final PackedHistogram[] groups;
    private final long count;
    /** Buckets with values, over every group, made at the first use. */
    private volatile Buckets total;
    private volatile Buckets[] byGroup;

    private HistogramCounts(PackedHistogram[] groups) {
        this.groups = groups;
        long n = 0;
        for (PackedHistogram g : groups) {
            n += g == null ? 0 : g.getTotalCount();
        }
        this.count = n;
    }

    /** No values, in {@code groups} groups. */
    public static HistogramCounts empty(int groups) {
        if (groups < 1) {
            throw new IllegalArgumentException("groups must be at least 1, got " + groups);
        }
        return new HistogramCounts(new PackedHistogram[groups]);
    }

    /**
     * A snapshot of these histograms, one per group (null for an empty group); they are copied, so
     * the caller may go on changing its own.
     */
    public static HistogramCounts of(AbstractHistogram[] groups) {
        if (groups.length < 1) {
            throw new IllegalArgumentException("at least one group is needed");
        }
        PackedHistogram[] copy = new PackedHistogram[groups.length];
        for (int g = 0; g < groups.length; g++) {
            if (groups[g] != null && groups[g].getTotalCount() > 0) {
                copy[g] = newHistogram();
                copy[g].add(groups[g]);
            }
        }
        return new HistogramCounts(copy);
    }

    /** An empty histogram of the layout every group uses. */
    public static PackedHistogram newHistogram() {
        return new PackedHistogram(HIGHEST_SCALED, SIGNIFICANT_DIGITS);
    }

    /** A value as the histograms record it: in steps of {@link #RESOLUTION}, held within [0, HIGHEST]. */
    public static long scaled(double value) {
        if (!(value >= 0)) {
            throw new IllegalArgumentException("a quantile metric's values must be numbers at least 0, got " + value);
        }
        return value >= HIGHEST ? HIGHEST_SCALED : Math.round(value / RESOLUTION);
    }

    /** Values counted, over every group. */
    public long count() {
        return count;
    }

    /** The number of groups. */
    public int groupCount() {
        return groups.length;
    }

    /** Values counted in group {@code g}. */
    public long count(int g) {
        return groups[g] == null ? 0 : groups[g].getTotalCount();
    }

    /** Group {@code g}'s histogram, a copy (empty when the group has none), for encoders. */
    public PackedHistogram group(int g) {
        PackedHistogram h = newHistogram();
        if (groups[g] != null) {
            h.add(groups[g]);
        }
        return h;
    }

    /**
     * The sum of these counts and {@code other}'s, group by group. An empty one adds nothing, whatever
     * its groups; two with different numbers of groups (a configuration that changed its assignment)
     * add group g to group g modulo the smaller number.
     */
    public HistogramCounts plus(HistogramCounts other) {
        if (other.count == 0) {
            return this;
        }
        if (count == 0) {
            return other;
        }
        int n = Math.min(groups.length, other.groups.length);
        PackedHistogram[] sum = new PackedHistogram[n];
        addInto(sum, groups);
        addInto(sum, other.groups);
        return new HistogramCounts(sum);
    }

    private static void addInto(PackedHistogram[] sum, PackedHistogram[] from) {
        for (int g = 0; g < from.length; g++) {
            if (from[g] == null) {
                continue;
            }
            int to = g % sum.length;
            if (sum[to] == null) {
                sum[to] = newHistogram();
            }
            sum[to].add(from[g]);
        }
    }

    /**
     * The value below which a share {@code u} of the counted values lie: the bucket where the
     * cumulative count reaches u·n, interpolated linearly within it.
     *
     * @throws InsufficientDataException when nothing is counted
     */
    public double quantile(double u) {
        if (!(u >= 0 && u <= 1)) {
            throw new IllegalArgumentException("u must lie in [0, 1], got " + u);
        }
        if (count == 0) {
            throw new InsufficientDataException("no values yet");
        }
        return total().quantile(u * count);
    }

    /** The count of values at or below {@code value}, interpolated within its bucket (not a whole number). */
    public double below(double value) {
        return total().below(value / RESOLUTION);
    }

    /** {@link #below} for group {@code g} alone. */
    public double below(int g, double value) {
        return groups[g] == null ? 0 : groupBuckets(g).below(value / RESOLUTION);
    }

    /**
     * One non-empty bucket, over every group: a value inside it (its middle, in the metric's units)
     * and how many values it counts.
     */
    public record Bucket(double value, long count) {
        public Bucket {
            if (!(value >= 0) || count < 1) {
                throw new IllegalArgumentException("a bucket needs a value at least 0 and a count at least 1, got " + value
                        + " and " + count);
            }
        }
    }

    /**
     * The non-empty buckets over every group, in increasing order: enough to rebuild these counts in
     * one group ({@link #ofBuckets}), with the same quantiles and counts below any value.
     */
    public java.util.List<Bucket> buckets() {
        if (count == 0) {
            return java.util.List.of();
        }
        Buckets b = total();
        java.util.List<Bucket> out = new java.util.ArrayList<>(b.low.length);
        for (int i = 0; i < b.low.length; i++) {
            long before = i == 0 ? 0 : b.cumulative[i - 1];
            if (b.cumulative[i] > before) {
                out.add(new Bucket((b.low[i] + (b.next[i] - b.low[i]) / 2) * RESOLUTION, b.cumulative[i] - before));
            }
        }
        return java.util.List.copyOf(out);
    }

    /** Counts in one group from {@code buckets} as {@link #buckets} gives them: each count in the bucket of its value. */
    public static HistogramCounts ofBuckets(java.util.List<Bucket> buckets) {
        PackedHistogram h = newHistogram();
        for (Bucket b : buckets) {
            h.recordValueWithCount(scaled(b.value()), b.count());
        }
        return new HistogramCounts(new PackedHistogram[] {h.getTotalCount() == 0 ? null : h});
    }

    /** Groups with at least one value. */
    public int groupsUsed() {
        int n = 0;
        for (PackedHistogram g : groups) {
            if (g != null && g.getTotalCount() > 0) {
                n++;
            }
        }
        return n;
    }

    /** Equal when every group holds the same counts in the same buckets. */
    @Override
    public boolean equals(Object o) {
        if (!(o instanceof HistogramCounts other) || other.groups.length != groups.length || other.count != count) {
            return false;
        }
        for (int g = 0; g < groups.length; g++) {
            boolean empty = groups[g] == null || groups[g].getTotalCount() == 0;
            boolean otherEmpty = other.groups[g] == null || other.groups[g].getTotalCount() == 0;
            if (empty != otherEmpty || (!empty && !groups[g].equals(other.groups[g]))) {
                return false;
            }
        }
        return true;
    }

    @Override
    public int hashCode() {
        return Long.hashCode(count) * 31 + groups.length;
    }

    @Override
    public String toString() {
        return "HistogramCounts[" + count + " values in " + groupsUsed() + " of " + groups.length + " groups]";
    }

    private Buckets total() {
        Buckets b = total;
        if (b == null) {
            PackedHistogram all = newHistogram();
            for (PackedHistogram g : groups) {
                if (g != null) {
                    all.add(g);
                }
            }
            b = Buckets.of(all);
            total = b;
        }
        return b;
    }

    private Buckets groupBuckets(int g) {
        Buckets[] all = byGroup;
        if (all == null) {
            all = new Buckets[groups.length];
            byGroup = all;
        }
        if (all[g] == null) {
            all[g] = Buckets.of(groups[g]);
        }
        return all[g];
    }

    /** The non-empty buckets of one histogram, in increasing order, with cumulative counts (in scaled units). */
    private record Buckets(long[] low, long[] next, long[] cumulative) {
        static Buckets of(AbstractHistogram h) {
            int n = 0;
            for (HistogramIterationValue ignored : h.recordedValues()) {
                n++;
            }
            long[] low = new long[n];
            long[] next = new long[n];
            long[] cumulative = new long[n];
            int i = 0;
            for (HistogramIterationValue v : h.recordedValues()) {
                long at = v.getValueIteratedTo();
                low[i] = h.lowestEquivalentValue(at);
                next[i] = h.nextNonEquivalentValue(at);
                cumulative[i] = v.getTotalCountToThisValue();
                i++;
            }
            return new Buckets(low, next, cumulative);
        }

        /** The scaled value at cumulative count {@code target}, in metric units. */
        double quantile(double target) {
            for (int i = 0; i < low.length; i++) {
                if (cumulative[i] >= target) {
                    long before = i == 0 ? 0 : cumulative[i - 1];
                    double within = (target - before) / (cumulative[i] - before);
                    return (low[i] + Math.max(0, within) * (next[i] - low[i])) * RESOLUTION;
                }
            }
            return next[low.length - 1] * RESOLUTION;
        }

        /** The count at or below the scaled value {@code v}. */
        double below(double v) {
            double n = 0;
            for (int i = 0; i < low.length; i++) {
                long before = i == 0 ? 0 : cumulative[i - 1];
                if (v >= next[i]) {
                    n = cumulative[i];
                    continue;
                }
                if (v > low[i]) {
                    n = before + (cumulative[i] - before) * (v - low[i]) / (next[i] - low[i]);
                }
                break;
            }
            return n;
        }
    }
}
