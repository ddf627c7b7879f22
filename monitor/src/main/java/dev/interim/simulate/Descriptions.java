package dev.interim.simulate;

import dev.interim.experiment.Horizon;
import dev.interim.experiment.MetricDefinition;
import dev.interim.text.Numbers;
import java.util.Locale;

/** The words the reports use for a comparison's design. */
final class Descriptions {
    private Descriptions() {}

    /** "two-sided", "greater" or "less". */
    static String alternative(SimulatedComparison c) {
        return switch (c.alternative()) {
            case TWO_SIDED -> "two-sided";
            case GREATER -> "greater";
            case LESS -> "less";
        };
    }

    static String role(SimulatedComparison c) {
        return c.metric().role().name().toLowerCase(Locale.ROOT);
    }

    static String worse(SimulatedComparison c) {
        return c.metric().worse().name().toLowerCase(Locale.ROOT);
    }

    /** The futility spending function's label, or "" without futility. */
    static String futility(SimulatedComparison c) {
        return c.design().futility() == null ? "" : c.design().futility().spending().label();
    }

    /** "one-sided (greater), obf spending, non-binding futility hsd:-2, alpha 0.005 (0.01 over 2 treatments)". */
    static String design(SimulatedComparison c) {
        String sides = c.alternative() == dev.interim.stats.Alternative.TWO_SIDED ? "two-sided"
                : "one-sided (" + alternative(c) + ")";
        String futility = c.design().futility() == null ? "" : ", non-binding futility " + futility(c);
        String alpha = "alpha " + Numbers.plain(c.alpha())
                + (c.treatments() > 1 ? " (" + Numbers.plain(c.metric().alpha()) + " over " + c.treatments() + " treatments)" : "");
        return sides + ", " + c.design().efficacyLabel() + " spending" + futility + ", " + alpha;
    }

    /** "at most 200000 per arm" or "power 0.8 for effect 0.02 (12 planned looks); effect 1 = drift 147.3". */
    static String horizon(SimulatedComparison c) {
        MetricDefinition m = c.metric();
        if (m.horizon() instanceof Horizon.MaxPerArm max) {
            if (m.quantile() != null) {
                long needed = MetricDefinition.quantileEventsNeeded(m.quantile());
                return "at most " + max.perArm() + " events per arm; no look before " + needed + " events per arm (fraction "
                        + Numbers.fixed((double) needed / max.perArm(), 3) + "), which a look simulated earlier does not wait for";
            }
            return "at most " + max.perArm() + " per arm";
        }
        Horizon.Powered p = (Horizon.Powered) m.horizon();
        String effect = p.scale() == Horizon.Scale.RELATIVE
                ? "relative effect " + Numbers.plain(p.effect()) + " (a share of control's level)"
                : "effect " + Numbers.plain(p.effect());
        return "power " + Numbers.plain(p.power()) + " for " + effect + " ("
                + p.plannedLooks() + " planned looks), i.e. drift " + Numbers.fixed(p.effect() * c.driftPerUnit(), 3);
    }

    /** "null", or the direction with the effect in metric units where known: "harm", "benefit +0.02". */
    static String effect(SimulatedEffect e) {
        if (e.isNull()) {
            return "null";
        }
        return e.direction() + (e.inMetricUnits() == null ? "" : " " + signed(e.inMetricUnits()));
    }

    static String signed(double x) {
        String s = Numbers.significant(x, 4);
        return x > 0 ? "+" + s : s;
    }
}
