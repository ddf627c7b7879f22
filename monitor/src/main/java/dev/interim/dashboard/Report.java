package dev.interim.dashboard;

import static dev.interim.dashboard.Wording.h;

import dev.interim.chart.BoundaryChart;
import dev.interim.chart.Sides;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.ExperimentView.ComparisonView;
import dev.interim.experiment.LookPoint;
import dev.interim.text.Numbers;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;

/**
 * The post-mortem report of one experiment: one self-contained HTML file (style inline, charts as
 * inline SVG, no script, nothing fetched) to attach to an incident or a launch review. It holds the
 * state at the last look, the outcome of every comparison (final decision, the look that decided
 * it, the effect estimate and the relative change, each with its repeated confidence interval), the
 * design (α, sides, spending function, action) and, per comparison, the look-history chart and table.
 *
 * <p>It is made from an {@link ExperimentView} alone, so a running daemon ({@code interim report})
 * and a replay of past events give the same report for the same looks.
 */
public final class Report {
    /** Look-history tables longer than this show the first look, every change, and the last looks. */
    static final int FULL_HISTORY = 60;
    static final int TAIL = 30;

    private Report() {}


    /**
     * Writes the report of {@code view} to {@code file} (UTF-8, replacing it).
     *
     * @param source where the view came from, e.g. the daemon's address or a replay's event file (may be null)
     * @param generated when the report is made
     */
    public static void write(ExperimentView view, Path file, String source, Instant generated) throws IOException {
        Files.writeString(file, html(view, source, generated), StandardCharsets.UTF_8);
    }

    /** The report as an HTML document. */
    public static String html(ExperimentView view, String source, Instant generated) {
        StringBuilder body = new StringBuilder(32768);
        body.append("<section class=\"experiment\">\n<header><h2>").append(h(view.id())).append("</h2>")
                .append(ExperimentSection.flags(view)).append("</header>\n");
        body.append("<p class=\"overview\">Control: ").append(h(view.control())).append(" · treatments: ")
                .append(h(String.join(", ", view.treatments()))).append(" · state as of the last look.</p>\n");
        body.append(ExperimentSection.facts(view, null));
        body.append("<h3>Outcome</h3>\n").append(outcome(view));
        body.append("<h3>Counts at the last look</h3>\n").append(counts(view));
        body.append("<h3>Design</h3>\n").append(design(view));
        body.append("<h3>Look history</h3>\n");
        for (int j = 0; j < view.comparisons().size(); j++) {
            body.append(history(view, view.comparisons().get(j), "r" + j));
        }
        body.append("</section>\n");
        return """
                <!DOCTYPE html>
                <html lang="en">
                <head>
                <meta charset="utf-8">
                <meta name="viewport" content="width=device-width, initial-scale=1">
                <meta http-equiv="Content-Security-Policy" content="%s">
                <link rel="icon" href="data:,">
                <title>Interim report · %s</title>
                <style>
                %s</style>
                </head>
                <body>
                <div class="band"><h1>Post-mortem report</h1><span class="what">%s</span>
                <span class="refresh">generated %s%s</span></div>
                <div class="page">
                %s<div class="guide">
                <p><strong>How to read it.</strong> At every look Z — the treatment minus control over its standard error, on
                all data so far — is compared with the boundaries of the design at that information fraction (1 = the planned
                maximum). The boundaries come from α spending: each look spends part of the comparison's α, so the chance of a
                false stop over all looks together stays at most α however often the daemon looked. A two-sided design spends
                α/2 on each side. Stops are final. The repeated confidence intervals cover the true effect at every look at once
                with the stated level, so the interval at the deciding look can be quoted as it is. Effects of rates are in
                percentage points; those of a quantile metric (p99 latency) are the treatment's quantile minus control's, in
                the metric's units. The relative change is the treatment's level over control's, minus 1, in percent; its
                interval comes from that of the log ratio at the same level, and it is shown as – when a level is not
                positive. How arms were assigned matters: per unit, event metrics are analysed as ratios of per-unit sums,
                since a unit's events are not independent.</p>
                </div>
                <footer class="page-foot">Written by interim report. This file is self-contained: no script, nothing fetched.
                Times are UTC.</footer>
                </div>
                </body>
                </html>
                """.formatted(Style.contentSecurityPolicy(false), h(view.id()), Style.CSS, h(view.id()), Wording.time(generated),
                source == null || source.isBlank() ? "" : " from " + h(source), body);
    }

