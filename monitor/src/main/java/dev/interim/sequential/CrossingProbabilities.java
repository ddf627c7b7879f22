package dev.interim.sequential;

/**
 * Per-look probabilities that a sample path first leaves the continuation region at that look,
 * across the upper and the lower boundary, for given boundaries and drift.
 *
 * @param upper probability of stopping at look k by crossing the upper boundary
 * @param lower probability of stopping at look k by crossing the lower boundary
 */
public record CrossingProbabilities(double[] upper, double[] lower) {

    public CrossingProbabilities {
        upper = upper.clone();
        lower = lower.clone();
    }

    /**
     * Computes the crossing probabilities by the recursion of Jennison & Turnbull (2000), ch. 19.
     *
     * @param fractions increasing information fractions (positive)
     * @param uppers upper boundaries on the Z scale ({@code +∞} for none)
     * @param lowers lower boundaries on the Z scale ({@code −∞} for none)
     * @param drift the drift η = θ·√I_max; Z at fraction t has mean η·√t
     * @param resolution the grid parameter r (16 or 32 are usual)
     */
    public static CrossingProbabilities of(double[] fractions, double[] uppers, double[] lowers,
                                           double drift, int resolution) {
        int k = fractions.length;
        if (uppers.length != k || lowers.length != k) {
            throw new IllegalArgumentException("need one upper and one lower boundary per look");
        }
        double[] up = new double[k];
        double[] down = new double[k];
        SubDensity state = SubDensity.origin(drift, resolution);
        for (int i = 0; i < k; i++) {
            double t = fractions[i];
            if (!(t > state.fraction)) {
                throw new IllegalArgumentException("information fractions must increase: " + t
                        + " after " + state.fraction);
            }
            up[i] = state.upperTail(t, uppers[i]);
            down[i] = state.lowerTail(t, lowers[i]);
            state = state.advance(t, lowers[i], uppers[i]);
        }
        return new CrossingProbabilities(up, down);
    }

    public int looks() {
        return upper.length;
    }

    public double totalUpper() {
        return sum(upper);
    }

    public double totalLower() {
        return sum(lower);
    }

    /** Probability of stopping at look k (0-based), either way. */
    public double stopAt(int k) {
        return upper[k] + lower[k];
    }

    @Override
    public double[] upper() {
        return upper.clone();
    }

    @Override
    public double[] lower() {
        return lower.clone();
    }

    private static double sum(double[] values) {
        double s = 0;
        for (double v : values) {
            s += v;
        }
        return s;
    }
}
