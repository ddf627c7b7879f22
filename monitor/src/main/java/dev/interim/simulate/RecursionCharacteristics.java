package dev.interim.simulate;

import dev.interim.sequential.CrossingProbabilities;
import dev.interim.sequential.Look;
import dev.interim.stats.Alternative;
import java.util.EnumMap;
import java.util.Map;

/**
 * The same operating characteristics computed without simulation, by the recursive numerical
 * integration the boundaries come from (Jennison &amp; Turnbull 2000, ch. 19), for a side-by-side
 * check: the probability of first crossing each boundary at each look, mapped to decisions as the
 * daemon maps them. Accurate to about 1e-6 (DEVELOPERS.md); skipped above
 * {@value #MAX_LOOKS} looks, where it would cost more than the simulation.
 *
 * @param probabilities the probability of each way of stopping
 * @param expectedFraction the expected information fraction at stopping
 */
public record RecursionCharacteristics(Map<Stop, Double> probabilities, double expectedFraction) {

    /** Above this many looks the recursion is not run (about a millisecond per look and effect). */
    public static final int MAX_LOOKS = 1000;

    public RecursionCharacteristics {
        probabilities = Map.copyOf(probabilities);
    }

    /** The probability of a stop for harm or benefit. */
    public double rejection() {
        return probabilities.get(Stop.HARM) + probabilities.get(Stop.BENEFIT);
    }

    /** The characteristics of {@code comparison} under drift {@code drift}, or null above {@value #MAX_LOOKS} looks. */
    static RecursionCharacteristics of(SimulatedComparison comparison, double drift) {
        if (comparison.lookCount() > MAX_LOOKS) {
            return null;
        }
        Look[] looks = comparison.looks();
        double[] fractions = comparison.fractions();
        double[] uppers = new double[looks.length];
        double[] lowers = new double[looks.length];
        for (int k = 0; k < looks.length; k++) {
            uppers[k] = looks[k].upper();
            lowers[k] = looks[k].lower();
        }
        CrossingProbabilities p = CrossingProbabilities.of(fractions, uppers, lowers, drift,
                comparison.design().resolution());
        Alternative alternative = comparison.alternative();
        // Rejecting at the upper boundary means Z > 0, at the lower one Z < 0.
        Stop upperStop = alternative == Alternative.LESS ? Stop.FUTILITY : stopForSign(comparison, 1);
        Stop lowerStop = alternative == Alternative.GREATER ? Stop.FUTILITY : stopForSign(comparison, -1);
        Map<Stop, Double> probabilities = new EnumMap<>(Stop.class);
        for (Stop s : Stop.values()) {
            probabilities.put(s, 0.0);
        }
        double stopped = 0;
        double expected = 0;
        for (int k = 0; k < looks.length; k++) {
            probabilities.merge(upperStop, p.upper()[k], Double::sum);
            probabilities.merge(lowerStop, p.lower()[k], Double::sum);
            stopped += p.stopAt(k);
            expected += fractions[k] * p.stopAt(k);
        }
        double completing = Math.max(0, 1 - stopped);
        probabilities.put(Stop.COMPLETE, completing);
        expected += fractions[fractions.length - 1] * completing;
        return new RecursionCharacteristics(probabilities, expected);
    }

    private static Stop stopForSign(SimulatedComparison comparison, int sign) {
        return comparison.harmful(sign) ? Stop.HARM : Stop.BENEFIT;
    }
}
