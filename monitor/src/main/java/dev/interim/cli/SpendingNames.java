package dev.interim.cli;

import dev.interim.sequential.SpendingFunction;
import dev.interim.text.Numbers;

/** Human names of the spending functions, for titles. */
final class SpendingNames {
    private SpendingNames() {}

    static String describe(SpendingFunction f) {
        if (f instanceof SpendingFunction.OBrienFlemingType) {
            return "O'Brien-Fleming-type";
        }
        if (f instanceof SpendingFunction.PocockType) {
            return "Pocock-type";
        }
        if (f instanceof SpendingFunction.Power p) {
            return "power (rho " + Numbers.plain(p.rho()) + ")";
        }
        if (f instanceof SpendingFunction.HwangShihDeCani h) {
            return "Hwang-Shih-DeCani (gamma " + Numbers.plain(h.gamma()) + ")";
        }
        return f.label();
    }
}
