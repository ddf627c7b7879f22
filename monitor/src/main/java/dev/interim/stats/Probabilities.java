package dev.interim.stats;

import dev.interim.text.Numbers;

/**
 * The one check of a probability-like argument (an α, a power, a level, a rate, a share), so that
 * every place says the same thing: {@code alpha must lie strictly between 0 and 1, got 1.5}. The
 * message starts with the name, so the configuration can place it at that key.
 */
public final class Probabilities {
    private Probabilities() {}

    /**
     * {@code p} if {@code 0 < p < 1}.
     *
     * @throws IllegalArgumentException "NAME must lie strictly between 0 and 1, got P" otherwise (NaN included)
     */
    public static double requireOpen(double p, String name) {
        if (!(p > 0 && p < 1)) {
            throw new IllegalArgumentException(name + " must lie strictly between 0 and 1, got " + Numbers.plain(p));
        }
        return p;
    }

    /**
     * {@code p} if {@code 0 ≤ p ≤ 1}.
     *
     * @throws IllegalArgumentException "NAME must lie between 0 and 1, got P" otherwise (NaN included)
     */
    public static double requireClosed(double p, String name) {
        if (!(p >= 0 && p <= 1)) {
            throw new IllegalArgumentException(name + " must lie between 0 and 1, got " + Numbers.plain(p));
        }
        return p;
    }
}
