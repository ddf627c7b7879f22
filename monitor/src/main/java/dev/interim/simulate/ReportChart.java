package dev.interim.simulate;

import static dev.interim.text.Markup.escape;

import dev.interim.text.Numbers;
import java.util.List;

/**
 * The report as an SVG image, drawn here without a chart library: for each comparison, on the left
 * the probability of stopping at each look (against its information fraction), one line per
 * effect; on the right, against the drift, the probability of a stop for harm or benefit with 95%
 * Monte Carlo error bars, the expected information fraction at stopping, and the comparison's α.
 */
public final class ReportChart {
    static final int WIDTH = 960;
    /** Height of a comparison's block without its legend rows. */
    static final int BLOCK_HEIGHT = 340;
    private static final int LEGEND_ROW = 15;
    static final int TOP = 70;
    private static final int PANEL_HEIGHT = 200;
    private static final int LEFT_X = 70;
    private static final int LEFT_WIDTH = 400;
    private static final int RIGHT_X = 560;
    private static final int RIGHT_WIDTH = 360;
    private static final String[] PALETTE = {
        "#33658a", "#d1495b", "#2a9d8f", "#edae49", "#6a4c93", "#8d6e63", "#00798c", "#9c6644",
    };
    private static final String STYLE = String.join("\n",
            "text { fill: #2f2a24; }",
            ".heading { font-size: 18px; font-weight: 600; }",
            ".subheading, .subtitle, .note { font-size: 12px; fill: #6b6257; }",
            ".title { font-size: 15px; font-weight: 600; }",
            ".panel-title { font-size: 13px; font-weight: 600; }",
            ".tick, .legend text, .axis-label { font-size: 11px; fill: #4a443c; }",
            ".frame { fill: #ffffff; stroke: #d8d2c8; }",
            ".grid { stroke: #eee9e1; }",
            ".axis { stroke: #8a8075; }",
            ".series { fill: none; stroke-width: 2; stroke-linejoin: round; }",
            ".expected-fraction { stroke-dasharray: 6 4; }",
            ".error-bar { stroke-width: 1.5; }",
            ".alpha-level { stroke: #b23a48; stroke-dasharray: 3 3; }");

    private ReportChart() {}

