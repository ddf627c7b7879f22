package dev.interim.sequential;

import dev.interim.stats.Alternative;

/**
 * One look of a group-sequential design: where the boundaries stand at this information fraction and
 * how much error has been spent. Boundaries are on the standard normal (Z) scale; an absent boundary
 * is infinite ({@code upper = +∞}, {@code lower = −∞}).
 *
 * <p>For a two-sided design both boundaries reject the null hypothesis. For a one-sided
 * {@link Alternative#GREATER} design {@code upper} rejects and {@code lower}, when futility is
 * planned, stops for futility; a {@link Alternative#LESS} design is the mirror image.
 *
 * @param number 1-based look number
 * @param fraction information fraction used at this look (never below the previous look's)
 * @param upper upper boundary on the Z scale
 * @param lower lower boundary on the Z scale
 * @param alternative the direction of the design
 * @param alphaSpent cumulative type I error spent up to and including this look
 * @param alphaIncrement type I error spent at this look
 * @param betaSpent cumulative type II error spent by futility boundaries (0 without futility)
 * @param stage where the look stands in the design: an interim look, the final one, a look that
 *              brought no information beyond the previous one, or one after the final look
 */
public record Look(int number, double fraction, double upper, double lower, Alternative alternative,
                   double alphaSpent, double alphaIncrement, double betaSpent, Stage stage) {

    /** Where a look stands in its design. */
    public enum Stage {
        /** Before the planned maximum information, with information beyond the previous look. */
        INTERIM,
        /** The look that reached the planned maximum information (fraction ≥ 1): it spends the rest of α. */
        FINAL,
        /** No information beyond the previous look (its fraction did not exceed it): nothing is spent. */
        NO_INFORMATION,
        /** After the final look: no α is left, the boundaries are infinite. */
        AFTER_END
    }

    /** Whether this look brought information beyond the previous one (an interim or the final look). */
    public boolean informationAdded() {
        return stage == Stage.INTERIM || stage == Stage.FINAL;
    }

    /** Whether this look reached the planned maximum information or came after it. */
    public boolean last() {
        return stage == Stage.FINAL || stage == Stage.AFTER_END;
    }

    /** Whether statistic z crosses a boundary that rejects the null hypothesis. */
    public boolean rejects(double z) {
        // An infinite boundary (nothing to spend yet) never rejects, not even an infinite statistic.
        boolean above = upper != Double.POSITIVE_INFINITY && z >= upper;
        boolean below = lower != Double.NEGATIVE_INFINITY && z <= lower;
        return switch (alternative) {
            case TWO_SIDED -> above || below;
            case GREATER -> above;
            case LESS -> below;
        };
    }

    /** Whether statistic z crosses a futility boundary (never for two-sided designs). */
    public boolean futile(double z) {
        // Without futility the far boundary is infinite: no statistic, however large, is futile.
        return switch (alternative) {
            case TWO_SIDED -> false;
            case GREATER -> lower != Double.NEGATIVE_INFINITY && z <= lower;
            case LESS -> upper != Double.POSITIVE_INFINITY && z >= upper;
        };
    }

    /** The boundary that rejects, in the direction of the alternative (upper for two-sided). */
    public double efficacyBoundary() {
        return alternative == Alternative.LESS ? lower : upper;
    }

    /** The futility boundary, or NaN where the design has none. */
    public double futilityBoundary() {
        return switch (alternative) {
            case TWO_SIDED -> Double.NaN;
            case GREATER -> lower == Double.NEGATIVE_INFINITY ? Double.NaN : lower;
            case LESS -> upper == Double.POSITIVE_INFINITY ? Double.NaN : upper;
        };
    }
}
