package dev.interim.experiment;

import dev.interim.stats.HistogramCounts;
import dev.interim.stats.InsufficientDataException;
import dev.interim.stats.MeanSignificance;
import dev.interim.stats.Moments;
import dev.interim.stats.ProportionCounts;
import dev.interim.stats.ProportionSignificance;
import dev.interim.stats.QuantileSignificance;
import dev.interim.stats.RatioMoments;
import dev.interim.stats.RatioSignificance;
import dev.interim.stats.TestResult;
import org.apache.commons.statistics.distribution.BetaDistribution;
import org.apache.commons.statistics.distribution.ChiSquaredDistribution;

import static dev.interim.stats.Alternative.TWO_SIDED;

/**
 * The effect of a treatment at a look and what the sequential test needs of it: the estimate
 * (treatment − control, or treatment − baseline), its standard error, the statistic on the Z scale,
 * the degrees of freedom behind it, each arm's level with its standard error (for the relative
 * change), and a conservative information for the information fraction.
 *
 * <p>Tests: a two-sample comparison has one standard error, for its statistic and its interval
 * alike: each arm's per-observation variance taken as at least the variance pooled over both arms
 * ({@link ProportionSignificance#twoProportionZAtLeastPooled} for rates per event,
 * {@link MeanSignificance#welchTAtLeastPooled} for means and totals, {@link RatioSignificance#twoSampleAtLeastPooled}
 * for ratios of per-unit sums: ratio metrics, and event metrics under per-unit assignment). It is
 * never below the pooled standard error, whose statistic approximates the permutation test and so
 * holds its level under an uneven split with skewed values; Welch's alone does not, as a small arm
 * that has not met its tail yet shows both a low mean and a low spread. And the interval excludes no
 * change exactly when the test rejects. A t statistic meets the z boundaries through its p-value
 * ({@link TestResult#zEquivalent()}). One-sample tests replace the control by a fixed baseline.
 *
 * <p>Conservative information: the information fraction of a powered horizon is I/I_max with I
 * estimated from the data, and a small sample can estimate a variance far too small (two equal
 * values, no event yet of a rare error), which would end the design at once. So the information
 * that measures progress takes each arm's per-observation variance at the upper end of its
 * one-sided {@value #INFORMATION_CONFIDENCE} confidence interval: the exact (Clopper–Pearson)
 * limits for a rate, the chi-square limit s²(n − 1)/χ²_{n−1} for a variance (the textbook
 * interval for a normal variance; only a guard on the timing here, not part of the test). Large
 * samples lose little by it (about 4% of information at 1,000 per arm); tiny ones cannot end a design.
 *
 * @param effect estimate of the effect, treatment − control (or − baseline)
 * @param standardError its standard error
 * @param z the statistic on the standard normal scale
 * @param degreesOfFreedom of the t reference behind z; +∞ for a z test
 * @param treatmentLevel the treatment arm's rate, mean or ratio
 * @param controlLevel control's, or the baseline
 * @param treatmentLevelError the standard error of the treatment's level
 * @param controlLevelError control's, 0 for a baseline
 * @param conservativeInformation the information that measures progress (see above)
 */