    /** One row per comparison: the final decision, the look that made it, Z, boundary and the effect. */
    private static String outcome(ExperimentView view) {
        StringBuilder out = new StringBuilder("<div class=\"scroll\"><table class=\"summary\"><thead><tr><th scope=\"col\">arm</th>"
                + "<th scope=\"col\">metric</th><th scope=\"col\">decision</th><th scope=\"col\">decided at</th>"
                + "<th scope=\"col\">looks</th><th scope=\"col\">Z</th><th scope=\"col\">boundary</th>"
                + "<th scope=\"col\">effect</th><th scope=\"col\">repeated CI</th><th scope=\"col\">relative change (repeated CI)</th>"
                + "<th scope=\"col\">level</th></tr></thead><tbody>\n");
        for (ComparisonView c : view.comparisons()) {
            out.append("<tr data-arm=\"").append(h(c.arm())).append("\" data-metric=\"").append(h(c.metric())).append("\"><td>")
                    .append(h(c.arm())).append("</td><td>").append(h(c.label())).append("</td><td>")
                    .append(Wording.badge(c.decision())).append("</td>");
            LookPoint at = decidingLook(c);
            boolean atALook = at != null && at.decision() == c.decision();
            String when = c.decision().isFinal() && !atALook ? "not at a look shown: an operator's stop, or decided before a restart"
                    : at == null ? (Wording.waiting(view, c) == null ? "no look" : "no look: " + h(Wording.waiting(view, c)))
                    : c.decision().isFinal() ? "look " + at.look() + ", fraction " + Numbers.significant(at.fraction(), 3) + ", "
                            + Wording.time(at.at())
                    : "not decided; last look " + at.look();
            if (at == null) {
                out.append("<td>").append(when).append("</td><td>0</td><td>–</td><td>–</td><td>–</td><td>–</td><td>–</td><td>")
                        .append(Wording.level(c)).append("</td></tr>\n");
                continue;
            }
            out.append("<td>").append(when)
                    .append("</td><td>").append(c.looks().size()).append("</td><td>").append(Numbers.fixed(at.statistic(), 3))
                    .append("</td><td>").append(Wording.boundaryAt(c, at)).append("</td><td>").append(Wording.effect(c, at.estimate()))
                    .append("</td><td>").append(Wording.interval(c, at)).append("</td><td>").append(Wording.relative(at))
                    .append("</td><td>").append(Wording.level(c)).append("</td></tr>\n");
        }
        return out.append("</tbody></table></div>\n").toString();
    }

    /**
     * The look that made the final decision (the first look showing it), or the last look when the
     * comparison is still running or held; null before any look.
     */
    static LookPoint decidingLook(ComparisonView c) {
        List<LookPoint> looks = c.looks();
        if (looks.isEmpty()) {
            return null;
        }
        if (c.decision().isFinal()) {
            for (LookPoint p : looks) {
                if (p.decision() == c.decision()) {
                    return p;
                }
            }
        }
        return looks.get(looks.size() - 1);
    }

    /** What the last look saw, per metric and arm: events or units, successes or mean and sd. */
    private static String counts(ExperimentView view) {
        if (view.tallies().isEmpty()) {
            return "<p>No tallies yet.</p>\n";
        }
        List<String> arms = new ArrayList<>();
        arms.add(view.control());
        arms.addAll(view.treatments());
        StringBuilder out = new StringBuilder("<div class=\"scroll\"><table class=\"summary counts\"><thead><tr><th scope=\"col\">metric</th>");
        for (String arm : arms) {
            out.append("<th scope=\"col\">").append(h(arm)).append(arm.equals(view.control()) ? " (control)" : "").append("</th>");
        }
        out.append("</tr></thead><tbody>\n");
        List<String> metrics = new ArrayList<>();
        view.comparisons().forEach(c -> {
            if (!metrics.contains(c.metric())) {
                metrics.add(c.metric());
            }
        });
        view.tallies().keySet().stream().sorted().filter(m -> !metrics.contains(m)).forEach(metrics::add);
        for (String metric : metrics) {
            out.append("<tr><td>").append(h(metric)).append("</td>");
            for (String arm : arms) {
                out.append("<td>").append(h(Wording.observed(view, metric, arm))).append("</td>");
            }
            out.append("</tr>\n");
        }
        return out.append("</tbody></table></div>\n").toString();
    }

