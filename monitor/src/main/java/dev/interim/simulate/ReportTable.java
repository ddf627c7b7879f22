package dev.interim.simulate;

import dev.interim.text.Numbers;
import java.io.PrintWriter;
import java.util.List;
import java.util.Map;

/**
 * The report for a terminal: per comparison, one table of how runs end and one of when they stop,
 * then notes that say what the columns mean.
 */
final class ReportTable {
    /** Characters of the text histogram, from few runs to the most. */
    private static final String LEVELS = ".:-=+*#%@";
    /** Widest text histogram; more looks are grouped. */
    static final int HISTOGRAM_WIDTH = 40;

    private ReportTable() {}

    static void write(SimulationReport report, PrintWriter out) {
        double[] t = report.fractions();
        out.println("Simulated " + report.runs() + " runs per effect (stream " + report.stream() + ") at " + t.length
                + (report.equallySpaced() ? " equally spaced looks" : " looks") + ", information fractions "
                + Numbers.plain(t[0]) + (t.length > 1 ? " to " + Numbers.plain(t[t.length - 1]) : "") + ".");
        for (SimulationReport.ComparisonResult result : report.comparisons()) {
            out.println();
            comparison(result, out);
        }
        out.println();
        notes(report, out);
        out.flush();
    }

    private static void comparison(SimulationReport.ComparisonResult result, PrintWriter out) {
        SimulatedComparison c = result.comparison();
        out.println(c.experiment() + " / " + c.metric().label() + " (" + Descriptions.role(c) + ", worse: "
                + Descriptions.worse(c) + "): " + c.arm() + " against control");
        out.println("  design:  " + Descriptions.design(c));
        out.println("  horizon: " + Descriptions.horizon(c));
        out.println();
        Columns decisions = new Columns("<effect", "drift", "P(reject)", "se", "recursion", "stop-harm", "stop-benefit",
                "stop-futility", "complete");
        for (SimulationReport.EffectResult e : result.effects()) {
            OperatingCharacteristics oc = e.simulated();
            Map<Stop, Estimate> p = oc.probabilities();
            decisions.row(Descriptions.effect(e.effect()), Numbers.fixed(e.effect().drift(), 3),
                    Numbers.fixed(oc.rejection().value(), 4), Numbers.fixed(oc.rejection().standardError(), 4),
                    e.recursion() == null ? Numbers.NONE : Numbers.fixed(e.recursion().rejection(), 4),
                    Numbers.fixed(p.get(Stop.HARM).value(), 4), Numbers.fixed(p.get(Stop.BENEFIT).value(), 4),
                    Numbers.fixed(p.get(Stop.FUTILITY).value(), 4), Numbers.fixed(p.get(Stop.COMPLETE).value(), 4));
        }
        decisions.print(out, "  ");
        out.println();
        int looks = c.lookCount();
        Columns stopping = new Columns("<effect", "E[t]", "se", "recursion", "E[look]", "se", "10%", "25%",
                "median (95% MC)", "75%", "90%", "<stopping look " + histogramAxis(looks));
        for (SimulationReport.EffectResult e : result.effects()) {
            OperatingCharacteristics oc = e.simulated();
            List<LookQuantile> q = oc.quantiles();
            LookQuantile median = q.get(2);
            stopping.row(Descriptions.effect(e.effect()),
                    Numbers.fixed(oc.expectedFraction().value(), 3), Numbers.fixed(oc.expectedFraction().standardError(), 4),
                    e.recursion() == null ? Numbers.NONE : Numbers.fixed(e.recursion().expectedFraction(), 3),
                    Numbers.fixed(oc.expectedLook().value(), 2), Numbers.fixed(oc.expectedLook().standardError(), 2),
                    String.valueOf(q.get(0).look()), String.valueOf(q.get(1).look()),
                    median.look() + " (" + median.low() + "-" + median.high() + ")",
                    String.valueOf(q.get(3).look()), String.valueOf(q.get(4).look()),
                    "|" + histogram(oc) + "|");
        }
        stopping.print(out, "  ");
    }

    private static String histogramAxis(int looks) {
        int per = perCharacter(looks);
        return per == 1 ? "1.." + looks : "1.." + looks + ", " + per + " per mark";
    }

    private static int perCharacter(int looks) {
        return (looks + HISTOGRAM_WIDTH - 1) / HISTOGRAM_WIDTH;
    }

    /** One character per look (or group of looks): blank for none, then darker for more runs. */
    static String histogram(OperatingCharacteristics oc) {
        int looks = oc.looks();
        int per = perCharacter(looks);
        int marks = (looks + per - 1) / per;
        long[] groups = new long[marks];
        long most = 0;
        for (int k = 1; k <= looks; k++) {
            groups[(k - 1) / per] += oc.stoppedAt(k);
        }
        for (long g : groups) {
            most = Math.max(most, g);
        }
        StringBuilder s = new StringBuilder();
        for (long g : groups) {
            if (g == 0) {
                s.append(' ');
            } else {
                int level = (int) Math.ceil((double) g / most * LEVELS.length()) - 1;
                s.append(LEVELS.charAt(Math.max(0, Math.min(LEVELS.length() - 1, level))));
            }
        }
        return s.toString();
    }

    private static void notes(SimulationReport report, PrintWriter out) {
        out.println("drift: the effect (treatment minus control) over its standard error at the planned maximum");
        out.println("  information, i.e. the mean of Z at the final look." + (report.effectUnit() == null
                ? " By default 0 and 0.5, 1 and 1.5 times the" : ""));
        if (report.effectUnit() == null) {
            out.println("  configured effect or, without one, the drift a single look needs for 90% power.");
        }
        out.println("P(reject): a stop for harm or benefit: the false-stop rate under the null, the power otherwise.");
        out.println("se: Monte Carlo standard error. recursion: the same by numerical integration, without simulation.");
        out.println("E[t]: expected information fraction at stopping; at a constant traffic rate, also the expected");
        out.println("  share of the planned duration. Stopping looks count from 1 to " + report.fractions().length
                + "; the median's 95% Monte Carlo");
        out.println("  interval is in brackets.");
    }
}
