package dev.interim.stats;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.interim.reference.PythonReference;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@link HistogramCounts} and {@link QuantileSignificance} against independent computations: exact
 * sample quantiles by sorting, Woodruff's interval computed by NumPy from the raw values
 * (src/test/resources/reference/woodruff.py), and the large-sample variance of a sample quantile,
 * p(1 − p)/(n·f(ξ_p)²) (Serfling 1980, "Approximation Theorems of Mathematical Statistics", §2.3.3;
 * from memory).
 */
class QuantileSignificanceTest {
    private static final ObjectMapper JSON = new ObjectMapper();
    private static final double[] PROBABILITIES = {0.5, 0.95, 0.99, 0.999};

    /** Seeded latencies: lognormal, a share of zeros (cache hits), ties from rounding to 0.1 ms. */
    private static double[] latencies(long seed, int n) {
        return latencies(seed, n, 0.1);
    }

    /** The same, rounded to {@code step} (0: not rounded). */
    private static double[] latencies(long seed, int n, double step) {
        SplittableRandom r = new SplittableRandom(seed);
        double[] x = new double[n];
        for (int i = 0; i < n; i++) {
            double v = Math.exp(3 + 0.8 * gaussian(r));
            x[i] = r.nextDouble() < 0.05 ? 0 : step == 0 ? v : Math.round(v / step) * step;
        }
        return x;
    }

    private static double gaussian(SplittableRandom r) {
        return Math.sqrt(-2 * Math.log(1 - r.nextDouble())) * Math.cos(2 * Math.PI * r.nextDouble());
    }

    private static HistogramCounts counted(double[] values, int[] groups, int groupCount) {
        RunningHistogram h = new RunningHistogram(groupCount);
        for (int i = 0; i < values.length; i++) {
            h.accept(values[i], groups == null ? 0 : groups[i]);
        }
        return h.snapshot();
    }

    @Test
    void quantilesLieWithinTheStatedPrecisionOfTheSampleAtTheirRank() {
        for (long seed = 1; seed <= 5; seed++) {
            double[] x = latencies(seed, 20_000);
            HistogramCounts h = counted(x, null, 1);
            double[] sorted = x.clone();
            Arrays.sort(sorted);
            for (double p : PROBABILITIES) {
                // Source: the order statistics around rank p·n (exact sample quantiles, by a sort).
                double low = sorted[(int) Math.max(0, Math.floor(p * x.length) - 1)];
                double high = sorted[(int) Math.min(x.length - 1, Math.ceil(p * x.length) - 1)];
                double q = h.quantile(p);
                assertThat(q).as("seed %d p %s", seed, p)
                        .isBetween(low * (1 - HistogramCounts.RELATIVE_PRECISION) - HistogramCounts.RESOLUTION,
                                high * (1 + HistogramCounts.RELATIVE_PRECISION) + HistogramCounts.RESOLUTION);
            }
        }
    }

    @Test
    void sumsOfPartitionsAreExactlyTheHistogramOfEveryValue() {
        double[] x = latencies(7, 40_000);
        int[] groups = new int[x.length];
        SplittableRandom r = new SplittableRandom(8);
        for (int i = 0; i < groups.length; i++) {
            groups[i] = r.nextInt(HistogramCounts.UNIT_GROUPS);
        }
        HistogramCounts all = counted(x, groups, HistogramCounts.UNIT_GROUPS);
        HistogramCounts sum = HistogramCounts.empty(1);
        for (int part = 0; part < 4; part++) {
            RunningHistogram h = new RunningHistogram(HistogramCounts.UNIT_GROUPS);
            for (int i = part; i < x.length; i += 4) {
                h.accept(x[i], groups[i]);
            }
            sum = sum.plus(h.snapshot());
        }
        assertThat(sum.count()).isEqualTo(all.count());
        for (int g = 0; g < HistogramCounts.UNIT_GROUPS; g++) {
            assertThat(sum.count(g)).isEqualTo(all.count(g));
            assertThat(sum.group(g)).isEqualTo(all.group(g));
        }
        for (double p = 0.01; p < 1; p += 0.01) {
            assertThat(sum.quantile(p)).isEqualTo(all.quantile(p));
        }
        // Continuing a restored snapshot gives what one histogram of everything gives.
        RunningHistogram restored = RunningHistogram.from(counted(Arrays.copyOf(x, 1000), Arrays.copyOf(groups, 1000),
                HistogramCounts.UNIT_GROUPS));
        for (int i = 1000; i < x.length; i++) {
            restored.accept(x[i], groups[i]);
        }
        assertThat(restored.snapshot().quantile(0.99)).isEqualTo(all.quantile(0.99));
    }

