package dev.interim.cli;

import dev.interim.sequential.Effect;
import dev.interim.sequential.GroupSequentialDesign;
import dev.interim.sequential.Look;
import dev.interim.sequential.SampleSizePlan;
import dev.interim.stats.Alternative;
import dev.interim.text.Numbers;
import java.io.PrintWriter;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;

/** The plan for people: a title naming the design, aligned columns, how to read them, the sizes. */
final class PlanTable {
    private static final String ABSENT = "-";

    private PlanTable() {}

    static void write(PlanReport report, PrintWriter out) {
        out.println(title(report));
        out.println();
        looks(report).print(out, "  ");
        out.println();
        for (String line : howToRead(report)) {
            out.println(line);
        }
        if (report.power() != null) {
            out.println();
            summary(report, out);
        }
        out.flush();
    }

    static String title(PlanReport report) {
        PlanRequest request = report.request();
        GroupSequentialDesign design = report.design();
        StringBuilder title = new StringBuilder("Design: ");
        title.append(request.sides() == 2 ? "two-sided" : "one-sided (" + request.direction() + ")")
                .append(", alpha ").append(Numbers.plain(request.alpha()))
                .append(", ").append(request.efficacy().describe());
        if (design.classic() != null) {
            title.append(" with constant ").append(Numbers.fixed(design.classic().constant(), 4));
        }
        title.append(", ").append(report.looks().size()).append(report.looks().size() == 1 ? " look" : " looks");
        if (report.hasFutility()) {
            title.append("; non-binding futility by ").append(SpendingNames.describe(design.futility().spending()))
                    .append(" beta spending, beta ").append(Numbers.plain(design.futility().beta()));
        }
        return title.toString();
    }

    private static TextTable looks(PlanReport report) {
        List<String> headers = new ArrayList<>(List.of("look", "fraction", "upper", "lower", "alpha spent"));
        if (report.hasFutility()) {
            headers.add("beta spent");
        }
        if (report.sized()) {
            headers.add("n per arm");
        }
        TextTable table = new TextTable(headers.toArray(String[]::new));
        for (Look look : report.looks()) {
            List<String> row = new ArrayList<>(List.of(
                    Integer.toString(look.number()),
                    Numbers.fixed(look.fraction(), 4),
                    boundary(look.upper()),
                    boundary(look.lower()),
                    Numbers.fixed(look.alphaSpent(), 6)));
            if (report.hasFutility()) {
                row.add(Numbers.fixed(look.betaSpent(), 4));
            }
            if (report.sized()) {
                row.add(Long.toString(report.perArmAt(look)));
            }
            table.row(row.toArray(String[]::new));
        }
        return table;
    }

    private static String boundary(double z) {
        return Double.isInfinite(z) ? ABSENT : Numbers.fixed(z, 4);
    }

    /** The footnote: which crossing means what, in the design's direction. */
    static List<String> howToRead(PlanReport report) {
        List<String> lines = new ArrayList<>();
        Alternative alternative = report.request().alternative();
        switch (alternative) {
            case TWO_SIDED -> lines.add("At each look, stop and reject 'no difference' when Z >= upper or Z <= lower;"
                    + " each side spends half of alpha.");
            case GREATER -> lines.add("At each look, stop and reject 'no increase' when Z >= upper.");
            case LESS -> lines.add("At each look, stop and reject 'no decrease' when Z <= lower.");
        }
        if (report.hasFutility()) {
            String side = alternative == Alternative.GREATER ? "Z <= lower" : "Z >= upper";
            lines.add("Stop for futility when " + side + "; this is non-binding: going on anyway keeps alpha.");
            lines.add("At the last look the two boundaries meet, so the design always decides.");
        }
        lines.add("Z is (treatment - control) / its standard error, on all data up to the look.");
        lines.add("Alpha spent is cumulative; " + ABSENT + " means no boundary on that side.");
        return lines;
    }

    private static void summary(PlanReport report, PrintWriter out) {
        PlanReport.PowerSummary power = report.power();
        SampleSizePlan plan = report.sampleSize();
        if (plan == null) {
            out.println("For power " + Numbers.plain(power.power()) + ", the maximum information is "
                    + Numbers.fixed(power.inflation(), 4) + " times that of a single-look test (drift "
                    + Numbers.fixed(power.drift(), 4) + ").");
            out.println("Add --effect with --sd (means) or --baseline-rate (proportions) for sample sizes.");
            return;
        }
        out.println("Sample size per arm to detect " + effect(report.request().effect())
                + " with power " + Numbers.plain(power.power()) + ":");
        item(out, "single-look test", Long.toString(plan.fixedPerArm()));
        item(out, "inflation factor", Numbers.fixed(plan.inflation(), 4));
        item(out, "maximum (last look)", Long.toString(plan.maximumPerArm()));
        item(out, "expected if no effect", Numbers.fixed(plan.expectedUnderNull(), 1));
        item(out, "expected at the effect", Numbers.fixed(plan.expectedUnderAlternative(), 1));
    }

    private static void item(PrintWriter out, String label, String value) {
        out.println(String.format(Locale.ROOT, "  %-24s%14s", label, value));
    }

    private static String effect(Effect effect) {
        if (effect instanceof Effect.MeanDifference m) {
            return "a difference in means of " + Numbers.plain(m.delta()) + " (sd " + Numbers.plain(m.sd()) + ")";
        }
        Effect.ProportionDifference p = (Effect.ProportionDifference) effect;
        return "a change of " + (p.delta() > 0 ? "+" : "") + Numbers.plain(p.delta())
                + " from a baseline rate of " + Numbers.plain(p.baseline());
    }
}
