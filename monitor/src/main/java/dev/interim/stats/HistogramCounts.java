package dev.interim.stats;

import org.HdrHistogram.AbstractHistogram;
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
    /** The bucket layout every histogram shares; only its arithmetic is used (never its counts). */
    private static final PackedHistogram LAYOUT = new PackedHistogram(HIGHEST_SCALED, SIGNIFICANT_DIGITS);

    /** Each group's non-empty buckets (an empty group has none). Never changed once here. */
    private final Sparse[] groups;
    private final long count;
    /** Every group's buckets added, made at the first use. */
    private volatile Sparse total;

    private HistogramCounts(Sparse[] groups) {
        this.groups = groups;
        long n = 0;
        for (Sparse g : groups) {
            n += g.total;
        }
        this.count = n;
    }

    /** No values, in {@code groups} groups. */
    public static HistogramCounts empty(int groups) {
        if (groups < 1) {
            throw new IllegalArgumentException("groups must be at least 1, got " + groups);
        }
        Sparse[] none = new Sparse[groups];
        java.util.Arrays.fill(none, Sparse.EMPTY);
        return new HistogramCounts(none);
    }

    /**
     * A snapshot of these histograms, one per group (null for an empty group), which must have the
     * layout of {@link #newHistogram()}; their counts are read, so the caller may go on changing them.
     */
    public static HistogramCounts of(AbstractHistogram[] groups) {
        if (groups.length < 1) {
            throw new IllegalArgumentException("at least one group is needed");
        }
        Sparse[] read = new Sparse[groups.length];
        for (int g = 0; g < groups.length; g++) {
            read[g] = Sparse.of(groups[g]);
        }
        return new HistogramCounts(read);
    }

    /** Counts whose groups are these bucket lists (for {@link RunningHistogram}, which never changes them after). */
    static HistogramCounts ofSparse(Sparse[] groups) {
        return new HistogramCounts(groups.clone());
    }

    /** Group {@code g}'s bucket list (for {@link RunningHistogram}). */
    Sparse sparse(int g) {
        return groups[g];
    }

    /** The lowest value of the bucket that holds the scaled value {@code v}: what a bucket list is keyed by. */
    static long bucketOf(long v) {
        return LAYOUT.lowestEquivalentValue(v);
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
        return groups[g].total;
    }

    /** Group {@code g}'s counts as an HdrHistogram of the shared layout (empty when the group has none), for encoders. */
    public PackedHistogram group(int g) {
        PackedHistogram h = newHistogram();
        Sparse s = groups[g];
        for (int i = 0; i < s.low.length; i++) {
            h.recordValueWithCount(s.low[i], s.count[i]);
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
        Sparse[] sum = new Sparse[n];
        java.util.Arrays.fill(sum, Sparse.EMPTY);
        for (int g = 0; g < groups.length; g++) {
            sum[g % n] = sum[g % n].plus(groups[g]);
        }
        for (int g = 0; g < other.groups.length; g++) {
            sum[g % n] = sum[g % n].plus(other.groups[g]);
        }
        return new HistogramCounts(sum);
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
        return groups[g].below(value / RESOLUTION);
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
        Sparse t = total();
        java.util.List<Bucket> out = new java.util.ArrayList<>(t.low.length);
        for (int i = 0; i < t.low.length; i++) {
            long next = LAYOUT.nextNonEquivalentValue(t.low[i]);
            out.add(new Bucket((t.low[i] + (next - t.low[i]) / 2) * RESOLUTION, t.count[i]));
        }
        return java.util.List.copyOf(out);
    }

    /** Counts in one group from {@code buckets} as {@link #buckets} gives them: each count in the bucket of its value. */
    public static HistogramCounts ofBuckets(java.util.List<Bucket> buckets) {
        PackedHistogram h = newHistogram();
        for (Bucket b : buckets) {
            h.recordValueWithCount(scaled(b.value()), b.count());
        }
        return of(new AbstractHistogram[] {h});
    }

    /** Groups with at least one value. */
    public int groupsUsed() {
        int n = 0;
        for (Sparse g : groups) {
            if (g.total > 0) {
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
            if (!java.util.Arrays.equals(groups[g].low, other.groups[g].low)
                    || !java.util.Arrays.equals(groups[g].count, other.groups[g].count)) {
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

    private Sparse total() {
        Sparse t = total;
        if (t == null) {
            t = Sparse.EMPTY;
            for (Sparse g : groups) {
                t = t.plus(g);
            }
            total = t;
        }
        return t;
    }

    /**
     * The non-empty buckets of one histogram in increasing order: each bucket's lowest value (scaled,
     * as HdrHistogram's layout gives it) and its count. Adding two is a merge of sorted lists, so
     * sums and looks cost the buckets in use, not the layout's whole range (HdrHistogram's own
     * {@code add} walks every index of it).
     */
    static final class Sparse {
        static final Sparse EMPTY = new Sparse(new long[0], new long[0]);
        final long[] low;
        final long[] count;
        final long total;
        /** Cumulative counts and bucket ends, made at the first look. */
        private volatile long[] cumulative;
        private volatile long[] next;

        Sparse(long[] low, long[] count) {
            this.low = low;
            this.count = count;
            long n = 0;
            for (long c : count) {
                n += c;
            }
            this.total = n;
        }

        /** The buckets of {@code h} (null: none), walked bucket by bucket from its lowest value to its highest. */
        static Sparse of(AbstractHistogram h) {
            if (h == null || h.getTotalCount() == 0) {
                return EMPTY;
            }
            long max = h.getMaxValue();
            int n = 0;
            long[] low = new long[64];
            long[] count = new long[64];
            for (long v = h.lowestEquivalentValue(h.getMinValue()); v <= max; v = h.nextNonEquivalentValue(v)) {
                long c = h.getCountAtValue(v);
                if (c == 0) {
                    continue;
                }
                if (n == low.length) {
                    low = java.util.Arrays.copyOf(low, 2 * n);
                    count = java.util.Arrays.copyOf(count, 2 * n);
                }
                low[n] = v;
                count[n] = c;
                n++;
            }
            return new Sparse(java.util.Arrays.copyOf(low, n), java.util.Arrays.copyOf(count, n));
        }

        /**
         * The bucket list of {@code n} bucket keys ({@link #bucketOf}) in any order, which this call
         * sorts in place.
         */
        static Sparse ofKeys(long[] keys, int n) {
            if (n == 0) {
                return EMPTY;
            }
            java.util.Arrays.sort(keys, 0, n);
            long[] low = new long[n];
            long[] count = new long[n];
            int m = 0;
            for (int i = 0; i < n; i++) {
                if (m > 0 && low[m - 1] == keys[i]) {
                    count[m - 1]++;
                } else {
                    low[m] = keys[i];
                    count[m++] = 1;
                }
            }
            return new Sparse(java.util.Arrays.copyOf(low, m), java.util.Arrays.copyOf(count, m));
        }

        Sparse plus(Sparse o) {
            if (o.total == 0) {
                return this;
            }
            if (total == 0) {
                return o;
            }
            long[] l = new long[low.length + o.low.length];
            long[] c = new long[l.length];
            int i = 0;
            int j = 0;
            int n = 0;
            while (i < low.length || j < o.low.length) {
                if (j == o.low.length || (i < low.length && low[i] < o.low[j])) {
                    l[n] = low[i];
                    c[n++] = count[i++];
                } else if (i == low.length || o.low[j] < low[i]) {
                    l[n] = o.low[j];
                    c[n++] = o.count[j++];
                } else {
                    l[n] = low[i];
                    c[n++] = count[i++] + o.count[j++];
                }
            }
            return new Sparse(java.util.Arrays.copyOf(l, n), java.util.Arrays.copyOf(c, n));
        }

        private long[] cumulative() {
            long[] cum = cumulative;
            if (cum == null) {
                long[] ends = new long[low.length];
                cum = new long[low.length];
                long run = 0;
                for (int i = 0; i < low.length; i++) {
                    run += count[i];
                    cum[i] = run;
                    ends[i] = LAYOUT.nextNonEquivalentValue(low[i]);
                }
                next = ends;
                cumulative = cum;
            }
            return cum;
        }

        /** The scaled value at cumulative count {@code target}, in metric units. */
        double quantile(double target) {
            long[] cum = cumulative();
            long[] ends = next;
            int i = java.util.Arrays.binarySearch(cum, (long) Math.ceil(target));
            i = i >= 0 ? i : -i - 1;
            if (i >= low.length) {
                return ends[low.length - 1] * RESOLUTION;
            }
            long before = i == 0 ? 0 : cum[i - 1];
            double within = (target - before) / (cum[i] - before);
            return (low[i] + Math.max(0, within) * (ends[i] - low[i])) * RESOLUTION;
        }

        /** The count at or below the scaled value {@code v}, interpolated within its bucket. */
        double below(double v) {
            if (low.length == 0) {
                return 0;
            }
            long[] cum = cumulative();
            long[] ends = next;
            // The first bucket whose end lies above v.
            int lo = 0;
            int hi = low.length;
            while (lo < hi) {
                int mid = (lo + hi) >>> 1;
                if (ends[mid] <= v) {
                    lo = mid + 1;
                } else {
                    hi = mid;
                }
            }
            if (lo == low.length) {
                return cum[low.length - 1];
            }
            long before = lo == 0 ? 0 : cum[lo - 1];
            if (v <= low[lo]) {
                return before;
            }
            return before + (cum[lo] - before) * (v - low[lo]) / (ends[lo] - low[lo]);
        }
    }
}
