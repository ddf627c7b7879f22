package dev.interim.sequential;

/**
 * The classic boundaries for a planned number of equally important looks: Pocock (1977), the same
 * critical value C_P at every look, and O'Brien & Fleming (1979), C_B·√(K/k) at look k of K, which is
 * C_B/√t at information fraction t. The constant is found so that the planned looks together spend
 * exactly α (see {@link GroupSequentialDesign#classic}).
 *
 * <p>Looks at unplanned fractions use the same shape; the error actually spent is then tracked by
 * the recursion but is no longer exactly α, which is why spending functions are the default.
 */
public record ClassicBoundary(Shape shape, double constant) {

    /** The two classic shapes. */
    public enum Shape {
        POCOCK("fixed-pocock"),
        OBRIEN_FLEMING("fixed-obf");

        private final String label;

        Shape(String label) {
            this.label = label;
        }

        public String label() {
            return label;
        }
    }

    public ClassicBoundary {
        if (shape == null) {
            throw new IllegalArgumentException("a classic boundary needs a shape");
        }
        if (!(constant > 0) || Double.isInfinite(constant)) {
            throw new IllegalArgumentException("a classic boundary constant must be positive and finite, got " + constant);
        }
    }

    /** The boundary at information fraction t (capped at 1: an overrun keeps the final value). */
    public double at(double t) {
        return shape == Shape.POCOCK ? constant : constant / Math.sqrt(Math.min(1, t));
    }
}
