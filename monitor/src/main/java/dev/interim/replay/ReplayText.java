package dev.interim.replay;

import static dev.interim.text.Numbers.INFINITY;
import static dev.interim.text.Numbers.NONE;
import static dev.interim.text.Numbers.count;
import static dev.interim.text.Numbers.fixed;
import static dev.interim.text.Numbers.significant;

import dev.interim.text.Durations;
import dev.interim.events.MappedExperiment;
import dev.interim.events.EventCatalog;
import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.LookResult;
import dev.interim.stats.ConfidenceInterval;
import dev.interim.text.Numbers;
import java.io.PrintWriter;
import java.util.ArrayList;
import java.util.List;

/**
 * A replay as people read it: one aligned line per decision as it happens, and a summary at the
 * end. Numbers are written by {@link Numbers}'s human text: an infinite boundary or interval end
 * prints as {@code ∞} ({@code -∞}), a value that is not there as {@link Numbers#NONE}, and the
 * sample-ratio p-value like {@code 2.6e-24} when tiny (the JSON lines stay raw).
 * A quantile metric is named with its percentile ({@code p99 search-ms}); its estimate is the
 * difference of the arms' quantiles, in the metric's units.
 * The summary's last column is the relative change (treatment/control − 1) with its interval; for a
 * comparison that never looked it says why (the comparison's reason for skipping its last due look).
 */
public final class ReplayText {
    private final int experimentWidth;
    private final int armWidth;
    private final int metricWidth;

    /** Columns sized to the names in {@code config}, so the timeline lines up as it streams. */
    public ReplayText(EventCatalog config) {
        int e = 0;
        int a = 0;
        int m = 0;
        for (MappedExperiment x : config.experiments()) {
            ExperimentDefinition d = x.definition();
            e = Math.max(e, d.id().length());
            for (String arm : d.treatments()) {
                a = Math.max(a, arm.length());
            }
            for (var metric : d.metrics()) {
                m = Math.max(m, metric.label().length());
            }
        }
        this.experimentWidth = e;
        this.armWidth = a;
        this.metricWidth = m;
    }

    /**
     * One decision: {@code TIME  EXPERIMENT  ARM  METRIC  DECISION  look N  fraction F  z Z  boundary B}.
     * A hold or resume before any look has no numbers and ends after the decision.
     */
    public String line(DecisionRecord d) {
        StringBuilder s = new StringBuilder(160);
        s.append(d.at()).append("  ");
        s.append(pad(d.experiment(), experimentWidth)).append("  ");
        s.append(pad(d.arm(), armWidth)).append("  ");
        s.append(pad(label(d), metricWidth)).append("  ");
        s.append(pad(d.decision(), 13));
        if (d.look() > 0) {
            s.append("  look ").append(d.look())
                    .append("  fraction ").append(fixed(d.fraction(), 3))
                    .append("  z ").append(fixed(d.statistic(), 3))
                    .append("  boundary ").append(fixed(d.boundary(), 3));
        }
        return s.toString().stripTrailing();
    }

    /** The summary: counts, then per experiment its exposures and a row per arm × metric. */
    public void summary(ReplayResult r, String file, PrintWriter out) {
        double seconds = r.elapsed().toNanos() / 1e9;
        out.println();
        out.println("Replay of " + file + ": " + count(r.events()) + " events in " + fixed(seconds, 1) + " s ("
                + count(seconds > 0 ? Math.round(r.events() / seconds) : r.events()) + " events/s)");
        out.println("  accepted  " + count(r.accepted()));
        StringBuilder reasons = new StringBuilder();
        r.rejected().forEach((reason, n) -> reasons.append(reasons.length() == 0 ? "" : ", ").append(reason).append(' ')
                .append(count(n)));
        out.println("  rejected  " + count(r.rejectedTotal()) + (reasons.length() == 0 ? "" : " (" + reasons + ")"));
        r.firstRejections().forEach((reason, where) -> out.println("    first " + reason + ": " + where));
        out.println("  looks     " + count(r.looks()) + "   decisions " + count(r.decisions().size()));
        for (ExperimentOutcome e : r.experiments()) {
            experiment(e, out);
        }
        out.flush();
    }

