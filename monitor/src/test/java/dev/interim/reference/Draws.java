package dev.interim.reference;

import java.util.SplittableRandom;

/** Random draws for the seeded simulations of the tests. */
public final class Draws {
    private Draws() {}

    /** A standard normal draw by Marsaglia's polar method (1964), from a reproducible generator. */
    public static double gaussian(SplittableRandom random) {
        double u;
        double v;
        double s;
        do {
            u = 2 * random.nextDouble() - 1;
            v = 2 * random.nextDouble() - 1;
            s = u * u + v * v;
        } while (s >= 1 || s == 0);
        return u * Math.sqrt(-2 * Math.log(s) / s);
    }
}
