package dev.interim.chart;

import dev.interim.experiment.ExperimentView.ComparisonView;

/**
 * What each boundary of a comparison stops for, in words: "harm", "benefit" or "futility". Z is
 * treatment minus control over its standard error, so an upper crossing means the treatment is
 * higher. A two-sided design rejects on both sides; a one-sided design rejects on the side of its
 * alternative, and the other side, when the design has one, is its non-binding futility boundary
 * (see {@code dev.interim.sequential.Look}).
 *
 * @param upper what crossing the upper boundary means
 * @param lower what crossing the lower boundary means
 */
public record Sides(String upper, String lower) {
    public static final String HARM = "harm";
    public static final String BENEFIT = "benefit";
    public static final String FUTILITY = "futility";

    /** The meaning of the boundaries of {@code c}, from its alternative and the direction that is worse. */
    public static Sides of(ComparisonView c) {
        String whenHigher = "lower".equals(c.worse()) ? BENEFIT : HARM;
        String whenLower = "lower".equals(c.worse()) ? HARM : BENEFIT;
        return switch (c.alternative() == null ? "" : c.alternative()) {
            case "greater" -> new Sides(whenHigher, FUTILITY);
            case "less" -> new Sides(FUTILITY, whenLower);
            default -> new Sides(whenHigher, whenLower);
        };
    }

    /** The sides in words, e.g. "one-sided: stops when the treatment is higher (harm)". */
    public static String describe(ComparisonView c) {
        Sides s = of(c);
        return switch (c.alternative() == null ? "" : c.alternative()) {
            case "greater" -> "one-sided: rejects when the treatment is higher (" + s.upper() + ")";
            case "less" -> "one-sided: rejects when the treatment is lower (" + s.lower() + ")";
            default -> "two-sided: rejects either way (higher: " + s.upper() + ", lower: " + s.lower()
                    + "), α shared equally between the sides";
        };
    }
}
