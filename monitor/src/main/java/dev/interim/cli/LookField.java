package dev.interim.cli;

import dev.interim.sequential.Look;
import dev.interim.text.Numbers;
import java.util.ArrayList;
import java.util.List;
import java.util.function.Function;

/**
 * One per-look field of the machine formats (CSV column, JSON member): its name and its value at a
 * look, null where a boundary is absent (infinite). CSV and JSON use the same list, so they carry
 * the same fields.
 */
record LookField(String name, Function<Look, Number> value) {
    private static final int BOUNDARY_DECIMALS = 6;
    private static final int PROBABILITY_DIGITS = 6;

    static List<LookField> of(PlanReport report) {
        List<LookField> fields = new ArrayList<>(List.of(
                new LookField("look", Look::number),
                new LookField("fraction", look -> Numbers.rounded(look.fraction(), BOUNDARY_DECIMALS)),
                new LookField("upper", look -> boundary(look.upper())),
                new LookField("lower", look -> boundary(look.lower())),
                new LookField("alpha_spent", look -> Numbers.significantDecimal(look.alphaSpent(), PROBABILITY_DIGITS)),
                new LookField("alpha_increment", look -> Numbers.significantDecimal(look.alphaIncrement(), PROBABILITY_DIGITS))));
        if (report.hasFutility()) {
            fields.add(new LookField("beta_spent", look -> Numbers.significantDecimal(look.betaSpent(), PROBABILITY_DIGITS)));
        }
        if (report.sized()) {
            fields.add(new LookField("n_per_arm", report::perArmAt));
        }
        return fields;
    }

    private static Number boundary(double z) {
        return Double.isInfinite(z) ? null : Numbers.rounded(z, BOUNDARY_DECIMALS);
    }
}
