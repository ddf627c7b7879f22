package dev.interim.sequential;

import dev.interim.stats.Alternative;
import java.util.function.DoubleUnaryOperator;
import org.apache.commons.numbers.rootfinder.BrentSolver;

/**
 * Finds the boundary that a look's error increment buys: the b with P(continue, Z ≥ b) (plus the
 * mirrored lower tail for two-sided designs) equal to the increment. The tail is monotone in b, so
 * the root is bracketed and then found by Brent's method (Apache Commons Numbers) on the logarithm
 * of the tail, which is close to quadratic in b and keeps relative accuracy for tiny increments.
 */
final class BoundarySolver {
    /** Increments below this are not representable as a finite boundary (Φ̄(38) ≈ 3e-316). */
    static final double SMALLEST_INCREMENT = 1e-300;
    /**
     * Below this increment the conditional tail is smaller than the absolute accuracy of the carried
     * density (about 1e-13), so the boundary is the unconditional normal quantile instead. That is
     * conservative: the conditional tail never exceeds the unconditional one, so the look spends at
     * most its increment. Such looks are the first few of an O'Brien–Fleming-type design watched
     * continuously, where the boundary lies beyond 7.
     */
    static final double CONDITIONAL_FLOOR = 1e-12;
    private static final BrentSolver BRENT = new BrentSolver(1e-14, 1e-11, 1e-13);

    private BoundarySolver() {}

    /**
     * The upper boundary at fraction t1 spending {@code increment} on the upper side (and, for a
     * two-sided {@code alternative}, on the lower side at −b too).
     */
    static double upper(SubDensity state, double t1, double increment, Alternative alternative) {
        boolean symmetric = alternative == Alternative.TWO_SIDED;
        if (!(increment >= SMALLEST_INCREMENT)) {
            return Double.POSITIVE_INFINITY;
        }
        DoubleUnaryOperator tail = symmetric
                ? b -> state.upperTail(t1, b) + state.lowerTail(t1, -b)
                : b -> state.upperTail(t1, b);
        // Without the history the tail would be the unconditional normal tail, which is larger: so
        // the unconditional quantile is an upper bracket.
        double mean = state.drift * Math.sqrt(t1);
        double hi = mean + StandardNormal.upperQuantile(symmetric ? increment / 2 : increment);
        if (increment < CONDITIONAL_FLOOR) {
            return hi;
        }
        double floor = symmetric ? 0 : Double.NEGATIVE_INFINITY;
        if (tail.applyAsDouble(Math.max(floor, mean - 40)) < increment) {
            // Less continuation probability is left than the increment asks for: stop everything.
            return Math.max(floor, mean - 40);
        }
        double lo = hi;
        do {
            lo = Math.max(floor, lo - 1);
        } while (tail.applyAsDouble(lo) < increment && lo > floor);
        return solveLog(tail, increment, lo, hi);
    }

    /** The lower boundary a at fraction t1 with P(continue, Z ≤ a) = increment, at most {@code cap}. */
    static double lower(SubDensity state, double t1, double increment, double cap) {
        if (!(increment >= SMALLEST_INCREMENT)) {
            return Double.NEGATIVE_INFINITY;
        }
        DoubleUnaryOperator tail = a -> state.lowerTail(t1, a);
        double mean = state.drift * Math.sqrt(t1);
        double lo = mean - StandardNormal.upperQuantile(increment);
        if (increment < CONDITIONAL_FLOOR) {
            return Math.min(lo, cap);
        }
        if (lo >= cap || tail.applyAsDouble(cap) <= increment) {
            return cap;
        }
        double hi = lo;
        do {
            hi = Math.min(cap, hi + 1);
        } while (tail.applyAsDouble(hi) < increment && hi < cap);
        // Mirror so that the solver sees a decreasing function, like the upper case.
        return -solveLog(x -> tail.applyAsDouble(-x), increment, -hi, -lo);
    }

    /** Root of log tail(b) = log target on [lo, hi], tail decreasing, tail(lo) ≥ target ≥ tail(hi). */
    private static double solveLog(DoubleUnaryOperator tail, double target, double lo, double hi) {
        double logTarget = Math.log(target);
        DoubleUnaryOperator g = b -> Math.log(Math.max(tail.applyAsDouble(b), Double.MIN_NORMAL)) - logTarget;
        double gLo = g.applyAsDouble(lo);
        double gHi = g.applyAsDouble(hi);
        if (gLo <= 0) {
            return lo;
        }
        if (gHi >= 0) {
            return hi;
        }
        return BRENT.findRoot(g, lo, hi);
    }
}