    @Test
    void woodruffAgreesWithNumPyOnTheRawValues(@TempDir Path dir) throws Exception {
        Assumptions.assumeTrue(PythonReference.imports("numpy"),
                "SKIPPED: python3 with NumPy is not available here (Debian python3-numpy); the Woodruff cross-check needs it");
        // Not rounded: with ties a few values apart, NumPy's interval steps between them (the
        // histogram interpolates), which is a difference of rounding, not of method.
        double[][] arms = {latencies(11, 60_000, 0), latencies(12, 80_000, 0)};
        // The second arm's events come from units: 3,000 units with their own level (clustered).
        int[] unitGroups = new int[arms[1].length];
        SplittableRandom r = new SplittableRandom(13);
        double[] unitLevel = new double[3000];
        for (int u = 0; u < unitLevel.length; u++) {
            unitLevel[u] = Math.exp(0.5 * gaussian(r));
        }
        for (int i = 0; i < arms[1].length; i++) {
            int unit = r.nextInt(unitLevel.length);
            arms[1][i] = arms[1][i] * unitLevel[unit];
            unitGroups[i] = unit % HistogramCounts.UNIT_GROUPS;
        }
        ObjectNode input = JSON.createObjectNode().put("z", QuantileSignificance.Z);
        ArrayNode ps = input.putArray("p");
        for (double p : PROBABILITIES) {
            ps.add(p);
        }
        ArrayNode a = input.putArray("arms");
        for (int k = 0; k < 2; k++) {
            ObjectNode arm = a.addObject();
            ArrayNode v = arm.putArray("values");
            Arrays.stream(arms[k]).forEach(v::add);
            if (k == 1) {
                ArrayNode g = arm.putArray("groups");
                Arrays.stream(unitGroups).forEach(g::add);
            } else {
                arm.putNull("groups");
            }
        }
        JsonNode out = PythonReference.run("woodruff.py", dir, JSON.writeValueAsString(input), 120);
        System.out.println("NumPy " + out.get("numpy").asText() + ": Woodruff intervals cross-checked on 2 arms × 4 quantiles");
        HistogramCounts[] counts = {counted(arms[0], null, 1), counted(arms[1], unitGroups, HistogramCounts.UNIT_GROUPS)};
        for (int k = 0; k < 2; k++) {
            JsonNode ref = out.get("arms").get(k);
            for (int i = 0; i < PROBABILITIES.length; i++) {
                double p = PROBABILITIES[i];
                QuantileSignificance.ArmQuantile q = QuantileSignificance.arm(counts[k], p);
                double exact = ref.get("quantile").get(i).asDouble();
                // Source: NumPy's inverted-CDF sample quantile; tolerance the histogram's bucket width.
                assertThat(q.quantile()).as("arm %d p %s quantile", k, p)
                        .isCloseTo(exact, within(exact * 2 * HistogramCounts.RELATIVE_PRECISION + 0.1));
                // The share's standard error: the binomial one is exact; the grouped one uses the
                // interpolated count at the estimate, where NumPy counts the values at or below the
                // exact order statistic (a difference of part of one bucket's count).
                assertThat(q.shareError()).as("arm %d p %s share error", k, p)
                        .isCloseTo(ref.get("share_se").get(i).asDouble(), within(0.05 * ref.get("share_se").get(i).asDouble()));
                // Woodruff's standard error: the histogram interpolates within buckets and NumPy steps
                // between order statistics, so the widths agree to a few buckets over an interval
                // dozens of buckets wide; 10% allows the 0.999 quantile's sparse tail.
                double se = ref.get("se").get(i).asDouble();
                assertThat(q.standardError()).as("arm %d p %s Woodruff SE", k, p).isCloseTo(se, within(0.10 * se));
            }
        }
    }

