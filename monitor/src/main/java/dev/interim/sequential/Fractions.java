package dev.interim.sequential;

/** Checks and builders for planned information fractions. */
public final class Fractions {
    private Fractions() {}

    /** K equally spaced fractions 1/K, 2/K, …, 1. */
    public static double[] equallySpaced(int looks) {
        if (looks < 1 || looks > 10_000) {
            throw new IllegalArgumentException("the number of looks must lie between 1 and 10000, got " + looks);
        }
        double[] t = new double[looks];
        for (int k = 1; k <= looks; k++) {
            t[k - 1] = (double) k / looks;
        }
        return t;
    }

    /** Refuses an empty list, non-positive or non-finite values, and values that do not increase. */
    public static void validate(double[] fractions) {
        if (fractions == null || fractions.length == 0) {
            throw new IllegalArgumentException("give at least one information fraction");
        }
        double previous = 0;
        for (int i = 0; i < fractions.length; i++) {
            double t = fractions[i];
            if (!(t > 0) || Double.isInfinite(t)) {
                throw new IllegalArgumentException("information fraction " + (i + 1) + " must be positive and finite, got " + t);
            }
            if (!(t > previous)) {
                throw new IllegalArgumentException("information fractions must increase: " + t + " follows " + previous);
            }
            previous = t;
        }
    }
}