public record Estimate(double effect, double standardError, double z, double degreesOfFreedom,
                       double treatmentLevel, double controlLevel, double treatmentLevelError,
                       double controlLevelError, double conservativeInformation) {

    /** Confidence of the upper variance limits behind {@link #conservativeInformation()}. */
    static final double INFORMATION_CONFIDENCE = 0.8;

    /**
     * The relative change, treatment / control − 1; NaN unless both levels are positive (a ratio of
     * levels of different signs, or over zero, is no change in percent).
     */
    public double relative() {
        return treatmentLevel > 0 && controlLevel > 0 ? treatmentLevel / controlLevel - 1 : Double.NaN;
    }

    /**
     * The standard error of log(treatment / control), by the delta method: √((se_t/m_t)² +
     * (se_c/m_c)²), the arms independent (Deng, Knoblich &amp; Lu 2018, §3.3, percent change). NaN
     * where {@link #relative()} is.
     */
    public double relativeLogError() {
        if (Double.isNaN(relative())) {
            return Double.NaN;
        }
        double t = treatmentLevelError / treatmentLevel;
        double c = controlLevelError / controlLevel;
        return Math.sqrt(t * t + c * c);
    }

    /**
     * The estimate for {@code metric}, or the reason there is none yet (no variance at all, too few
     * observations, no denominator).
     */
    static Result of(MetricDefinition metric, Tally treatment, Tally control) {
        try {
            return new Result(compute(metric, treatment, control), null);
        } catch (InsufficientDataException e) {
            return new Result(null, e.getMessage());
        }
    }

    /** An estimate, or why there is none. */
    record Result(Estimate estimate, String reason) {
    }

    private static Estimate compute(MetricDefinition metric, Tally treatment, Tally control) {
        Double baseline = metric.baseline();
        if (treatment instanceof Tally.Rate t) {
            ProportionCounts a = t.counts();
            if (baseline != null) {
                return from(shifted(ProportionSignificance.oneProportionZ(a, baseline, TWO_SIDED), baseline), a.rate(), baseline,
                        rateError(a), 0, upperRateVariance(a) / a.trials(), 0);
            }
            ProportionCounts b = ((Tally.Rate) control).counts();
            if (a.successes() + b.successes() == 0 || a.successes() + b.successes() == a.trials() + b.trials()) {
                throw new InsufficientDataException("no variance yet: every event so far is "
                        + (a.successes() + b.successes() == 0 ? "a failure" : "a success") + " in both arms");
            }
            return from(ProportionSignificance.twoProportionZAtLeastPooled(a, b, TWO_SIDED), a.rate(), b.rate(), rateError(a),
                    rateError(b),
                    upperRateVariance(a) / a.trials(), upperRateVariance(b) / b.trials());
        }
        if (treatment instanceof Tally.Quantile t) {
            return quantile(metric.quantile(), t.counts(), control == null ? null : ((Tally.Quantile) control).counts(),
                    baseline);
        }
        if (treatment instanceof Tally.Ratio t) {
            RatioMoments a = t.moments();
            if (baseline != null) {
                TestResult r = RatioSignificance.oneSample(a, baseline, TWO_SIDED);
                return from(shifted(r, baseline), a.ratio(), baseline, r.standardError(), 0,
                        upperVariance(a.linearisedVariance(), a.count()) / a.count(), 0);
            }
            RatioMoments b = ((Tally.Ratio) control).moments();
            TestResult r = RatioSignificance.twoSampleAtLeastPooled(a, b, TWO_SIDED);
            return from(r, a.ratio(), b.ratio(), Math.sqrt(a.ratioVariance()), Math.sqrt(b.ratioVariance()),
                    upperVariance(a.linearisedVariance(), a.count()) / a.count(),
                    upperVariance(b.linearisedVariance(), b.count()) / b.count());
        }
        Moments a = ((Tally.Mean) treatment).moments();
        if (baseline != null) {
            TestResult r = MeanSignificance.oneSampleT(a, baseline, TWO_SIDED);
            return from(shifted(r, baseline), a.mean(), baseline, a.standardErrorOfMean(), 0,
                    upperVariance(a.variance(), a.count()) / a.count(), 0);
        }
        Moments b = ((Tally.Mean) control).moments();
        TestResult r = MeanSignificance.welchTAtLeastPooled(a, b, TWO_SIDED);
        return from(r, a.mean(), b.mean(), a.standardErrorOfMean(), b.standardErrorOfMean(),
                upperVariance(a.variance(), a.count()) / a.count(), upperVariance(b.variance(), b.count()) / b.count());
    }

    /**
     * A quantile's difference (or its distance from the baseline) with Woodruff's standard errors
     * ({@link QuantileSignificance}); each arm's level error is its own Woodruff error, and the
     * conservative information takes each arm's variance at its upper limit.
     */
    private static Estimate quantile(double p, HistogramCounts a, HistogramCounts b, Double baseline) {
        if (baseline != null) {
            QuantileSignificance.ArmQuantile t = QuantileSignificance.arm(a, p);
            TestResult r = QuantileSignificance.oneSample(t, baseline, TWO_SIDED);
            return from(shifted(r, baseline), t.quantile(), baseline, t.standardError(), 0, t.conservativeShare(), 0);
        }
        HistogramCounts pooled = a.plus(b);
        QuantileSignificance.ArmQuantile t = QuantileSignificance.arm(a, p, pooled);
        QuantileSignificance.ArmQuantile c = QuantileSignificance.arm(b, p, pooled);
        TestResult r = QuantileSignificance.twoSample(t, c, TWO_SIDED);
        return from(r, t.quantile(), c.quantile(), t.standardError(), c.standardError(), t.conservativeShare(),
                c.conservativeShare());
    }

    /** One-sample results estimate the level; the effect is the level minus the baseline. */
    private static TestResult shifted(TestResult r, double baseline) {
        return new TestResult(r.name(), r.statistic(), r.degreesOfFreedom(), r.pValue(), r.alternative(),
                r.estimate() - baseline, r.standardError());
    }

    private static Estimate from(TestResult r, double treatmentLevel, double controlLevel, double treatmentError,
                                 double controlError, double treatmentShare, double controlShare) {
        double se = r.standardError();
        if (!(se > 0) || !Double.isFinite(r.statistic())) {
            throw new InsufficientDataException("no variance yet: the effect has no standard error");
        }
        double conservative = 1 / (treatmentShare + controlShare);
        return new Estimate(r.estimate(), se, r.zEquivalent(), r.degreesOfFreedom(), treatmentLevel, controlLevel,
                treatmentError, controlError, conservative);
    }

    private static double rateError(ProportionCounts c) {
        double p = c.rate();
        return Math.sqrt(p * (1 - p) / c.trials());
    }

    /**
     * The largest Bernoulli variance p(1 − p) over the two-sided exact (Clopper–Pearson 1934) interval
     * for p whose one-sided limits each have confidence {@link #INFORMATION_CONFIDENCE}.
     */
    static double upperRateVariance(ProportionCounts c) {
        long x = c.successes();
        long n = c.trials();
        double tail = 1 - INFORMATION_CONFIDENCE;
        double lower = x == 0 ? 0 : BetaDistribution.of(x, n - x + 1).inverseCumulativeProbability(tail);
        double upper = x == n ? 1 : BetaDistribution.of(x + 1, n - x).inverseSurvivalProbability(tail);
        if (lower <= 0.5 && upper >= 0.5) {
            return 0.25;
        }
        double p = upper < 0.5 ? upper : lower;
        return p * (1 - p);
    }

    /** s²(n − 1)/χ²_{n−1}(1 − c): the upper limit of a one-sided interval of confidence c for a variance. */
    static double upperVariance(double variance, long n) {
        if (n < 2 || !(variance >= 0)) {
            return Double.POSITIVE_INFINITY;
        }
        double df = n - 1;
        return variance * df / ChiSquaredDistribution.of(df).inverseCumulativeProbability(1 - INFORMATION_CONFIDENCE);
    }
}
