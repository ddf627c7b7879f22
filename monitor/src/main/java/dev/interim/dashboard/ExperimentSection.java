package dev.interim.dashboard;

import static dev.interim.dashboard.Wording.h;

import dev.interim.chart.BoundaryChart;
import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.ExperimentView.ComparisonView;
import dev.interim.experiment.LookPoint;
import dev.interim.text.Numbers;
import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * One experiment on the dashboard: its state (how arms were assigned, mode, hold, sample-ratio
 * check, last look, exposures per arm), a call-out naming the arms stopped for harm, and a card per
 * metric × arm with the boundary chart, the decision and the numbers of the current look (the
 * effect and the relative change, each with its repeated interval).
 */
final class ExperimentSection {
    private ExperimentSection() {}

    /** The section of experiment {@code v}; {@code index} keeps element ids unique in the page. */
    static String html(ExperimentView v, int index, Instant now) {
        StringBuilder out = new StringBuilder(8192);
        out.append("<section class=\"experiment\" data-experiment=\"").append(h(v.id())).append("\" aria-labelledby=\"e")
                .append(index).append("-name\">\n<header><h2 id=\"e").append(index).append("-name\">").append(h(v.id()))
                .append("</h2>").append(flags(v)).append("</header>\n");
        out.append(facts(v, now));
        List<String> harmed = new ArrayList<>();
        Map<String, List<String>> byArm = new LinkedHashMap<>();
        for (ComparisonView c : v.comparisons()) {
            if (c.decision() == Decision.STOP_HARM) {
                byArm.computeIfAbsent(c.arm(), a -> new ArrayList<>()).add(c.label());
            }
        }
        byArm.forEach((arm, metrics) -> harmed.add(h(arm) + " on " + h(String.join(", ", metrics))));
        if (!harmed.isEmpty()) {
            out.append("<p class=\"alert\"><span aria-hidden=\"true\">⚠</span> Stopped for harm: ")
                    .append(String.join("; ", harmed)).append(".</p>\n");
        }
        if (v.held()) {
            out.append("<p class=\"held-note\"><span aria-hidden=\"true\">‖</span> Held: automated decisions are suspended (")
                    .append(h(v.holdReason() == null ? "no reason given" : v.holdReason()))
                    .append("). Looks resume when the hold ends.</p>\n");
        }
        out.append("<div class=\"cards\">\n");
        for (int j = 0; j < v.comparisons().size(); j++) {
            out.append(card(v, v.comparisons().get(j), "e" + index + "c" + j));
        }
        if (v.comparisons().isEmpty()) {
            out.append("<p class=\"empty\">This experiment has no comparison.</p>");
        }
        out.append("</div>\n</section>\n");
        return out.toString();
    }

    /** The mode and hold flags beside the name, in words. */
    static String flags(ExperimentView v) {
        StringBuilder out = new StringBuilder();
        out.append(v.dryRun() ? "<span class=\"flag\">dry run: decides and records, calls no webhook</span>"
                : "<span class=\"flag live\">live: a kill action calls the webhook</span>");
        if (v.held()) {
            out.append("<span class=\"flag held\"><span aria-hidden=\"true\">‖</span> HELD</span>");
        }
        if (v.sampleRatio().mismatch()) {
            out.append("<span class=\"flag mismatch\"><span aria-hidden=\"true\">⚠</span> SAMPLE-RATIO MISMATCH</span>");
        }
        return out.toString();
    }

    /** The state of the experiment as a definition list, with the exposures per arm. */
    static String facts(ExperimentView v, Instant now) {
        StringBuilder out = new StringBuilder("<dl class=\"facts\">\n");
        out.append("<dt>assignment</dt><dd data-assignment=\"").append(v.assignment().label()).append("\">")
                .append(Wording.assignment(v)).append("</dd>\n");
        out.append("<dt>last look</dt><dd>").append(Wording.time(v.lastLook()));
        if (v.lastLook() != null && now != null) {
            out.append(" (").append(Wording.ago(v.lastLook(), now)).append(')');
        }
        out.append("</dd>\n<dt>sample ratio</dt><dd>").append(Wording.sampleRatio(v)).append("</dd>\n");
        out.append("<dt>held</dt><dd>").append(v.held() ? "yes: " + h(v.holdReason() == null ? "no reason given" : v.holdReason()) : "no")
                .append("</dd>\n");
        out.append("<dt>exposures</dt><dd>").append(arms(v)).append("</dd>\n</dl>\n");
        return out.toString();
    }

