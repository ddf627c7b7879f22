package dev.interim.simulate;

import java.util.List;

/**
 * The result of one simulation: its settings, and for each comparison the operating
 * characteristics under each effect. Immutable. Holds nothing that depends on the number of threads
 * or on time, so the same settings give the same report.
 *
 * @param runs runs per comparison and effect
 * @param stream the random stream
 * @param fractions the information fractions of the looks
 * @param effectUnit the units effects were given in, or null for the default effects
 * @param comparisons one per experiment × metric, in configuration order
 */
public record SimulationReport(long runs, long stream, double[] fractions, EffectUnit effectUnit,
                               List<ComparisonResult> comparisons) {

    public SimulationReport {
        fractions = fractions.clone();
        comparisons = List.copyOf(comparisons);
    }

    @Override
    public double[] fractions() {
        return fractions.clone();
    }

    /** Whether the looks are 1/K, 2/K, …, 1. */
    public boolean equallySpaced() {
        int k = fractions.length;
        for (int i = 0; i < k; i++) {
            if (Math.abs(fractions[i] - (double) (i + 1) / k) > 1e-12) {
                return false;
            }
        }
        return true;
    }

    /** One comparison and its results, effect by effect. */
    public record ComparisonResult(SimulatedComparison comparison, List<EffectResult> effects) {
        public ComparisonResult {
            effects = List.copyOf(effects);
        }
    }

    /**
     * One effect: the simulated characteristics, and the same by recursion (null above
     * {@value RecursionCharacteristics#MAX_LOOKS} looks).
     */
    public record EffectResult(SimulatedEffect effect, OperatingCharacteristics simulated,
                               RecursionCharacteristics recursion) {}
}
