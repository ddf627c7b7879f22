package dev.interim.sequential;

import dev.interim.stats.Probabilities;
import dev.interim.text.Numbers;
import dev.interim.text.UserText;
import java.util.Locale;

/**
 * An error-spending function: the cumulative share of a total error rate (α for rejection, β for
 * futility) that may be spent by information fraction t. Lan & DeMets (1983) showed that spending a
 * function of the information fraction, rather than a fixed share per planned look, keeps the error
 * rate whatever the number and timing of the looks.
 *
 * <p>Contract, checked for every implementation by one test: {@code spent(0, e) = 0},
 * {@code spent(1, e) = e}, non-decreasing in t, and fractions above 1 spend the whole total (an
 * overrun spends what is left).
 */
public sealed interface SpendingFunction
        permits SpendingFunction.OBrienFlemingType, SpendingFunction.PocockType,
                SpendingFunction.Power, SpendingFunction.HwangShihDeCani {

    /** Cumulative error spent by information fraction {@code t}, for a total error {@code total}. */
    default double spent(double t, double total) {
        Probabilities.requireOpen(total, "error to spend");
        if (Double.isNaN(t)) {
            throw new IllegalArgumentException("information fraction must be a number, got NaN");
        }
        if (t <= 0) {
            return 0;
        }
        if (t >= 1) {
            return total;
        }
        return Math.min(total, Math.max(0, spentInside(t, total)));
    }

    /** The function on 0 < t < 1. */
    double spentInside(double t, double total);

    /** The name used on the command line and in configuration files. */
    String label();

    /**
     * Parses {@code obf}, {@code pocock}, {@code power:RHO} or {@code hsd:GAMMA}.
     *
     * @throws IllegalArgumentException naming the accepted forms
     */
    static SpendingFunction parse(String text) {
        String s = text == null ? "" : text.trim().toLowerCase(Locale.ROOT);
        int colon = s.indexOf(':');
        String head = colon < 0 ? s : s.substring(0, colon);
        String arg = colon < 0 ? null : s.substring(colon + 1);
        switch (head) {
            case "obf":
                noArgument(text, arg);
                return new OBrienFlemingType();
            case "pocock":
                noArgument(text, arg);
                return new PocockType();
            case "power":
                return new Power(number(text, arg, "RHO"));
            case "hsd":
                return new HwangShihDeCani(number(text, arg, "GAMMA"));
            default:
                throw new IllegalArgumentException("unknown spending function " + UserText.quoted(text)
                        + ": use obf, pocock, power:RHO (RHO > 0) or hsd:GAMMA");
        }
    }

    private static void noArgument(String text, String arg) {
        if (arg != null) {
            throw new IllegalArgumentException(
                    "spending function " + UserText.quoted(text) + " takes no parameter: write it without ':'");
        }
    }

    private static double number(String text, String arg, String name) {
        if (arg == null || arg.isEmpty()) {
            throw new IllegalArgumentException(
                    "spending function " + UserText.quoted(text) + " needs a parameter: write it as "
                            + UserText.shown(text) + ":" + name);
        }
        try {
            return Double.parseDouble(arg);
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException(
                    "spending function " + UserText.quoted(text) + ": " + name + " must be a number, got " + UserText.quoted(arg));
        }
    }

    /**
     * Lan–DeMets O'Brien–Fleming type, α(t) = 2 − 2Φ(z_{1−α/2}/√t) (Lan & DeMets 1983): spends
     * almost nothing early, so early stops need overwhelming evidence.
     */
    record OBrienFlemingType() implements SpendingFunction {
        @Override
        public double spentInside(double t, double total) {
            return 2 * StandardNormal.sf(StandardNormal.upperQuantile(total / 2) / Math.sqrt(t));
        }

        @Override
        public String label() {
            return "obf";
        }
    }

    /** Lan–DeMets Pocock type, α(t) = α·ln(1 + (e − 1)t) (Lan & DeMets 1983). */
    record PocockType() implements SpendingFunction {
        @Override
        public double spentInside(double t, double total) {
            return total * Math.log1p((Math.E - 1) * t);
        }

        @Override
        public String label() {
            return "pocock";
        }
    }

    /** Kim–DeMets power family, α·t^ρ (Kim & DeMets 1987); ρ = 1 spends linearly, ρ = 3 is close to O'Brien–Fleming. */
    record Power(double rho) implements SpendingFunction {
        public Power {
            if (!(rho > 0) || Double.isInfinite(rho)) {
                throw new IllegalArgumentException("power spending needs RHO > 0 and finite, got " + rho);
            }
        }

        @Override
        public double spentInside(double t, double total) {
            return total * Math.pow(t, rho);
        }

        @Override
        public String label() {
            return "power:" + Numbers.plain(rho);
        }
    }

    /**
     * Hwang–Shih–DeCani family, α(1 − e^{−γt})/(1 − e^{−γ}) (Hwang, Shih & DeCani 1990); γ = 0 is
     * linear spending, γ = −4 is close to O'Brien–Fleming, γ = 1 close to Pocock.
     */
    record HwangShihDeCani(double gamma) implements SpendingFunction {
        public HwangShihDeCani {
            if (Double.isNaN(gamma) || Math.abs(gamma) > 40) {
                throw new IllegalArgumentException("hsd spending needs GAMMA between -40 and 40, got " + gamma);
            }
        }

        @Override
        public double spentInside(double t, double total) {
            if (Math.abs(gamma) < 1e-9) {
                return total * t;   // the limit γ → 0
            }
            return total * Math.expm1(-gamma * t) / Math.expm1(-gamma);
        }

        @Override
        public String label() {
            return "hsd:" + Numbers.plain(gamma);
        }
    }
}