    /** Exposures per arm with their shares, control first. */
    static String arms(ExperimentView v) {
        long total = v.exposures().values().stream().mapToLong(Long::longValue).sum();
        StringBuilder out = new StringBuilder("<table class=\"arms\"><thead><tr><th scope=\"col\">arm</th><th scope=\"col\">exposures</th>"
                + "<th scope=\"col\">share</th></tr></thead><tbody>");
        List<String> arms = new ArrayList<>();
        arms.add(v.control());
        arms.addAll(v.treatments());
        for (String arm : arms) {
            Long n = v.exposures().get(arm);
            out.append("<tr><td>").append(h(arm)).append(arm.equals(v.control()) ? " (control)" : "").append("</td><td>")
                    .append(Wording.exposures(v, arm)).append("</td><td>")
                    .append(n == null || total == 0 ? Numbers.NONE : Numbers.fixed(100.0 * n / total, 1) + "%").append("</td></tr>");
        }
        return out.append("</tbody></table>").toString();
    }

    /** One metric × arm: chart, decision and the numbers of the current look. */
    static String card(ExperimentView v, ComparisonView c, String id) {
        StringBuilder out = new StringBuilder(6144);
        out.append("<article class=\"comparison decision-").append(c.decision().label()).append("\" data-arm=\"").append(h(c.arm()))
                .append("\" data-metric=\"").append(h(c.metric())).append("\" data-decision=\"").append(c.decision().label())
                .append("\">\n<header><h4>").append(h(c.arm())).append(" <span class=\"vs\">vs ").append(h(v.control()))
                .append("</span> · ").append(h(c.label())).append("</h4>").append(Wording.badge(c.decision())).append("</header>\n");
        out.append("<p class=\"meta\">").append(h(c.role())).append(" · ").append(h(kind(c))).append(" · ").append(h(c.worse()))
                .append(" is worse · α ").append(Numbers.significant(c.alpha(), 3)).append(' ').append(sides(c)).append(" · ")
                .append(h(c.spending())).append(" · on harm: ").append(h(c.action())).append("</p>\n");
        out.append(BoundaryChart.svg(c, id)).append('\n');
        out.append(numbers(v, c));
        out.append("</article>\n");
        return out.toString();
    }

    /** The kind, with a quantile's probability: {@code event-quantile 0.99}. */
    static String kind(ComparisonView c) {
        return c.isQuantile() ? c.kind() + " " + Numbers.plain(c.quantile()) : c.kind();
    }

    private static String sides(ComparisonView c) {
        return "two_sided".equals(c.alternative()) ? "two-sided" : "one-sided";
    }

    private static String numbers(ExperimentView v, ComparisonView c) {
        StringBuilder out = new StringBuilder("<dl class=\"numbers\">");
        List<LookPoint> looks = c.looks();
        String counts = "<span class=\"line\">" + h(c.arm()) + ": " + h(Wording.observed(v, c.metric(), c.arm())) + "</span>";
        if (v.tallies().getOrDefault(c.metric(), Map.of()).containsKey(v.control())) {
            counts += "<span class=\"line\">" + h(v.control()) + ": " + h(Wording.observed(v, c.metric(), v.control())) + "</span>";
        }
        if (looks.isEmpty()) {
            String why = Wording.waiting(v, c);
            item(out, "look", why == null ? "none yet" : "none yet: " + h(why));
            wide(out, "counted at the last look", counts);
            return out.append("</dl>\n").toString();
        }
        LookPoint p = looks.get(looks.size() - 1);
        item(out, "look", p.look() + " at fraction " + Numbers.significant(p.fraction(), 3));
        item(out, "Z", Numbers.fixed(p.statistic(), 2));
        item(out, "boundary", Wording.boundaryAt(c, p));
        item(out, "α spent", Numbers.significant(p.alphaSpent(), 3) + " of " + Numbers.significant(c.alpha(), 3));
        item(out, "effect (" + Wording.level(c) + " repeated CI)", Wording.effect(c, p.estimate()) + " " + Wording.interval(c, p));
        item(out, "relative change (" + Wording.level(c) + " repeated CI)", Wording.relative(p));
        wide(out, "counted at the last look", counts);
        return out.append("</dl>\n").toString();
    }

    private static void item(StringBuilder out, String term, String value) {
        out.append("<div><dt>").append(term).append("</dt><dd>").append(value).append("</dd></div>");
    }

    /** An item across the whole row. */
    private static void wide(StringBuilder out, String term, String value) {
        out.append("<div class=\"wide\"><dt>").append(term).append("</dt><dd>").append(value).append("</dd></div>");
    }
}