    @Test
    void largeSamplesAgreeWithTheAsymptoticVarianceOfASampleQuantile() {
        // Exponential(1): ξ_p = −ln(1 − p), f(ξ_p) = 1 − p, so se = √(p/((1 − p)·n)) (Serfling 1980; from memory).
        SplittableRandom r = new SplittableRandom(21);
        int n = 400_000;
        RunningHistogram h = new RunningHistogram(1);
        for (int i = 0; i < n; i++) {
            h.accept(-Math.log(1 - r.nextDouble()), 0);
        }
        HistogramCounts c = h.snapshot();
        for (double p : new double[] {0.5, 0.95, 0.99}) {
            QuantileSignificance.ArmQuantile q = QuantileSignificance.arm(c, p);
            double truth = -Math.log(1 - p);
            double se = Math.sqrt(p / ((1 - p) * n));
            assertThat(q.quantile()).as("p %s", p).isCloseTo(truth, within(4 * se + truth * HistogramCounts.RELATIVE_PRECISION));
            // Woodruff's width estimates 1/f by a difference quotient over ±1.96 s: 8% covers its noise at p = 0.99.
            assertThat(q.standardError()).as("p %s se", p).isCloseTo(se, within(0.08 * se));
        }
    }

    @Test
    void aQuantileWaitsForEnoughValuesBeyondIt() {
        HistogramCounts few = counted(latencies(31, 4_000), null, 1);
        // 4,000 values leave 40 beyond the 0.99 quantile: fewer than the 50 required.
        assertThatThrownBy(() -> QuantileSignificance.arm(few, 0.99))
                .isInstanceOf(InsufficientDataException.class)
                .hasMessageContaining("needs 50 values beyond it").hasMessageContaining("5000 values");
        assertThat(QuantileSignificance.arm(few, 0.95).quantile()).isPositive();
        // Units: values of fewer than 8 groups are not enough under per-unit assignment.
        RunningHistogram h = new RunningHistogram(HistogramCounts.UNIT_GROUPS);
        double[] x = latencies(32, 20_000);
        for (int i = 0; i < x.length; i++) {
            h.accept(x[i], i % 5);
        }
        assertThatThrownBy(() -> QuantileSignificance.arm(h.snapshot(), 0.5))
                .isInstanceOf(InsufficientDataException.class).hasMessageContaining("at least 8 groups");
    }

    @Test
    void theTwoSampleStatisticIsTheDifferenceOverTheCombinedError() {
        HistogramCounts a = counted(latencies(41, 30_000), null, 1);
        double[] slower = latencies(42, 30_000);
        for (int i = 0; i < slower.length; i++) {
            slower[i] *= 1.05;
        }
        HistogramCounts b = counted(slower, null, 1);
        TestResult t = QuantileSignificance.twoSample(b, a, 0.95, Alternative.GREATER);
        QuantileSignificance.ArmQuantile qa = QuantileSignificance.arm(a, 0.95, a.plus(b));
        QuantileSignificance.ArmQuantile qb = QuantileSignificance.arm(b, 0.95, a.plus(b));
        assertThat(t.estimate()).isCloseTo(qb.quantile() - qa.quantile(), within(1e-12));
        assertThat(t.standardError()).isCloseTo(Math.hypot(qa.standardError(), qb.standardError()), within(1e-12));
        assertThat(t.isZTest()).isTrue();
        // A 5% slowdown of every value moves p95 (about 100 ms) by about 5 ms: seen at 30,000 events per arm.
        assertThat(t.pValue()).isLessThan(0.01);
        // The pooled floor: each arm's width is at least the pooled one at the same shares.
        assertThat(qa.standardError()).isGreaterThanOrEqualTo(QuantileSignificance.arm(a, 0.95).standardError() - 1e-12);
    }
}
