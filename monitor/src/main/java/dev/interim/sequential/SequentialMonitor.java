package dev.interim.sequential;

import dev.interim.stats.Alternative;

/**
 * Looks of one group-sequential design, one at a time, at whatever information fractions the data
 * produce (Lan & DeMets 1983). Each look spends α(t) − α(t_prev) and finds the boundary that spends
 * exactly that given the paths still running; the continuation sub-density is kept between looks, so
 * a look costs the same at look 10 and at look 10,000.
 *
 * <p>Mutable and not thread-safe: one monitor per (experiment, arm, metric). Its whole state is the
 * sequence of fractions seen, so {@link #replay} rebuilds it exactly after a restart.
 *
 * <p>Edge cases, all without exceptions or NaN:
 * <ul>
 *   <li>a fraction not above the previous one (repeated, or information estimated lower than
 *       before) adds no information: nothing is spent and the previous boundaries stand;</li>
 *   <li>tiny increments spend tiny amounts; an increment too small to be represented
 *       (below {@value BoundarySolver#SMALLEST_INCREMENT}) gives an infinite boundary;</li>
 *   <li>a fraction of 1 or more is the final look and spends all that is left (overrun); looks after
 *       it have no α left and infinite boundaries.</li>
 * </ul>
 * Internally one-sided designs are computed as "greater"; a "less" design is its mirror image.
 */
public final class SequentialMonitor {
    /** Relative information increments below this are treated as none (the kernel would be degenerate). */
    private static final double NO_INFORMATION = 1e-12;

    private final GroupSequentialDesign design;
    private final boolean twoSided;
    private SubDensity underNull;
    private SubDensity underAlternative;
    private double alphaSpent;
    private double betaSpent;
    private Look previous;

    SequentialMonitor(GroupSequentialDesign design) {
        this.design = design;
        this.twoSided = design.alternative() == Alternative.TWO_SIDED;
        this.underNull = SubDensity.origin(0, design.resolution());
        if (design.futility() != null) {
            this.underAlternative = SubDensity.origin(design.futility().drift(), design.resolution());
        }
    }

    /**
     * The whole state of a monitor, a few kilobytes whatever the number of looks: the last look, the
     * error spent, and the carried sub-densities. {@link #restore} continues from it exactly as the
     * monitor that made it would have.
     */
    public record Snapshot(Look last, double alphaSpent, double betaSpent, double[] nullState,
                           double[] alternativeState) {
        public Snapshot {
            nullState = nullState.clone();
            alternativeState = alternativeState == null ? null : alternativeState.clone();
        }

        @Override
        public double[] nullState() {
            return nullState.clone();
        }

        @Override
        public double[] alternativeState() {
            return alternativeState == null ? null : alternativeState.clone();
        }
    }

    /** This monitor's state, to be restored with {@link #restore}. */
    public Snapshot snapshot() {
        return new Snapshot(previous, alphaSpent, betaSpent, pack(underNull.state()),
                underAlternative == null ? null : pack(underAlternative.state()));
    }

    /** A monitor of {@code design} that goes on from {@code snapshot}. */
    public static SequentialMonitor restore(GroupSequentialDesign design, Snapshot snapshot) {
        SequentialMonitor m = design.monitor();
        m.previous = snapshot.last();
        m.alphaSpent = snapshot.alphaSpent();
        m.betaSpent = snapshot.betaSpent();
        m.underNull = SubDensity.of(unpack(snapshot.nullState()));
        if (snapshot.alternativeState() != null && design.futility() != null) {
            m.underAlternative = SubDensity.of(unpack(snapshot.alternativeState()));
        }
        return m;
    }

    /** [fraction, drift, resolution, n, x..., f..., d...] */
    private static double[] pack(SubDensity.State s) {
        int n = s.x().length;
        double[] out = new double[4 + 3 * n];
        out[0] = s.fraction();
        out[1] = s.drift();
        out[2] = s.resolution();
        out[3] = n;
        System.arraycopy(s.x(), 0, out, 4, n);
        System.arraycopy(s.f(), 0, out, 4 + n, n);
        System.arraycopy(s.d(), 0, out, 4 + 2 * n, n);
        return out;
    }

