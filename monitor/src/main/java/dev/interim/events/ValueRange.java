package dev.interim.events;

/**
 * The values one event may carry for a mean or a total, both ends included ({@code min ≤ v ≤ max});
 * an event whose value lies outside is refused, not tallied (a negative latency, a basket of minus
 * three items). An end left open is infinite; {@link #ANY} leaves both open.
 *
 * @param min the smallest value allowed, or negative infinity
 * @param max the largest value allowed, or positive infinity
 */
public record ValueRange(double min, double max) {
    /** Every value: the range of a metric configured without one. */
    public static final ValueRange ANY = new ValueRange(Double.NEGATIVE_INFINITY, Double.POSITIVE_INFINITY);

    public ValueRange {
        if (Double.isNaN(min) || Double.isNaN(max)) {
            throw new IllegalArgumentException("range: min and max must be numbers, got " + min + " and " + max);
        }
        if (min > max) {
            throw new IllegalArgumentException("range: min " + min + " is above max " + max);
        }
    }

    /** Whether {@code value} lies within the range (NaN never does). */
    public boolean contains(double value) {
        return value >= min && value <= max;
    }

    /** The range as the configuration writes it: {@code {min: 0, max: 60000}}, open ends left out. */
    @Override
    public String toString() {
        boolean low = min != Double.NEGATIVE_INFINITY;
        boolean high = max != Double.POSITIVE_INFINITY;
        if (!low && !high) {
            return "{}";
        }
        return "{" + (low ? "min: " + plain(min) : "") + (low && high ? ", " : "") + (high ? "max: " + plain(max) : "") + "}";
    }

    private static String plain(double v) {
        return v == Math.rint(v) && Math.abs(v) < 1e15 ? Long.toString((long) v) : Double.toString(v);
    }
}
