package dev.interim.experiment;

import dev.interim.stats.ChiSquareGoodnessOfFit;
import java.util.List;
import java.util.Map;

/**
 * Sample-ratio check: a chi-square goodness-of-fit test of the exposures per arm against the
 * configured split. A broken split means the assignment or the logging is broken, and no effect
 * estimate can be trusted; decisions are held while it lasts. The usual level is strict
 * (p < 0.001) because the check runs at every look.
 *
 * @param pValue the test's p-value (1 while there are too few exposures to test)
 * @param mismatch whether the p-value is below the experiment's threshold
 */
public record SampleRatio(double pValue, boolean mismatch) {

    /** Too few exposures to say anything: not a mismatch. */
    public static final SampleRatio UNKNOWN = new SampleRatio(1, false);

    /** Every arm needs at least this many expected exposures for the chi-square approximation (common practice: 5). */
    static final double MIN_EXPECTED = 5;

    static SampleRatio check(ExperimentDefinition experiment, Map<String, Long> exposures) {
        if (experiment.metrics().stream().allMatch(m -> m.baseline() != null)) {
            // A single-arm rollout compared with fixed baselines: the control arm carries no traffic
            // and there is no split to check.
            return UNKNOWN;
        }
        List<String> arms = experiment.arms();
        long[] observed = new long[arms.size()];
        double[] shares = new double[arms.size()];
        long total = 0;
        double weight = 0;
        for (int i = 0; i < arms.size(); i++) {
            observed[i] = exposures.getOrDefault(arms.get(i), 0L);
            shares[i] = experiment.split().get(arms.get(i));
            total += observed[i];
            weight += shares[i];
        }
        for (double share : shares) {
            if (total * share / weight < MIN_EXPECTED) {
                return UNKNOWN;
            }
        }
        double p = ChiSquareGoodnessOfFit.test(observed, shares).pValue();
        return new SampleRatio(p, p < experiment.sampleRatioThreshold());
    }
}