    private static SubDensity.State unpack(double[] p) {
        int n = (int) p[3];
        if (p.length != 4 + 3 * n) {
            throw new IllegalArgumentException("not a sub-density state: " + p.length + " numbers for " + n + " nodes");
        }
        return new SubDensity.State(p[0], p[1], (int) p[2], java.util.Arrays.copyOfRange(p, 4, 4 + n),
                java.util.Arrays.copyOfRange(p, 4 + n, 4 + 2 * n), java.util.Arrays.copyOfRange(p, 4 + 2 * n, 4 + 3 * n));
    }

    /** A monitor that has already looked at {@code fractions}, in order. */
    public static SequentialMonitor replay(GroupSequentialDesign design, double... fractions) {
        SequentialMonitor m = design.monitor();
        for (double t : fractions) {
            m.lookAt(t);
        }
        return m;
    }

    public GroupSequentialDesign design() {
        return design;
    }

    /** The last look, or null before the first. */
    public Look lastLook() {
        return previous;
    }

    public int looks() {
        return previous == null ? 0 : previous.number();
    }

    /**
     * The next look, at information fraction {@code fraction} (information now over the planned
     * maximum).
     *
     * @throws IllegalArgumentException if the fraction is not a positive finite number
     */
    public Look lookAt(double fraction) {
        if (!(fraction > 0) || Double.isInfinite(fraction)) {
            throw new IllegalArgumentException("information fraction must be positive and finite, got " + fraction);
        }
        int number = looks() + 1;
        double before = underNull.fraction;
        if (previous != null && previous.last()) {
            previous = orient(number, Math.max(fraction, before), Double.POSITIVE_INFINITY,
                    Double.NEGATIVE_INFINITY, 0, Look.Stage.AFTER_END);
            return previous;
        }
        if (previous != null && !(fraction > before * (1 + NO_INFORMATION))) {
            previous = new Look(number, before, previous.upper(), previous.lower(), previous.alternative(),
                    alphaSpent, 0, betaSpent, Look.Stage.NO_INFORMATION);
            return previous;
        }
        boolean last = fraction >= 1;

        double increment = Math.max(0, allowedBy(fraction) - alphaSpent);
        double upper;
        if (design.spending() != null) {
            upper = BoundarySolver.upper(underNull, fraction, increment, design.alternative());
        } else {
            upper = design.classic().at(fraction);
            increment = underNull.upperTail(fraction, upper) + (twoSided ? underNull.lowerTail(fraction, -upper) : 0);
        }
        double lower = twoSided ? -upper : Double.NEGATIVE_INFINITY;
        // α is accounted as the spending function says (Lan–DeMets); the boundary reproduces it to
        // the solver's accuracy. Classic designs account what their boundary actually spends.
        alphaSpent = design.spending() != null ? Math.max(alphaSpent, allowedBy(fraction)) : alphaSpent + increment;
        underNull = underNull.advance(fraction, lower, upper);

        if (design.futility() != null) {
            lower = futilityBoundary(fraction, upper, last);
        }
        previous = orient(number, fraction, upper, lower, increment, last ? Look.Stage.FINAL : Look.Stage.INTERIM);
        return previous;
    }

    private double allowedBy(double fraction) {
        return design.spending() != null ? design.alphaAllowed(fraction) : design.alpha();
    }

    /**
     * Non-binding futility: the β increment is spent under the alternative on paths that have crossed
     * neither boundary; at the final look the futility boundary meets the efficacy boundary so that a
     * decision is forced.
     */
    private double futilityBoundary(double fraction, double upper, boolean last) {
        Futility rule = design.futility();
        double allowed = rule.spending().spent(fraction, rule.beta());
        double increment = Math.max(0, allowed - betaSpent);
        double lower = last ? upper : BoundarySolver.lower(underAlternative, fraction, increment, upper);
        betaSpent = Math.max(betaSpent, allowed);
        underAlternative = underAlternative.advance(fraction, lower, upper);
        return lower;
    }

    /** Builds the look in the design's direction; a "less" design is the mirror image of "greater". */
    private Look orient(int number, double fraction, double upper, double lower, double increment,
                        Look.Stage stage) {
        Alternative alternative = design.alternative();
        if (alternative == Alternative.LESS) {
            return new Look(number, fraction, -lower, -upper, alternative, alphaSpent, increment, betaSpent, stage);
        }
        return new Look(number, fraction, upper, lower, alternative, alphaSpent, increment, betaSpent, stage);
    }
}
