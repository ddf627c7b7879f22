package dev.interim.experiment;

import dev.interim.stats.InsufficientDataException;
import dev.interim.stats.MeanTests;
import dev.interim.stats.ProportionCounts;
import dev.interim.stats.ProportionTests;
import dev.interim.stats.TestResult;

import static dev.interim.stats.Alternative.TWO_SIDED;

/**
 * The effect of a treatment at a look and what the sequential test needs of it: the estimate
 * (treatment − control, or treatment − baseline), its standard error, the statistic on the Z scale,
 * the information 1/se², and the per-observation variances that size the planned information.
 *
 * <p>Rates use the two-proportion z test (pooled standard error for the statistic, unpooled for the
 * information and interval); means use Welch's t, mapped to the Z scale through its p-value so that
 * small samples meet z boundaries correctly (DESIGN.md, Statistics). One-sample tests replace the
 * control by a fixed baseline.
 *
 * @param effect estimate of the effect
 * @param standardError its standard error
 * @param z the statistic on the standard normal scale
 * @param treatmentVariance variance of one treatment observation (p(1 − p) for rates)
 * @param controlVariance variance of one control observation, 0 against a baseline
 */
public record Estimate(double effect, double standardError, double z, double treatmentVariance,
                       double controlVariance) {

    /** Information I = 1/se². */
    public double information() {
        return 1 / (standardError * standardError);
    }

    /**
     * The estimate for {@code metric}, or empty when the data cannot support a test yet (no
     * variance at all, or too few observations).
     */
    static java.util.Optional<Estimate> of(MetricDefinition metric, Tally treatment, Tally control) {
        try {
            return java.util.Optional.of(compute(metric, treatment, control));
        } catch (InsufficientDataException e) {
            return java.util.Optional.empty();
        }
    }

    private static Estimate compute(MetricDefinition metric, Tally treatment, Tally control) {
        Double baseline = metric.baseline();
        if (treatment instanceof Tally.Rate t) {
            ProportionCounts a = t.counts();
            double va = variance(a);
            if (baseline != null) {
                return from(ProportionTests.oneProportionZ(a, baseline, TWO_SIDED), va, 0);
            }
            ProportionCounts b = ((Tally.Rate) control).counts();
            return from(ProportionTests.twoProportionZ(a, b, TWO_SIDED), va, variance(b));
        }
        Tally.Mean t = (Tally.Mean) treatment;
        if (baseline != null) {
            TestResult r = MeanTests.oneSampleT(t.moments(), baseline, TWO_SIDED);
            return from(r, t.moments().variance(), 0);
        }
        Tally.Mean c = (Tally.Mean) control;
        return from(MeanTests.welchT(t.moments(), c.moments(), TWO_SIDED), t.moments().variance(), c.moments().variance());
    }

    private static Estimate from(TestResult r, double treatmentVariance, double controlVariance) {
        double se = r.standardError();
        if (!(se > 0) || !Double.isFinite(r.statistic())) {
            throw new InsufficientDataException("no variance yet: the effect has no standard error");
        }
        return new Estimate(r.estimate(), se, r.zEquivalent(), treatmentVariance, controlVariance);
    }

    private static double variance(ProportionCounts c) {
        double p = c.rate();
        return p * (1 - p);
    }
}
