package dev.interim.stats;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.util.Arrays;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * The buckets of a quantile's counts, as the HTTP API writes them and the report reads them back:
 * rebuilt in one group, they give the same quantiles and counts below any value as the counts they
 * came from, over the whole range the histograms keep (10⁻⁶ to 10¹²).
 */
// Source: the counts are checked against an exact computation (the number of values, a sort); the rest
// is equality with the counts the buckets came from (their own ground truth).
class HistogramBucketsTest {

    @Test
    void bucketsRebuildTheSameQuantilesInOneGroup() {
        SplittableRandom random = new SplittableRandom(31);
        RunningHistogram running = new RunningHistogram(HistogramCounts.UNIT_GROUPS);
        double[] values = new double[20_000];
        for (int i = 0; i < values.length; i++) {
            // log-uniform over 18 decades, with the ends themselves
            double v = i == 0 ? HistogramCounts.RESOLUTION : i == 1 ? HistogramCounts.HIGHEST : Math.pow(10, -6 + 18 * random.nextDouble());
            values[i] = v;
            running.accept(v, random.nextInt(HistogramCounts.UNIT_GROUPS));
        }
        HistogramCounts counts = running.snapshot();
        List<HistogramCounts.Bucket> buckets = counts.buckets();

        assertThat(buckets.stream().mapToLong(HistogramCounts.Bucket::count).sum()).isEqualTo(values.length);
        assertThat(buckets).isSortedAccordingTo((a, b) -> Double.compare(a.value(), b.value()));
        HistogramCounts rebuilt = HistogramCounts.ofBuckets(buckets);
        assertThat(rebuilt.groupCount()).isEqualTo(1);
        assertThat(rebuilt.count()).isEqualTo(values.length);
        assertThat(rebuilt.buckets()).isEqualTo(buckets);
        for (double u = 0; u <= 1; u += 0.001) {
            assertThat(rebuilt.quantile(u)).as("u = %s", u).isEqualTo(counts.quantile(u));
        }
        double[] sorted = values.clone();
        Arrays.sort(sorted);
        for (int k : new int[] {1, 100, 5_000, 10_000, 19_800, 19_999}) {
            double v = sorted[k - 1];
            assertThat(rebuilt.below(v)).isEqualTo(counts.below(v));
            // The values at or below the k-th smallest: k, give or take the one bucket holding it.
            assertThat(rebuilt.below(v)).isCloseTo(k, within((double) bucketCountAt(buckets, v)));
        }
    }

    @Test
    void noValuesGiveNoBuckets() {
        assertThat(HistogramCounts.empty(1).buckets()).isEmpty();
        assertThat(HistogramCounts.ofBuckets(List.of()).count()).isZero();
    }

    private static long bucketCountAt(List<HistogramCounts.Bucket> buckets, double v) {
        HistogramCounts.Bucket nearest = buckets.get(0);
        for (HistogramCounts.Bucket b : buckets) {
            if (Math.abs(Math.log(b.value() / v)) < Math.abs(Math.log(nearest.value() / v))) {
                nearest = b;
            }
        }
        return nearest.count();
    }
}
