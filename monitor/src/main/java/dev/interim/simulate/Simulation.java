package dev.interim.simulate;

import java.util.ArrayList;
import java.util.List;

/**
 * Runs a simulation: the effects of each comparison, the Monte Carlo runs on worker threads, and
 * the recursion values beside them.
 *
 * @param runs runs per comparison and effect (at least 1)
 * @param threads worker threads (at least 1); the results do not depend on it
 * @param stream the random stream: the same stream gives the same results
 * @param effects the effects to simulate, or null for each comparison's defaults
 * @param effectUnit the units of {@code effects}
 */
public record Simulation(long runs, int threads, long stream, double[] effects, EffectUnit effectUnit) {

    public Simulation {
        if (runs < 1) {
            throw new IllegalArgumentException("the number of runs must be at least 1, got " + runs);
        }
        if (threads < 1) {
            throw new IllegalArgumentException("the number of threads must be at least 1, got " + threads);
        }
        effects = effects == null ? null : effects.clone();
        if (effectUnit == null) {
            effectUnit = EffectUnit.DRIFT;
        }
    }

    @Override
    public double[] effects() {
        return effects == null ? null : effects.clone();
    }

    /** The effects of {@code comparison}: the given ones (with the null first) or its defaults. */
    public List<SimulatedEffect> effectsOf(SimulatedComparison comparison) {
        return effects == null ? SimulatedEffect.defaults(comparison)
                : SimulatedEffect.given(comparison, effects, effectUnit);
    }

    /**
     * Simulates every comparison (all at the same fractions) under its effects.
     *
     * @param progress told how many runs are done, on the calling thread, about ten times a second
     */
    public SimulationReport run(List<SimulatedComparison> comparisons, Progress progress)
            throws InterruptedException {
        if (comparisons.isEmpty()) {
            throw new IllegalArgumentException("nothing to simulate: no metric was selected");
        }
        List<List<SimulatedEffect>> effectLists = new ArrayList<>();
        for (SimulatedComparison c : comparisons) {
            effectLists.add(effectsOf(c));
        }
        List<StoppingCounts> counts = new MonteCarlo(comparisons, effectLists).run(runs, threads, stream, progress);
        List<SimulationReport.ComparisonResult> results = new ArrayList<>();
        int cell = 0;
        for (int c = 0; c < comparisons.size(); c++) {
            SimulatedComparison comparison = comparisons.get(c);
            List<SimulationReport.EffectResult> rows = new ArrayList<>();
            for (SimulatedEffect e : effectLists.get(c)) {
                OperatingCharacteristics simulated = new OperatingCharacteristics(comparison.fractions(),
                        counts.get(cell++).snapshot());
                rows.add(new SimulationReport.EffectResult(e, simulated, RecursionCharacteristics.of(comparison, e.drift())));
            }
            results.add(new SimulationReport.ComparisonResult(comparison, rows));
        }
        return new SimulationReport(runs, stream, comparisons.get(0).fractions(), effects == null ? null : effectUnit,
                results);
    }
}