    /** The design of each comparison: what it watches for and how it spends α. */
    private static String design(ExperimentView view) {
        StringBuilder out = new StringBuilder("<div class=\"scroll\"><table class=\"design\"><thead><tr><th scope=\"col\">arm</th>"
                + "<th scope=\"col\">metric</th><th scope=\"col\">kind</th><th scope=\"col\">role</th><th scope=\"col\">worse</th>"
                + "<th scope=\"col\">α</th><th scope=\"col\">sides</th><th scope=\"col\">spending</th><th scope=\"col\">on harm</th>"
                + "</tr></thead><tbody>\n");
        for (ComparisonView c : view.comparisons()) {
            out.append("<tr><td>").append(h(c.arm())).append("</td><td>").append(h(c.metric())).append("</td><td>")
                    .append(h(ExperimentSection.kind(c)))
                    .append("</td><td>").append(h(c.role())).append("</td><td>").append(h(c.worse())).append("</td><td>")
                    .append(Numbers.significant(c.alpha(), 4)).append("</td><td>").append(h(Sides.describe(c))).append("</td><td>")
                    .append(h(Wording.spending(c.spending()))).append("</td><td>").append(h(c.action())).append("</td></tr>\n");
        }
        out.append("</tbody></table></div>\n");
        if (view.treatments().size() > 1) {
            out.append("<p class=\"guide\">α is per comparison: each metric's α is shared equally among the ")
                    .append(view.treatments().size()).append(" treatments (Bonferroni).</p>\n");
        }
        return out.toString();
    }

    /** A comparison's chart and its table of looks. */
    private static String history(ExperimentView view, ComparisonView c, String id) {
        StringBuilder out = new StringBuilder(8192);
        out.append("<article class=\"comparison decision-").append(c.decision().label()).append("\">\n<header><h4>")
                .append(h(c.arm())).append(" vs ").append(h(view.control())).append(" · ").append(h(c.label())).append("</h4>")
                .append(Wording.badge(c.decision())).append("</header>\n");
        out.append(BoundaryChart.svg(c, id)).append('\n');
        List<LookPoint> looks = c.looks();
        if (looks.isEmpty()) {
            return out.append("<p>No look was made.</p>\n</article>\n").toString();
        }
        List<LookPoint> shown = shown(looks);
        if (shown.size() < looks.size()) {
            out.append("<p class=\"guide\">").append(looks.size()).append(" looks; the table shows ").append(shown.size())
                    .append(": the first, every change of decision, and the last ").append(TAIL).append(". The chart shows all.</p>\n");
        }
        Sides sides = Sides.of(c);
        // A one-sided design without futility has nothing on its other side: no column for it.
        boolean upper = !Sides.FUTILITY.equals(sides.upper()) || looks.stream().anyMatch(p -> Double.isFinite(p.upper()));
        boolean lower = !Sides.FUTILITY.equals(sides.lower()) || looks.stream().anyMatch(p -> Double.isFinite(p.lower()));
        out.append("<div class=\"scroll\"><table class=\"history\"><thead><tr><th scope=\"col\">look</th><th scope=\"col\">time</th>"
                + "<th scope=\"col\">fraction</th><th scope=\"col\">Z</th>"
                + (upper ? "<th scope=\"col\">upper (" + sides.upper() + ")</th>" : "")
                + (lower ? "<th scope=\"col\">lower (" + sides.lower() + ")</th>" : "") + "<th scope=\"col\">α spent</th><th scope=\"col\">effect</th><th scope=\"col\">repeated CI</th>"
                + "<th scope=\"col\">relative change (repeated CI)</th><th scope=\"col\">decision</th></tr></thead><tbody>\n");
        LookPoint previous = null;
        for (LookPoint p : shown) {
            boolean changed = previous != null && previous.decision() != p.decision();
            out.append(changed ? "<tr class=\"changed\">" : "<tr>").append("<td>").append(p.look()).append("</td><td>")
                    .append(Wording.time(p.at())).append("</td><td>").append(Numbers.significant(p.fraction(), 4)).append("</td><td>")
                    .append(Numbers.fixed(p.statistic(), 3)).append("</td><td>")
                    .append(upper ? Numbers.fixed(p.upper(), 3) + "</td><td>" : "")
                    .append(lower ? Numbers.fixed(p.lower(), 3) + "</td><td>" : "").append(Numbers.significant(p.alphaSpent(), 3))
                    .append("</td><td>").append(Wording.effect(c, p.estimate())).append("</td><td>").append(Wording.interval(c, p))
                    .append("</td><td>").append(Wording.relative(p)).append("</td><td>").append(p.decision().label()).append("</td></tr>\n");
            previous = p;
        }
        return out.append("</tbody></table></div>\n</article>\n").toString();
    }

    /** All looks when few; else the first, each look whose decision differs from the one before, and the tail. */
    static List<LookPoint> shown(List<LookPoint> looks) {
        if (looks.size() <= FULL_HISTORY) {
            return looks;
        }
        List<LookPoint> out = new ArrayList<>();
        int tailFrom = looks.size() - TAIL;
        for (int i = 0; i < looks.size(); i++) {
            if (i == 0 || i >= tailFrom || looks.get(i).decision() != looks.get(i - 1).decision()) {
                out.add(looks.get(i));
            }
        }
        return out;
    }
}