    /** The whole image as SVG text (UTF-8 XML). */
    public static String svg(SimulationReport report) {
        List<SimulationReport.ComparisonResult> comparisons = report.comparisons();
        int block = BLOCK_HEIGHT + LEGEND_ROW * legendRows(comparisons);
        int height = TOP + block * comparisons.size() + 10;
        StringBuilder s = new StringBuilder();
        s.append("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
        s.append("<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"").append(WIDTH).append("\" height=\"").append(height)
                .append("\" viewBox=\"0 0 ").append(WIDTH).append(' ').append(height)
                .append("\" font-family=\"system-ui, -apple-system, 'Segoe UI', sans-serif\" role=\"img\">\n");
        s.append("<title>Operating characteristics by simulation</title>\n");
        s.append("<desc>").append(escape(summary(report))).append("</desc>\n");
        s.append("<style>\n").append(STYLE).append("\n</style>\n");
        s.append("<rect class=\"background\" x=\"0\" y=\"0\" width=\"").append(WIDTH).append("\" height=\"").append(height)
                .append("\" fill=\"#faf8f4\"/>\n");
        text(s, "heading", 24, 32, "start", "Operating characteristics by simulation");
        text(s, "subheading", 24, 52, "start", summary(report));
        for (int i = 0; i < comparisons.size(); i++) {
            comparison(s, comparisons.get(i), TOP + i * block);
        }
        s.append("</svg>\n");
        return s.toString();
    }

    /** Rows of the widest stopping-look legend: two effects a row. */
    private static int legendRows(List<SimulationReport.ComparisonResult> comparisons) {
        int most = 0;
        for (SimulationReport.ComparisonResult c : comparisons) {
            most = Math.max(most, c.effects().size());
        }
        return (most + 1) / 2;
    }

    private static String summary(SimulationReport report) {
        return report.runs() + " runs per effect, stream " + report.stream() + ", " + report.fractions().length
                + " looks; effects as drift (the mean of Z at the planned maximum), treatment minus control";
    }

    private static void comparison(StringBuilder s, SimulationReport.ComparisonResult result, int top) {
        SimulatedComparison c = result.comparison();
        s.append("<g class=\"comparison\" data-experiment=\"").append(escape(c.experiment())).append("\" data-metric=\"")
                .append(escape(c.metric().name())).append("\">\n");
        text(s, "title", 24, top + 20, "start", c.experiment() + " / " + c.metric().label() + " (" + Descriptions.role(c)
                + ", worse: " + Descriptions.worse(c) + ")");
        text(s, "subtitle", 24, top + 38, "start", Descriptions.design(c) + "; " + Descriptions.horizon(c));
        stoppingLooks(s, result, top + 66);
        decisions(s, result, top + 66);
        s.append("</g>\n");
    }

    /**
     * Left panel: the histogram of the stopping look, P(stop at look k), drawn as a step outline over
     * the information fractions, one per effect. The final look takes every run still going, so its
     * bar would flatten the rest: the scale follows the earlier looks, the final bar is cut at the
     * top, and the legend gives its height.
     */
    private static void stoppingLooks(StringBuilder s, SimulationReport.ComparisonResult result, int top) {
        List<SimulationReport.EffectResult> effects = result.effects();
        double early = 0;
        double all = 0;
        for (SimulationReport.EffectResult e : effects) {
            OperatingCharacteristics oc = e.simulated();
            for (int k = 1; k <= oc.looks(); k++) {
                double p = (double) oc.stoppedAt(k) / oc.runs();
                all = Math.max(all, p);
                if (k < oc.looks()) {
                    early = Math.max(early, p);
                }
            }
        }
        double yMax = niceCeiling(early > 0 ? early : all);
        String clip = "clip-" + clipCounter(s);
        s.append("<g class=\"panel stopping-looks\">\n");
        s.append("<clipPath id=\"").append(clip).append("\"><rect x=\"").append(LEFT_X).append("\" y=\"").append(top - 1)
                .append("\" width=\"").append(LEFT_WIDTH + 1).append("\" height=\"").append(PANEL_HEIGHT + 2)
                .append("\"/></clipPath>\n");
        text(s, "panel-title", LEFT_X, top - 8, "start", "Stopping look: probability of stopping at each look");
        frame(s, LEFT_X, top, LEFT_WIDTH);
        for (int i = 0; i <= 4; i++) {
            double t = i / 4.0;
            double x = LEFT_X + t * LEFT_WIDTH;
            line(s, "grid", x, top, x, top + PANEL_HEIGHT);
            text(s, "tick", x, top + PANEL_HEIGHT + 14, "middle", Numbers.plain(t));
            double p = yMax * i / 4.0;
            double y = top + PANEL_HEIGHT - p / yMax * PANEL_HEIGHT;
            line(s, "grid", LEFT_X, y, LEFT_X + LEFT_WIDTH, y);
            text(s, "tick", LEFT_X - 6, y + 4, "end", Numbers.significant(p, 3));
        }
        axes(s, LEFT_X, top, LEFT_WIDTH);
        text(s, "axis-label", LEFT_X + LEFT_WIDTH / 2.0, top + PANEL_HEIGHT + 30, "middle",
                "information fraction (a bar per look, up to its fraction)");
        for (int e = 0; e < effects.size(); e++) {
            OperatingCharacteristics oc = effects.get(e).simulated();
            double[] t = oc.fractions();
            double base = top + PANEL_HEIGHT;
            StringBuilder points = new StringBuilder().append(num(LEFT_X)).append(',').append(num(base));
            for (int k = 1; k <= oc.looks(); k++) {
                double x0 = LEFT_X + (k == 1 ? 0 : t[k - 2]) * LEFT_WIDTH;
                double x1 = LEFT_X + t[k - 1] * LEFT_WIDTH;
                double y = base - (double) oc.stoppedAt(k) / oc.runs() / yMax * PANEL_HEIGHT;
                points.append(' ').append(num(x0)).append(',').append(num(y)).append(' ').append(num(x1)).append(',')
                        .append(num(y));
            }
            points.append(' ').append(num(LEFT_X + LEFT_WIDTH)).append(',').append(num(base));
            s.append("<polyline class=\"series effect\" clip-path=\"url(#").append(clip).append(")\" data-drift=\"")
                    .append(Numbers.plain(effects.get(e).effect().drift())).append("\" stroke=\"").append(color(e))
                    .append("\" points=\"").append(points).append("\"/>\n");
        }
        legend(s, effects, LEFT_X, top + PANEL_HEIGHT + 50);
        s.append("</g>\n");
    }

    /** A number for unique element ids within one image: the clip paths so far. */
    private static int clipCounter(StringBuilder s) {
        int count = 0;
        for (int i = s.indexOf("<clipPath"); i >= 0; i = s.indexOf("<clipPath", i + 1)) {
            count++;
        }
        return count;
    }

    /** Right panel: P(reject) with 95% error bars and E[t] against the drift; α as a dashed line. */
    private static void decisions(StringBuilder s, SimulationReport.ComparisonResult result, int top) {
        List<SimulationReport.EffectResult> effects = new java.util.ArrayList<>(result.effects());
        effects.sort(java.util.Comparator.comparingDouble(e -> e.effect().drift()));
        double low = 0;
        double high = 0;
        for (SimulationReport.EffectResult e : effects) {
            low = Math.min(low, e.effect().drift());
            high = Math.max(high, e.effect().drift());
        }
        if (high - low < 1e-9) {
            low -= 1;
            high += 1;
        }
        double pad = (high - low) * 0.06;
        double x0 = low - pad;
        double x1 = high + pad;
        s.append("<g class=\"panel decisions\">\n");
        text(s, "panel-title", RIGHT_X, top - 8, "start", "Decisions by effect");
        frame(s, RIGHT_X, top, RIGHT_WIDTH);
        for (int i = 0; i <= 4; i++) {
            double p = i / 4.0;
            double y = top + PANEL_HEIGHT - p * PANEL_HEIGHT;
            line(s, "grid", RIGHT_X, y, RIGHT_X + RIGHT_WIDTH, y);
            text(s, "tick", RIGHT_X - 6, y + 4, "end", Numbers.plain(p));
        }
        double labelled = Double.NEGATIVE_INFINITY;
        for (SimulationReport.EffectResult e : effects) {
            double x = RIGHT_X + (e.effect().drift() - x0) / (x1 - x0) * RIGHT_WIDTH;
            if (Math.abs(x - labelled) >= 32) { // keep tick labels apart
                text(s, "tick", x, top + PANEL_HEIGHT + 14, "middle", Numbers.fixed(e.effect().drift(), 2));
                labelled = x;
            }
        }
        axes(s, RIGHT_X, top, RIGHT_WIDTH);
        text(s, "axis-label", RIGHT_X + RIGHT_WIDTH / 2.0, top + PANEL_HEIGHT + 30, "middle", "drift (effect / its standard error at the planned maximum)");
        double alpha = result.comparison().alpha();
        double alphaY = top + PANEL_HEIGHT - alpha * PANEL_HEIGHT;
        line(s, "alpha-level", RIGHT_X, alphaY, RIGHT_X + RIGHT_WIDTH, alphaY);
        text(s, "note", RIGHT_X + RIGHT_WIDTH - 4, alphaY - 4, "end", "alpha " + Numbers.plain(alpha));
        StringBuilder reject = new StringBuilder();
        StringBuilder expected = new StringBuilder();
        StringBuilder marks = new StringBuilder();
        for (int e = 0; e < effects.size(); e++) {
            SimulationReport.EffectResult r = effects.get(e);
            double x = RIGHT_X + (r.effect().drift() - x0) / (x1 - x0) * RIGHT_WIDTH;
            Estimate p = r.simulated().rejection();
            double y = y(top, p.value());
            reject.append(e == 0 ? "" : " ").append(num(x)).append(',').append(num(y));
            expected.append(e == 0 ? "" : " ").append(num(x)).append(',').append(num(y(top, r.simulated().expectedFraction().value())));
            double half = 1.96 * p.standardError();
            marks.append("<line class=\"error-bar\" stroke=\"").append(PALETTE[0]).append("\" x1=\"").append(num(x))
                    .append("\" y1=\"").append(num(y(top, Math.min(1, p.value() + half)))).append("\" x2=\"").append(num(x))
                    .append("\" y2=\"").append(num(y(top, Math.max(0, p.value() - half)))).append("\"/>\n");
            marks.append("<circle class=\"point reject\" fill=\"").append(color(result.effects().indexOf(r))).append("\" cx=\"").append(num(x))
                    .append("\" cy=\"").append(num(y)).append("\" r=\"4\"/>\n");
        }
        s.append("<polyline class=\"series reject\" stroke=\"").append(PALETTE[0]).append("\" points=\"").append(reject).append("\"/>\n");
        s.append("<polyline class=\"series expected-fraction\" stroke=\"").append(PALETTE[5]).append("\" points=\"")
                .append(expected).append("\"/>\n");
        s.append(marks);
        int lx = RIGHT_X;
        int ly = top + PANEL_HEIGHT + 50;
        s.append("<g class=\"legend\">\n");
        line(s, "series reject", PALETTE[0], lx, ly - 4, lx + 18, ly - 4);
        text(s, "legend-text tick", lx + 24, ly, "start", "P(stop for harm or benefit), 95% MC bars");
        line(s, "series expected-fraction", PALETTE[5], lx, ly + 12, lx + 18, ly + 12);
        text(s, "legend-text tick", lx + 24, ly + 16, "start", "expected information fraction at stopping (dashed)");
        s.append("</g>\n");
        s.append("</g>\n");
    }

    private static double y(int top, double p) {
        return top + PANEL_HEIGHT - p * PANEL_HEIGHT;
    }

    /** The effects' colours, two a row below the panel, each with the height of its final-look bar. */
    private static void legend(StringBuilder s, List<SimulationReport.EffectResult> effects, double x, double y) {
        s.append("<g class=\"legend\">\n");
        for (int e = 0; e < effects.size(); e++) {
            SimulatedEffect effect = effects.get(e).effect();
            OperatingCharacteristics oc = effects.get(e).simulated();
            double left = x + (e % 2) * 240;
            double row = y + LEGEND_ROW * (e / 2);
            s.append("<rect x=\"").append(num(left)).append("\" y=\"").append(num(row - 8))
                    .append("\" width=\"10\" height=\"10\" fill=\"").append(color(e)).append("\"/>\n");
            String name = effect.isNull() ? "null" : effect.direction() + (effect.inMetricUnits() == null ? ""
                    : " " + (effect.inMetricUnits() > 0 ? "+" : "") + Numbers.significant(effect.inMetricUnits(), 3));
            text(s, null, left + 16, row + 1, "start", name + " (drift " + Numbers.fixed(effect.drift(), 2) + "), last "
                    + Numbers.fixed((double) oc.stoppedAt(oc.looks()) / oc.runs(), 3));
        }
        s.append("</g>\n");
    }

    private static void frame(StringBuilder s, double x, double top, double width) {
        s.append("<rect class=\"frame\" x=\"").append(num(x)).append("\" y=\"").append(num(top)).append("\" width=\"")
                .append(num(width)).append("\" height=\"").append(PANEL_HEIGHT).append("\"/>\n");
    }

    private static void axes(StringBuilder s, double x, double top, double width) {
        line(s, "axis", x, top + PANEL_HEIGHT, x + width, top + PANEL_HEIGHT);
        line(s, "axis", x, top, x, top + PANEL_HEIGHT);
    }

    private static void line(StringBuilder s, String cls, double x1, double y1, double x2, double y2) {
        line(s, cls, null, x1, y1, x2, y2);
    }

    private static void line(StringBuilder s, String cls, String stroke, double x1, double y1, double x2, double y2) {
        s.append("<line class=\"").append(cls).append('"');
        if (stroke != null) {
            s.append(" stroke=\"").append(stroke).append('"');
        }
        s.append(" x1=\"").append(num(x1)).append("\" y1=\"").append(num(y1))
                .append("\" x2=\"").append(num(x2)).append("\" y2=\"").append(num(y2)).append("\"/>\n");
    }

    private static void text(StringBuilder s, String cls, double x, double y, String anchor, String content) {
        s.append("<text");
        if (cls != null) {
            s.append(" class=\"").append(cls).append('"');
        }
        s.append(" x=\"").append(num(x)).append("\" y=\"").append(num(y)).append("\" text-anchor=\"").append(anchor)
                .append("\">").append(escape(content)).append("</text>\n");
    }

    /** The smallest of 1, 2, 2.5, 5 × 10^n at or above x (and above 0). */
    static double niceCeiling(double x) {
        if (!(x > 0)) {
            return 1;
        }
        double power = Math.pow(10, Math.floor(Math.log10(x)));
        for (double m : new double[] {1, 2, 2.5, 5, 10}) {
            if (m * power >= x * (1 - 1e-12)) {
                return m * power;
            }
        }
        return 10 * power;
    }

    private static String color(int index) {
        return PALETTE[index % PALETTE.length];
    }

    /** A coordinate with two decimals, trailing zeros dropped. */
    private static String num(double x) {
        return Numbers.rounded(x, 2).toPlainString();
    }
}
