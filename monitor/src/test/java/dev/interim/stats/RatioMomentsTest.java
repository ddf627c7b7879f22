package dev.interim.stats;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.IOException;
import java.io.InputStream;
import java.math.BigDecimal;
import java.math.MathContext;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@link RunningRatioMoments} and {@link RatioSignificance} against independent computations.
 *
 * <p>Oracle of the moments: a direct two-pass computation in exact decimal arithmetic (BigDecimal,
 * 60 digits) of the means, Σ(x − x̄)², Σ(y − ȳ)² and Σ(x − x̄)(y − ȳ) of the pairs present, so the
 * only rounding is the running tally's own. Source of the merge rule: Chan, Golub &amp; LeVeque
 * (1979), pairwise update of the co-moment.
 *
 * <p>Oracle of the test: the delta-method variance of Deng, Knoblich &amp; Lu (2018, KDD, "Applying
 * the Delta Method in Metric Analytics"), Var(X̄/Ȳ) ≈ (σx²/μy² − 2μxσxy/μy³ + μx²σy²/μy⁴)/n, written
 * out term by term with NumPy (src/test/resources/reference/delta_ratio.py) through python3 (or
 * INTERIM_PYTHON); skipped, with the reason, where NumPy is absent.
 */
class RatioMomentsTest {
    private static final MathContext MC = new MathContext(60);
    private static final ObjectMapper JSON = new ObjectMapper();

    /** Exact two-pass moments of the pairs: the oracle. */
    private static double[] exact(List<double[]> pairs) {
        int n = pairs.size();
        BigDecimal sx = BigDecimal.ZERO;
        BigDecimal sy = BigDecimal.ZERO;
        for (double[] p : pairs) {
            sx = sx.add(new BigDecimal(p[0]));
            sy = sy.add(new BigDecimal(p[1]));
        }
        BigDecimal mx = sx.divide(BigDecimal.valueOf(n), MC);
        BigDecimal my = sy.divide(BigDecimal.valueOf(n), MC);
        BigDecimal qx = BigDecimal.ZERO;
        BigDecimal qy = BigDecimal.ZERO;
        BigDecimal qxy = BigDecimal.ZERO;
        for (double[] p : pairs) {
            BigDecimal dx = new BigDecimal(p[0]).subtract(mx);
            BigDecimal dy = new BigDecimal(p[1]).subtract(my);
            qx = qx.add(dx.multiply(dx));
            qy = qy.add(dy.multiply(dy));
            qxy = qxy.add(dx.multiply(dy));
        }
        return new double[] {n, mx.doubleValue(), my.doubleValue(), qx.doubleValue(), qy.doubleValue(), qxy.doubleValue()};
    }

    private static void assertMatches(RatioMoments m, List<double[]> pairs, double relative, String what) {
        double[] e = exact(pairs);
        assertThat(m.count()).as(what + ": count").isEqualTo((long) e[0]);
        assertThat(m.meanX()).as(what + ": mean x").isCloseTo(e[1], within(relative * (1 + Math.abs(e[1]))));
        assertThat(m.meanY()).as(what + ": mean y").isCloseTo(e[2], within(relative * (1 + Math.abs(e[2]))));
        double scale = 1 + e[3] + e[4];
        assertThat(m.sumSquaredDeviationsX()).as(what + ": Σ(x − x̄)²").isCloseTo(e[3], within(relative * scale));
        assertThat(m.sumSquaredDeviationsY()).as(what + ": Σ(y − ȳ)²").isCloseTo(e[4], within(relative * scale));
        assertThat(m.sumCrossDeviations()).as(what + ": Σ(x − x̄)(y − ȳ)").isCloseTo(e[5], within(relative * scale));
    }

    private static double[] pair(SplittableRandom r) {
        // Per-unit sums: a count of events (denominator) and a skewed total (numerator), correlated.
        double y = 1 + r.nextInt(12);
        double x = y * Math.exp(3 + 0.8 * gaussian(r)) + (r.nextDouble() < 0.2 ? 0 : r.nextDouble() * 10);
        return new double[] {Math.rint(x * 100) / 100, y};
    }

    private static double gaussian(SplittableRandom r) {
        return Math.sqrt(-2 * Math.log(1 - r.nextDouble())) * Math.cos(2 * Math.PI * r.nextDouble());
    }

    @Test
    void acceptRemoveAndReplaceAgreeWithAnExactTwoPassComputation() {
        SplittableRandom r = new SplittableRandom(20_180_819);
        RunningRatioMoments running = new RunningRatioMoments();
        List<double[]> present = new ArrayList<>();
        for (int step = 0; step < 4_000; step++) {
            int action = present.size() < 3 ? 0 : r.nextInt(3);
            if (action == 0) {
                double[] p = pair(r);
                running.accept(p[0], p[1]);
                present.add(p);
            } else if (action == 1) {
                double[] p = present.remove(r.nextInt(present.size()));
                running.remove(p[0], p[1]);
            } else {
                // A unit's sums grow: its pair is replaced, as the tally stage does per event.
                int i = r.nextInt(present.size());
                double[] before = present.get(i);
                double[] after = {before[0] + Math.rint(r.nextDouble() * 5000) / 100, before[1] + 1};
                running.replace(before[0], before[1], after[0], after[1]);
                present.set(i, after);
            }
            if (step % 97 == 0 || step == 3_999) {
                assertMatches(running.snapshot(), present, 1e-9, "step " + step);
            }
        }
        // Removing all but two and then everything leaves a clean state.
        while (present.size() > 2) {
            double[] p = present.remove(present.size() - 1);
            running.remove(p[0], p[1]);
        }
        assertMatches(running.snapshot(), present, 1e-9, "two left");
        for (double[] p : List.copyOf(present)) {
            running.remove(p[0], p[1]);
        }
        assertThat(running.snapshot()).isEqualTo(RatioMoments.EMPTY);
    }

    @Test
    void chanMergeOfDisjointSamplesEqualsOnePassOverAll() {
        SplittableRandom r = new SplittableRandom(1979);
        for (int trial = 0; trial < 50; trial++) {
            int na = r.nextInt(40);
            int nb = r.nextInt(40);
            List<double[]> all = new ArrayList<>();
            RunningRatioMoments a = new RunningRatioMoments();
            RunningRatioMoments b = new RunningRatioMoments();
            RunningRatioMoments one = new RunningRatioMoments();
            for (int i = 0; i < na + nb; i++) {
                double[] p = pair(r);
                (i < na ? a : b).accept(p[0], p[1]);
                one.accept(p[0], p[1]);
                all.add(p);
            }
            RatioMoments merged = a.snapshot().plus(b.snapshot());
            if (all.isEmpty()) {
                assertThat(merged).isEqualTo(RatioMoments.EMPTY);
                continue;
            }
            assertMatches(merged, all, 1e-11, "merge, trial " + trial);
            RatioMoments single = one.snapshot();
            assertThat(merged.count()).isEqualTo(single.count());
            assertThat(merged.sumCrossDeviations()).as("Chan merge = one pass")
                    .isCloseTo(single.sumCrossDeviations(), within(1e-10 * (1 + single.sumSquaredDeviationsX())));
            assertThat(merged.ratio()).isCloseTo(single.ratio(), within(1e-12 * Math.abs(single.ratio())));
        }
    }

    @Test
    void restoredTallyContinuesAsIfNeverInterrupted() {
        SplittableRandom r = new SplittableRandom(7);
        RunningRatioMoments whole = new RunningRatioMoments();
        RunningRatioMoments first = new RunningRatioMoments();
        List<double[]> all = new ArrayList<>();
        for (int i = 0; i < 30; i++) {
            double[] p = pair(r);
            whole.accept(p[0], p[1]);
            first.accept(p[0], p[1]);
            all.add(p);
        }
        RunningRatioMoments restored = RunningRatioMoments.from(first.snapshot());
        for (int i = 0; i < 30; i++) {
            double[] p = pair(r);
            whole.accept(p[0], p[1]);
            restored.accept(p[0], p[1]);
            all.add(p);
        }
        assertThat(restored.snapshot()).isEqualTo(whole.snapshot());
        assertMatches(restored.snapshot(), all, 1e-10, "restored");
    }

    @Test
    void deltaMethodVarianceIsTheFormulaOfDengKnoblichAndLuWrittenOut() {
        // Source: Deng, Knoblich & Lu (2018): Var(X̄/Ȳ) ≈ (σx²/μy² − 2μxσxy/μy³ + μx²σy²/μy⁴)/n,
        // with sample (n − 1) moments; evaluated here term by term, in exact decimals.
        double[] x = {3, 0, 7, 2, 11, 4, 0, 5};
        double[] y = {2, 1, 4, 2, 6, 3, 1, 2};
        RatioMoments m = RatioMoments.of(x, y);
        List<double[]> pairs = new ArrayList<>();
        for (int i = 0; i < x.length; i++) {
            pairs.add(new double[] {x[i], y[i]});
        }
        double[] e = exact(pairs);
        double n = e[0];
        double mx = e[1];
        double my = e[2];
        double sxx = e[3] / (n - 1);
        double syy = e[4] / (n - 1);
        double sxy = e[5] / (n - 1);
        double formula = (sxx / (my * my) - 2 * mx * sxy / (my * my * my) + mx * mx * syy / (my * my * my * my)) / n;
        assertThat(m.ratioVariance()).isCloseTo(formula, within(1e-14));
        assertThat(m.ratio()).isCloseTo(mx / my, within(1e-15));
    }

    @Test
    void welchTOnTheLinearisationAgreesWithNumpy(@TempDir Path dir) throws Exception {
        Assumptions.assumeTrue(dev.interim.reference.PythonReference.imports("numpy"),
                "SKIPPED: python3 with NumPy is not available here (Debian python3-numpy); the delta-method "
                        + "cross-check needs it");
        // A small fixed data set: per-unit error counts (x) over requests (y), two arms.
        double[][] xs = {{0, 1, 0, 3, 0, 0, 2, 1, 0, 5, 0, 1}, {1, 0, 0, 0, 2, 0, 0, 1, 0, 0}};
        double[][] ys = {{4, 7, 2, 12, 3, 5, 9, 6, 1, 20, 3, 4}, {6, 3, 8, 2, 11, 5, 4, 7, 3, 2}};
        ObjectNode input = JSON.createObjectNode();
        ArrayNode arms = input.putArray("arms");
        for (int a = 0; a < 2; a++) {
            ObjectNode arm = arms.addObject();
            ArrayNode xa = arm.putArray("x");
            ArrayNode ya = arm.putArray("y");
            for (int i = 0; i < xs[a].length; i++) {
                xa.add(xs[a][i]);
                ya.add(ys[a][i]);
            }
        }
        JsonNode out = dev.interim.reference.PythonReference.run("delta_ratio.py", dir, JSON.writeValueAsString(input), 120);
        System.out.println("NumPy " + out.get("numpy").asText() + ": delta-method variance cross-checked on 2 arms");
        RatioMoments a = RatioMoments.of(xs[0], ys[0]);
        RatioMoments b = RatioMoments.of(xs[1], ys[1]);
        RatioMoments[] both = {a, b};
        for (int i = 0; i < 2; i++) {
            JsonNode arm = out.get("arms").get(i);
            // Source: Deng, Knoblich & Lu (2018), Var(X̄/Ȳ) formula, as NumPy evaluates it.
            assertThat(both[i].ratio()).as("arm %d ratio", i).isCloseTo(arm.get("ratio").asDouble(), within(1e-13));
            assertThat(both[i].ratioVariance()).as("arm %d Var(x̄/ȳ)", i)
                    .isCloseTo(arm.get("variance").asDouble(), within(1e-12 * arm.get("variance").asDouble()));
        }
        TestResult t = RatioSignificance.twoSample(a, b, Alternative.TWO_SIDED);
        // Source: Welch (1947) t and Welch–Satterthwaite df on the delta-method variances (NumPy).
        assertThat(t.statistic()).as("Welch t").isCloseTo(out.get("t").asDouble(), within(1e-10));
        assertThat(t.degreesOfFreedom()).as("Welch–Satterthwaite df").isCloseTo(out.get("df").asDouble(), within(1e-9));
        assertThat(t.standardError()).isCloseTo(Math.sqrt(out.get("arms").get(0).get("variance").asDouble()
                + out.get("arms").get(1).get("variance").asDouble()), within(1e-13));
        // The statistic under no change (residuals at the common ratio, pooled) and the interval's
        // standard error with each arm's variance at least the pooled one, as delta_ratio.py computes them.
        TestResult pooled = RatioSignificance.twoSampleUnderNull(a, b, Alternative.TWO_SIDED);
        assertThat(pooled.statistic()).as("pooled t").isCloseTo(out.get("t_pooled").asDouble(), within(1e-10));
        assertThat(pooled.degreesOfFreedom()).isEqualTo(20.0);
        TestResult floored = RatioSignificance.twoSampleAtLeastPooled(a, b, Alternative.TWO_SIDED);
        assertThat(floored.standardError()).isCloseTo(out.get("se_floored").asDouble(), within(1e-12));
        assertThat(floored.degreesOfFreedom()).isCloseTo(out.get("df_floored").asDouble(), within(1e-9));
        assertThat(floored.standardError()).as("never below the statistic's").isGreaterThanOrEqualTo(pooled.standardError());
    }
}
