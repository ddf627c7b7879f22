package dev.interim.sequential;

import dev.interim.stats.Alternative;
import dev.interim.stats.Probabilities;
import java.util.Arrays;
import org.apache.commons.numbers.rootfinder.BrentSolver;

/**
 * A group-sequential design: the type I error α, its direction, how α is spent over the looks, and
 * optionally a non-binding futility rule. Immutable; {@link #monitor()} starts the looks.
 *
 * <p>Two-sided designs are symmetric: a two-sided design at level α is an upper and a lower
 * one-sided design at level α/2, each side spending the spending function evaluated at α/2, so the
 * boundaries of a two-sided design at α = 0.05 are ± those of a one-sided design at α = 0.025 (up to
 * the negligible probability of paths that would cross both sides). For the Pocock-type, power and
 * Hwang–Shih–DeCani families, which are proportional to α, this is the same as splitting α(t)
 * equally; for the O'Brien–Fleming type, whose shape depends on α, it is the common convention of
 * group-sequential software and tables rather than 2 − 2Φ(z_{1−α/2}/√t) shared between the sides.
 *
 * @param alpha total type I error, in (0, 1)
 * @param alternative direction: two-sided, or one-sided greater/less
 * @param spending α-spending function, or null for a classic boundary
 * @param classic the classic fixed-K boundary, or null for a spending function
 * @param futility non-binding futility by β spending (one-sided only), or null
 * @param resolution grid parameter r of the recursion (Jennison & Turnbull §19.2.1)
 */
public record GroupSequentialDesign(double alpha, Alternative alternative, SpendingFunction spending,
                                    ClassicBoundary classic, Futility futility, int resolution) {

    /** r = 16 puts 189 points on a full grid; {@code SequentialAccuracyTest} shows crossings within 1e-6 of r = 64. */
    public static final int DEFAULT_RESOLUTION = 16;

    public GroupSequentialDesign {
        Probabilities.requireOpen(alpha, "alpha");
        if (alternative == null) {
            throw new IllegalArgumentException("a design needs a direction (two-sided, greater or less)");
        }
        if ((spending == null) == (classic == null)) {
            throw new IllegalArgumentException("a design needs exactly one of a spending function or a classic boundary");
        }
        if (futility != null && alternative == Alternative.TWO_SIDED) {
            throw new IllegalArgumentException("futility stopping is supported for one-sided designs only");
        }
        if (resolution < 4 || resolution > 256) {
            throw new IllegalArgumentException("grid resolution must lie between 4 and 256, got " + resolution);
        }
    }

    /** A design spending α with {@code spending}. */
    public static GroupSequentialDesign spending(double alpha, Alternative alternative, SpendingFunction spending) {
        if (spending == null) {
            throw new IllegalArgumentException("a spending design needs a spending function");
        }
        return new GroupSequentialDesign(alpha, alternative, spending, null, null, DEFAULT_RESOLUTION);
    }

    /**
     * A classic Pocock or O'Brien–Fleming design whose constant makes the planned looks spend exactly
     * α (two-sided designs split it equally between the sides).
     *
     * @param plannedFractions the planned information fractions, increasing, the last one 1
     */
    public static GroupSequentialDesign classic(double alpha, Alternative alternative, ClassicBoundary.Shape shape,
                                                double[] plannedFractions) {
        Fractions.validate(plannedFractions);
        if (plannedFractions[plannedFractions.length - 1] != 1.0) {
            throw new IllegalArgumentException("the planned fractions of a classic design must end at 1, got "
                    + plannedFractions[plannedFractions.length - 1]);
        }
        Probabilities.requireOpen(alpha, "alpha");
        boolean twoSided = alternative == Alternative.TWO_SIDED;
        double[] fractions = plannedFractions.clone();
        // Size of the classic shape with constant 1 at each look; the constant scales it.
        double[] unit = new double[fractions.length];
        for (int i = 0; i < unit.length; i++) {
            unit[i] = new ClassicBoundary(shape, 1).at(fractions[i]);
        }
        java.util.function.DoubleUnaryOperator excess = c -> {
            double[] up = new double[unit.length];
            double[] low = new double[unit.length];
            for (int i = 0; i < unit.length; i++) {
                up[i] = c * unit[i];
                low[i] = twoSided ? -c * unit[i] : Double.NEGATIVE_INFINITY;
            }
            CrossingProbabilities p = CrossingProbabilities.of(fractions, up, low, 0, DEFAULT_RESOLUTION);
            return Math.log(p.totalUpper() + p.totalLower()) - Math.log(alpha);
        };
        double single = StandardNormal.upperQuantile(twoSided ? alpha / 2 : alpha);
        double constant = new BrentSolver(1e-14, 1e-11, 1e-13).findRoot(excess, single * 0.3, single * 3);
        return new GroupSequentialDesign(alpha, alternative, null, new ClassicBoundary(shape, constant), null,
                DEFAULT_RESOLUTION);
    }

    /** This design with a non-binding futility rule. */
    public GroupSequentialDesign withFutility(Futility rule) {
        return new GroupSequentialDesign(alpha, alternative, spending, classic, rule, resolution);
    }

    /** This design on a finer or coarser grid. */
    public GroupSequentialDesign withResolution(int r) {
        return new GroupSequentialDesign(alpha, alternative, spending, classic, futility, r);
    }

    /**
     * Cumulative α this design allows by fraction t, both sides together. A two-sided design spends
     * the spending function at α/2 on each side. Classic designs spend by their planned looks only
     * (NaN before the final one).
     */
    public double alphaAllowed(double t) {
        if (spending == null) {
            return t >= 1 ? alpha : Double.NaN;
        }
        return alternative == Alternative.TWO_SIDED ? 2 * spending.spent(t, alpha / 2) : spending.spent(t, alpha);
    }

    /** The label of the efficacy rule: {@code obf}, {@code pocock}, {@code power:3}, {@code fixed-obf}... */
    public String efficacyLabel() {
        return spending != null ? spending.label() : classic.shape().label();
    }

    /** A fresh monitor: no look yet, no α spent. */
    public SequentialMonitor monitor() {
        return new SequentialMonitor(this);
    }

    /** The looks of this design at the given increasing fractions. */
    public Look[] looksAt(double... fractions) {
        Fractions.validate(fractions);
        SequentialMonitor m = monitor();
        return Arrays.stream(fractions).mapToObj(m::lookAt).toArray(Look[]::new);
    }
}
