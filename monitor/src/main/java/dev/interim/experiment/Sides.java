package dev.interim.experiment;

/**
 * Whether a metric's test watches one direction or both: a guardrail watches for harm only, a
 * one-sided primary metric for benefit only, a two-sided primary metric for a difference either way.
 */
public enum Sides {
    ONE(1), TWO(2);

    private final int count;

    Sides(int count) {
        this.count = count;
    }

    /** 1 or 2, as the configuration writes it ({@code sides: 2}). */
    public int count() {
        return count;
    }

    /** The sides of {@code sides: N}. */
    public static Sides of(int count) {
        return switch (count) {
            case 1 -> ONE;
            case 2 -> TWO;
            default -> throw new IllegalArgumentException("sides must be 1 or 2, got " + count);
        };
    }
}