    private void experiment(ExperimentOutcome e, PrintWriter out) {
        ExperimentView v = e.view();
        out.println();
        if (e.events() == 0) {
            out.println(e.id() + ": no events");
            return;
        }
        out.println(e.id() + ": " + count(e.events()) + " events from " + e.firstEvent() + "; " + count(e.looks())
                + " looks every " + Durations.format(e.lookEvery()) + ", the last at " + v.lastLook() + (e.late() > 0 ? "; " + count(e.late()) + " late events" : ""));
        List<String> exposures = new ArrayList<>();
        for (String arm : concat(v.control(), v.treatments())) {
            exposures.add(arm + " " + count(v.exposures().getOrDefault(arm, 0L)));
        }
        out.println("  exposures: " + String.join(", ", exposures) + "; sample ratio "
                + Numbers.pValue(v.sampleRatio().pValue()) + "; arms assigned per " + v.assignment().label()
                + (v.held() ? "; HELD (" + v.holdReason() + ")" : ""));
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"arm", "metric", "role", "decision", "look", "fraction", "z", "boundary", "estimate",
            "interval", "relative"});
        for (ComparisonOutcome c : e.comparisons()) {
            LookResult l = c.last();
            String metric = label(v, c);
            if (l == null) {
                rows.add(new String[] {c.arm(), metric, c.role(), c.decision().label(), NONE, NONE, NONE, NONE, NONE, NONE,
                    c.skipped() == null ? "too few observations to look" : c.skipped()});
                continue;
            }
            rows.add(new String[] {c.arm(), metric, c.role(), c.decision().label(),
                String.valueOf(l.look().number()), fixed(l.look().fraction(), 3), fixed(l.estimate().z(), 3),
                fixed(l.boundary(), 3), significant(l.estimate().effect(), 4), interval(l.interval()), relative(l)});
        }
        table(rows, out);
    }

    /** Left-aligned names, right-aligned numbers, the intervals left-aligned last. */
    private static void table(List<String[]> rows, PrintWriter out) {
        int columns = rows.get(0).length;
        int[] widths = new int[columns];
        for (String[] row : rows) {
            for (int c = 0; c < columns; c++) {
                widths[c] = Math.max(widths[c], row[c].length());
            }
        }
        for (String[] row : rows) {
            StringBuilder line = new StringBuilder("  ");
            for (int c = 0; c < columns; c++) {
                boolean left = c < 4 || c >= columns - 2;
                String gap = " ".repeat(widths[c] - row[c].length());
                line.append(c == 0 ? "" : "  ").append(left ? row[c] + gap : gap + row[c]);
            }
            out.println(line.toString().stripTrailing());
        }
    }

    private static List<String> concat(String first, List<String> rest) {
        List<String> all = new ArrayList<>();
        all.add(first);
        all.addAll(rest);
        return all;
    }

    private static String interval(ConfidenceInterval i) {
        String lower = Double.isInfinite(i.lower()) ? "(-" + INFINITY : "[" + significant(i.lower(), 4);
        String upper = Double.isInfinite(i.upper()) ? INFINITY + ")" : significant(i.upper(), 4) + "]";
        return lower + ", " + upper + " " + significant(100 * i.level(), 4) + "%";
    }

    /**
     * The relative change treatment/control − 1 in percent with its repeated interval (at the level of
     * the interval column), e.g. {@code +4.12% [+0.31%, ∞)}; {@link Numbers#NONE} when undefined (a
     * level that is not positive). An end open below (−100%: the log ratio's interval is open there) prints as
     * {@code (-100%}.
     */
    static String relative(LookResult l) {
        ConfidenceInterval i = l.relativeInterval();
        if (i == null || !Double.isFinite(l.estimate().relative())) {
            return NONE;
        }
        String lower = i.lower() <= -1 ? "(-100%" : "[" + percent(i.lower());
        String upper = Double.isInfinite(i.upper()) ? INFINITY + ")" : percent(i.upper()) + "]";
        return percent(l.estimate().relative()) + " " + lower + ", " + upper;
    }

    /** A share as a signed percent to 3 significant digits: {@code +4.12%}, {@code -0.5%}. */
    static String percent(double share) {
        String s = significant(100 * share, 3);
        return (share > 0 ? "+" : "") + s + "%";
    }

    /** The metric of a decision as people read it: its name, after its percentile for a quantile ({@code p99 search-ms}). */
    static String label(DecisionRecord d) {
        return Double.isNaN(d.quantile()) ? d.metric() : Numbers.percentileLabel(d.quantile(), d.metric());
    }

    private static String label(ExperimentView v, ComparisonOutcome c) {
        for (ExperimentView.ComparisonView view : v.comparisons()) {
            if (view.arm().equals(c.arm()) && view.metric().equals(c.metric())) {
                return view.label();
            }
        }
        return c.metric();
    }

    private static String pad(String s, int width) {
        return s.length() >= width ? s : s + " ".repeat(width - s.length());
    }

}
