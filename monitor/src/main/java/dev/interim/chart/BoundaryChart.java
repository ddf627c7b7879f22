package dev.interim.chart;

import dev.interim.experiment.ExperimentView.ComparisonView;
import dev.interim.experiment.LookPoint;
import dev.interim.text.Markup;
import dev.interim.text.Numbers;
import java.util.ArrayList;
import java.util.List;
import java.util.function.ToDoubleFunction;
import java.util.regex.Pattern;

/**
 * The look history of one comparison as an SVG picture: the statistic Z (treatment minus control
 * over its standard error) at each look against the information fraction, with the upper and lower
 * boundaries of its group-sequential design, the regions beyond them tinted, a zero line, axes with
 * ticks, and the current (last) look ringed and labelled.
 *
 * <p>What cannot be drawn is said, in the picture and in its description: a boundary is infinite
 * until its design has spent some α, so it is drawn only where it is finite; a finite boundary far
 * above the statistic (early O'Brien–Fleming-type boundaries are huge) is cut at the edge of the
 * plot; an infinite statistic is drawn at the edge. The vertical range follows the statistic, so
 * that its path stays readable.
 *
 * <p>Accessible: {@code role="img"} with a {@code <title>} (arm · metric · decision) and a
 * {@code <desc>} in sentences; boundaries differ by dash pattern and are named in a legend and at
 * their line ends, never by colour alone. Stable classes for tests and style sheets: {@code
 * statistic}, {@code boundary boundary-upper}, {@code boundary boundary-lower}, {@code
 * current-look}, {@code zero}, {@code axis-x}, {@code axis-y}, {@code chart-note}. Colours are
 * presentation attributes, so the SVG also stands alone (saved from a page, in a report).
 */
public final class BoundaryChart {
    static final double WIDTH = 600;
    static final double LEFT = 54;
    static final double RIGHT = 74;
    static final double TOP = 58;
    static final double PLOT_HEIGHT = 230;
    static final double BELOW = 46;
    static final double NOTE_LINE = 15;
    /** Characters of a note line at 11 px (about 6 px each) across the plot's width and margin. */
    static final int NOTE_CHARS = 88;
    /** Looks up to this many get a marker each; beyond, the lines alone stay legible. */
    static final int MARKED_LOOKS = 40;

    private static final Pattern ID = Pattern.compile("[A-Za-z][A-Za-z0-9_-]*");

    // The palette: ink and paper with a deep teal for the statistic; boundaries coloured by meaning.
    static final String INK = "#22303a";
    static final String MUTED = "#5d6b73";
    static final String GRID = "#e4e9e7";
    static final String FRAME = "#c5cfcc";
    static final String STATISTIC = "#15616d";

    private final ComparisonView comparison;
    private final String id;
    private final Sides sides;
    private final List<LookPoint> looks;
    /** The looks drawn: all of them, or about two per pixel column when there are many more. */
    private List<LookPoint> drawn;
    private final List<String> notes = new ArrayList<>();
    private Axis x;
    private Axis y;

    private BoundaryChart(ComparisonView comparison, String id) {
        this.comparison = comparison;
        this.id = id;
        this.sides = Sides.of(comparison);
        this.looks = comparison.looks().stream().filter(p -> Double.isFinite(p.fraction())).toList();
    }

    /**
     * The chart of {@code comparison} as an {@code <svg>} element (no XML declaration), ready to be
     * placed in HTML or saved as a file.
     *
     * @param id unique within the page that shows the chart (letters, digits, '-', '_'; starting with
     *     a letter): prefixes the ids of the title, description and clip path
     */
    public static String svg(ComparisonView comparison, String id) {
        if (id == null || !ID.matcher(id).matches()) {
            throw new IllegalArgumentException("a chart id must start with a letter and hold only letters, digits, '-' and '_', got '" + id + "'");
        }
        return new BoundaryChart(comparison, id).draw();
    }

    /** The chart's title: arm · metric (with its percentile for a quantile: p99 render-ms) · decision. */
    public static String title(ComparisonView c) {
        return c.arm() + " · " + c.label() + " · " + c.decision().label();
    }

    /** How a boundary of this meaning is drawn: stroke colour, zone tint and dash pattern. */
    record Stroke(String colour, String tint, String dash) {
        static Stroke of(String meaning) {
            return switch (meaning) {
                case Sides.HARM -> new Stroke("#a4492b", "#f7e8e1", "9 4");
                case Sides.BENEFIT -> new Stroke("#3d7a4f", "#e6f1e8", "3 3");
                default -> new Stroke("#6f6a8f", "#eeedf4", "1.5 4.5");
            };
        }
    }

    private String draw() {
        scale();
        drawn = thin();
        String upper = boundary(LookPoint::upper, "upper", sides.upper(), +1);
        String lower = boundary(LookPoint::lower, "lower", sides.lower(), -1);
        String statistic = statistic();
        List<String> noteLines = new ArrayList<>();
        notes.forEach(note -> noteLines.addAll(wrap("Note: " + note, NOTE_CHARS)));
        double height = TOP + PLOT_HEIGHT + BELOW + NOTE_LINE * noteLines.size() + 6;
        StringBuilder svg = new StringBuilder(4096);
        svg.append("<svg xmlns=\"http://www.w3.org/2000/svg\" class=\"boundary-chart\" role=\"img\" viewBox=\"0 0 ")
                .append(n(WIDTH)).append(' ').append(n(height)).append("\" width=\"").append(n(WIDTH)).append("\" height=\"")
                .append(n(height)).append("\" aria-labelledby=\"").append(id).append("-title ").append(id).append("-desc\"")
                .append(" font-family=\"system-ui, -apple-system, 'Segoe UI', Roboto, 'DejaVu Sans', sans-serif\" font-size=\"12\">\n");
        svg.append("<title id=\"").append(id).append("-title\">").append(Markup.escape(title(comparison))).append("</title>\n");
        svg.append("<desc id=\"").append(id).append("-desc\">").append(Markup.escape(description())).append("</desc>\n");
        svg.append("<defs><clipPath id=\"").append(id).append("-plot\"><rect x=\"").append(n(LEFT)).append("\" y=\"")
                .append(n(TOP)).append("\" width=\"").append(n(plotWidth())).append("\" height=\"").append(n(PLOT_HEIGHT))
                .append("\"/></clipPath></defs>\n");
        svg.append(text("chart-title", LEFT, 20, "start", INK, title(comparison), " font-size=\"14\" font-weight=\"600\""));
        svg.append(legend());
        svg.append("<rect class=\"plot-area\" x=\"").append(n(LEFT)).append("\" y=\"").append(n(TOP)).append("\" width=\"")
                .append(n(plotWidth())).append("\" height=\"").append(n(PLOT_HEIGHT)).append("\" fill=\"#ffffff\" stroke=\"")
                .append(FRAME).append("\"/>\n");
        svg.append(grid());
        svg.append("<g clip-path=\"url(#").append(id).append("-plot)\">\n");
        svg.append(zone(LookPoint::upper, sides.upper(), +1)).append(zone(LookPoint::lower, sides.lower(), -1));
        svg.append("<line class=\"zero\" x1=\"").append(n(LEFT)).append("\" x2=\"").append(n(LEFT + plotWidth()))
                .append("\" y1=\"").append(n(y.pixel(0))).append("\" y2=\"").append(n(y.pixel(0)))
                .append("\" stroke=\"").append(MUTED).append("\" stroke-width=\"1\"/>\n");
        svg.append(upper).append(lower).append(statistic);
        svg.append("</g>\n");
        svg.append(axes());
        svg.append(boundaryLabel(LookPoint::upper, sides.upper(), -1)).append(boundaryLabel(LookPoint::lower, sides.lower(), +1));
        svg.append(current());
        if (looks.isEmpty()) {
            svg.append(text("empty", LEFT + plotWidth() / 2, TOP + PLOT_HEIGHT / 2, "middle", MUTED,
                    "no look yet", " font-size=\"14\""));
        }
        double noteY = TOP + PLOT_HEIGHT + BELOW + 4;
        for (String line : noteLines) {
            svg.append(text("chart-note", LEFT, noteY, "start", MUTED, line, " font-size=\"11\""));
            noteY += NOTE_LINE;
        }
        svg.append("</svg>");
        return svg.toString();
    }

    private static double plotWidth() {
        return WIDTH - LEFT - RIGHT;
    }

    /**
     * Ranges: the fraction from 0 to a little past the last look (to 1 or beyond once the look is
     * near the planned maximum); Z over the statistic, 0, and the boundaries — each boundary only
     * up to a cap above the statistic, so that a huge early boundary does not flatten the path.
     */
    private void scale() {
        double last = looks.stream().mapToDouble(LookPoint::fraction).max().orElse(1);
        double xHigh = looks.isEmpty() ? 1 : last > 1 ? last * 1.02 : last >= 0.6 ? 1 : last * 1.12;
        if (!(xHigh > 1e-9) || !Double.isFinite(xHigh)) {
            xHigh = 1;
        }
        x = Axis.covering(0, xHigh, 5, LEFT, LEFT + plotWidth());

        double zLow = 0;
        double zHigh = 0;
        for (LookPoint p : looks) {
            if (Double.isFinite(p.statistic())) {
                zLow = Math.min(zLow, p.statistic());
                zHigh = Math.max(zHigh, p.statistic());
            }
        }
        double capHigh = Math.max(4, zHigh * 1.3 + 1);
        double capLow = Math.min(-4, zLow * 1.3 - 1);
        if (!looks.isEmpty()) {
            // The boundaries of the current look are what the statistic is measured against: show
            // them unless they are far out (an early look of an O'Brien-Fleming-type design).
            LookPoint now = looks.get(looks.size() - 1);
            if (Double.isFinite(now.upper())) {
                capHigh = Math.max(capHigh, Math.min(now.upper() + 0.5, 3 * capHigh));
            }
            if (Double.isFinite(now.lower())) {
                capLow = Math.min(capLow, Math.max(now.lower() - 0.5, 3 * capLow));
            }
        }
        double low = Math.min(-1, zLow);
        double high = Math.max(1, zHigh);
        for (LookPoint p : looks) {
            for (double b : new double[] {p.upper(), p.lower()}) {
                if (Double.isFinite(b)) {
                    low = Math.min(low, Math.max(capLow, b));
                    high = Math.max(high, Math.min(capHigh, b));
                }
            }
        }
        y = Axis.covering(low, high, 6, TOP + PLOT_HEIGHT, TOP);
    }

    /** A boundary's path, finite points only (an infinite stretch leaves a gap); notes what is not shown. */
    private String boundary(ToDoubleFunction<LookPoint> side, String name, String meaning, int sign) {
        List<List<double[]>> runs = runs(side);
        long infinite = looks.stream().filter(p -> !Double.isFinite(side.applyAsDouble(p))).count();
        boolean rejecting = !Sides.FUTILITY.equals(meaning);
        if (runs.isEmpty()) {
            if (!looks.isEmpty() && rejecting) {
                notes.add("no finite " + meaning + " boundary yet (no α spent so far): none drawn");
            }
            return "";
        }
        if (infinite > 0) {
            double until = looks.stream().filter(p -> !Double.isFinite(side.applyAsDouble(p)))
                    .mapToDouble(LookPoint::fraction).max().orElse(0);
            notes.add(meaning + " boundary infinite at " + infinite + (infinite == 1 ? " look" : " looks")
                    + " (up to fraction " + Numbers.significant(until, 3) + "; no α spent yet): not drawn there");
        }
        double edge = sign > 0 ? y.high() : y.low();
        List<LookPoint> beyond = looks.stream().filter(p -> {
            double b = side.applyAsDouble(p);
            return Double.isFinite(b) && (sign > 0 ? b > edge : b < edge);
        }).toList();
        if (!beyond.isEmpty()) {
            double extreme = beyond.stream().mapToDouble(side).map(v -> sign * v).max().orElse(0) * sign;
            double until = beyond.stream().mapToDouble(LookPoint::fraction).max().orElse(0);
            notes.add(meaning + " boundary " + (sign > 0 ? "above" : "below") + " the chart at " + beyond.size()
                    + (beyond.size() == 1 ? " look" : " looks") + " (up to fraction " + Numbers.significant(until, 3)
                    + ", Z " + (sign > 0 ? "up to " : "down to ") + Numbers.fixed(extreme, 2) + "): cut at the edge");
        }
        Stroke stroke = Stroke.of(meaning);
        StringBuilder out = new StringBuilder();
        out.append("<path class=\"boundary boundary-").append(name).append(" boundary-").append(meaning)
                .append("\" data-points=\"").append(runs.stream().mapToInt(List::size).sum()).append("\" d=\"").append(path(runs))
                .append("\" fill=\"none\" stroke=\"").append(stroke.colour()).append("\" stroke-width=\"2\" stroke-dasharray=\"")
                .append(stroke.dash()).append("\" stroke-linejoin=\"round\"/>\n");
        if (looks.size() <= MARKED_LOOKS) {
            for (List<double[]> run : runs) {
                for (double[] p : run) {
                    out.append("<circle class=\"boundary-point\" cx=\"").append(n(p[0])).append("\" cy=\"").append(n(p[1]))
                            .append("\" r=\"2.2\" fill=\"").append(stroke.colour()).append("\"/>\n");
                }
            }
        }
        return out.toString();
    }

    /** The region beyond a boundary, tinted (between its first and last finite look). */
    private String zone(ToDoubleFunction<LookPoint> side, String meaning, int sign) {
        StringBuilder out = new StringBuilder();
        double far = sign > 0 ? TOP - 10 : TOP + PLOT_HEIGHT + 10;
        for (List<double[]> run : runs(side)) {
            double edge = sign > 0 ? Math.min(far, run.stream().mapToDouble(p -> p[1]).min().orElse(far) - 10)
                    : Math.max(far, run.stream().mapToDouble(p -> p[1]).max().orElse(far) + 10);
            StringBuilder d = new StringBuilder();
            for (double[] p : run) {
                d.append(d.length() == 0 ? "M" : " L").append(n(p[0])).append(' ').append(n(p[1]));
            }
            d.append(" L").append(n(run.get(run.size() - 1)[0])).append(' ').append(n(edge))
                    .append(" L").append(n(run.get(0)[0])).append(' ').append(n(edge)).append(" Z");
            out.append("<path class=\"zone zone-").append(sign > 0 ? "upper" : "lower").append("\" d=\"").append(d)
                    .append("\" fill=\"").append(Stroke.of(meaning).tint()).append("\"/>\n");
        }
        return out.toString();
    }

    /**
     * Continuous monitoring makes thousands of looks (a comparison keeps up to 4,096): beyond two
     * per pixel column more points add bytes, not detail. Keeps the first and last looks, every
     * look whose decision or boundary finiteness differs from the one before (so gaps and stops
     * stay exact), and otherwise a look once the fraction has moved half a pixel.
     */
    private List<LookPoint> thin() {
        if (looks.size() <= 2 * plotWidth()) {
            return looks;
        }
        List<LookPoint> out = new ArrayList<>();
        double lastX = Double.NEGATIVE_INFINITY;
        for (int i = 0; i < looks.size(); i++) {
            LookPoint p = looks.get(i);
            LookPoint before = i == 0 ? null : looks.get(i - 1);
            double px = x.pixel(p.fraction());
            boolean keep = before == null || i == looks.size() - 1 || p.decision() != before.decision()
                    || Double.isFinite(p.upper()) != Double.isFinite(before.upper())
                    || Double.isFinite(p.lower()) != Double.isFinite(before.lower())
                    || Double.isFinite(p.statistic()) != Double.isFinite(before.statistic())
                    || px - lastX >= 0.5;
            if (keep) {
                out.add(p);
                lastX = px;
            }
        }
        return out;
    }

    /** Stretches of consecutive looks where the value is finite, as pixel points. */
    private List<List<double[]>> runs(ToDoubleFunction<LookPoint> value) {
        List<List<double[]>> runs = new ArrayList<>();
        List<double[]> run = null;
        for (LookPoint p : drawn) {
            double v = value.applyAsDouble(p);
            if (Double.isFinite(v)) {
                if (run == null) {
                    run = new ArrayList<>();
                    runs.add(run);
                }
                run.add(new double[] {x.pixel(p.fraction()), y.pixel(v)});
            } else {
                run = null;
            }
        }
        return runs;
    }

    private static String path(List<List<double[]>> runs) {
        StringBuilder d = new StringBuilder();
        for (List<double[]> run : runs) {
            for (int i = 0; i < run.size(); i++) {
                d.append(d.length() == 0 ? "" : " ").append(i == 0 ? "M" : "L").append(n(run.get(i)[0])).append(' ').append(n(run.get(i)[1]));
            }
        }
        return d.toString();
    }

    /** The statistic's path; an infinite value is drawn at the edge, NaN leaves a gap. */
    private String statistic() {
        List<Integer> infinite = new ArrayList<>();
        ToDoubleFunction<LookPoint> clamped = p -> {
            double z = p.statistic();
            if (Double.isInfinite(z)) {
                infinite.add(p.look());
                return z > 0 ? y.high() : y.low();
            }
            return z;
        };
        List<List<double[]>> runs = runs(clamped);
        if (!infinite.isEmpty()) {
            notes.add("Z is infinite at look " + infinite.get(0) + (infinite.size() > 1 ? " and " + (infinite.size() - 1) + " more" : "")
                    + " (its p-value underflows): drawn at the edge");
        }
        if (runs.isEmpty()) {
            return "";
        }
        StringBuilder out = new StringBuilder();
        out.append("<path class=\"statistic\" data-points=\"").append(runs.stream().mapToInt(List::size).sum())
                .append("\" d=\"").append(path(runs)).append("\" fill=\"none\" stroke=\"").append(STATISTIC)
                .append("\" stroke-width=\"2.4\" stroke-linejoin=\"round\" stroke-linecap=\"round\"/>\n");
        if (looks.size() <= MARKED_LOOKS) {
            for (List<double[]> run : runs) {
                for (double[] p : run) {
                    out.append("<circle class=\"look-point\" cx=\"").append(n(p[0])).append("\" cy=\"").append(n(p[1]))
                            .append("\" r=\"2.6\" fill=\"").append(STATISTIC).append("\"/>\n");
                }
            }
        }
        return out.toString();
    }

    /** The last look: a ringed point and a label with its number and Z. */
    private String current() {
        if (looks.isEmpty()) {
            return "";
        }
        LookPoint p = looks.get(looks.size() - 1);
        if (Double.isNaN(p.statistic())) {
            return "";
        }
        double z = Math.max(y.low(), Math.min(y.high(), p.statistic()));
        double cx = x.pixel(p.fraction());
        double cy = y.pixel(z);
        StringBuilder out = new StringBuilder();
        out.append("<g class=\"current-look\" data-look=\"").append(p.look()).append("\">")
                .append("<circle cx=\"").append(n(cx)).append("\" cy=\"").append(n(cy))
                .append("\" r=\"6.5\" fill=\"#ffffff\" stroke=\"").append(INK).append("\" stroke-width=\"2\"/>")
                .append("<circle cx=\"").append(n(cx)).append("\" cy=\"").append(n(cy)).append("\" r=\"3.5\" fill=\"")
                .append(STATISTIC).append("\"/>");
        boolean right = cx < LEFT + plotWidth() * 0.55;
        // Put the label on the side the path comes not from (judged by the last point drawn
        // elsewhere: looks without new information repeat the same point), unless that side is off the plot.
        boolean below = false;
        for (int i = looks.size() - 2; i >= 0; i--) {
            LookPoint q = looks.get(i);
            if (!Double.isFinite(q.statistic())) {
                continue;
            }
            double qx = x.pixel(q.fraction());
            double qy = y.pixel(q.statistic());
            if (Math.abs(qx - cx) > 0.5 || Math.abs(qy - cy) > 0.5) {
                below = qy < cy;
                break;
            }
        }
        if (cy < TOP + 24) {
            below = true;
        } else if (cy > TOP + PLOT_HEIGHT - 24) {
            below = false;
        }
        double ty = below ? cy + 20 : cy - 11;
        String label = "now: look " + p.look() + ", Z " + Numbers.fixed(p.statistic(), 2);
        out.append(text("current-label", right ? cx + 9 : cx - 9, ty, right ? "start" : "end", INK, label,
                " font-weight=\"600\" paint-order=\"stroke\" stroke=\"#ffffff\" stroke-width=\"3\""));
        out.append("</g>\n");
        return out.toString();
    }

    /** The meaning of a boundary written at its last drawn point. */
    private String boundaryLabel(ToDoubleFunction<LookPoint> side, String meaning, int offset) {
        List<List<double[]>> runs = runs(side);
        if (runs.isEmpty()) {
            return "";
        }
        List<double[]> run = runs.get(runs.size() - 1);
        double[] end = run.get(run.size() - 1);
        double ty = Math.max(TOP + 11, Math.min(TOP + PLOT_HEIGHT - 4, end[1] + (offset < 0 ? -5 : 13)));
        return text("boundary-label", end[0] + 6, ty, "start", Stroke.of(meaning).colour(), meaning,
                " font-weight=\"600\" paint-order=\"stroke\" stroke=\"#ffffff\" stroke-width=\"3\"");
    }

    private String grid() {
        StringBuilder out = new StringBuilder("<g class=\"grid\" stroke=\"" + GRID + "\" stroke-width=\"1\">");
        for (double t : x.ticks()) {
            out.append("<line x1=\"").append(n(x.pixel(t))).append("\" x2=\"").append(n(x.pixel(t))).append("\" y1=\"")
                    .append(n(TOP)).append("\" y2=\"").append(n(TOP + PLOT_HEIGHT)).append("\"/>");
        }
        for (double t : y.ticks()) {
            out.append("<line x1=\"").append(n(LEFT)).append("\" x2=\"").append(n(LEFT + plotWidth())).append("\" y1=\"")
                    .append(n(y.pixel(t))).append("\" y2=\"").append(n(y.pixel(t))).append("\"/>");
        }
        return out.append("</g>\n").toString();
    }

    private String axes() {
        StringBuilder out = new StringBuilder();
        double bottom = TOP + PLOT_HEIGHT;
        out.append("<g class=\"axis axis-x\" fill=\"").append(INK).append("\">");
        for (double t : x.ticks()) {
            double px = x.pixel(t);
            out.append("<line x1=\"").append(n(px)).append("\" x2=\"").append(n(px)).append("\" y1=\"").append(n(bottom))
                    .append("\" y2=\"").append(n(bottom + 5)).append("\" stroke=\"").append(INK).append("\"/>");
            out.append(text("tick", px, bottom + 18, "middle", INK, x.label(t), ""));
        }
        out.append(text("axis-title", LEFT + plotWidth() / 2, bottom + 36, "middle", MUTED,
                "information fraction (1 = planned maximum)", ""));
        out.append("</g>\n<g class=\"axis axis-y\" fill=\"").append(INK).append("\">");
        for (double t : y.ticks()) {
            double py = y.pixel(t);
            out.append("<line x1=\"").append(n(LEFT - 5)).append("\" x2=\"").append(n(LEFT)).append("\" y1=\"").append(n(py))
                    .append("\" y2=\"").append(n(py)).append("\" stroke=\"").append(INK).append("\"/>");
            out.append(text("tick", LEFT - 8, py + 4, "end", INK, y.label(t), ""));
        }
        double midY = TOP + PLOT_HEIGHT / 2;
        out.append("<text class=\"axis-title\" x=\"14\" y=\"").append(n(midY)).append("\" text-anchor=\"middle\" fill=\"")
                .append(MUTED).append("\" transform=\"rotate(-90 14 ").append(n(midY)).append(")\">Z</text>");
        return out.append("</g>\n").toString();
    }

    /** A key of the lines, so that no line is told apart by colour alone. */
    private String legend() {
        StringBuilder out = new StringBuilder("<g class=\"legend\">");
        double ly = 40;
        double lx = LEFT;
        lx = legendEntry(out, lx, ly, STATISTIC, null, "Z statistic");
        if (hasFinite(LookPoint::upper)) {
            Stroke s = Stroke.of(sides.upper());
            lx = legendEntry(out, lx, ly, s.colour(), s.dash(), sides.upper() + " boundary");
        }
        if (hasFinite(LookPoint::lower)) {
            Stroke s = Stroke.of(sides.lower());
            lx = legendEntry(out, lx, ly, s.colour(), s.dash(), sides.lower() + " boundary");
        }
        out.append("<circle cx=\"").append(n(lx + 6)).append("\" cy=\"").append(n(ly - 4)).append("\" r=\"5\" fill=\"#ffffff\" stroke=\"")
                .append(INK).append("\" stroke-width=\"2\"/>");
        out.append(text("legend-text", lx + 16, ly, "start", INK, "current look", " font-size=\"11\""));
        return out.append("</g>\n").toString();
    }

    private static double legendEntry(StringBuilder out, double lx, double ly, String colour, String dash, String label) {
        out.append("<line x1=\"").append(n(lx)).append("\" x2=\"").append(n(lx + 22)).append("\" y1=\"").append(n(ly - 4))
                .append("\" y2=\"").append(n(ly - 4)).append("\" stroke=\"").append(colour).append("\" stroke-width=\"2.2\"")
                .append(dash == null ? "" : " stroke-dasharray=\"" + dash + "\"").append("/>");
        out.append(text("legend-text", lx + 27, ly, "start", INK, label, " font-size=\"11\""));
        return lx + 27 + label.length() * 6.1 + 16;
    }

    /** Words of {@code text} in lines of at most {@code width} characters (a longer word gets a line of its own). */
    static List<String> wrap(String text, int width) {
        List<String> lines = new ArrayList<>();
        StringBuilder line = new StringBuilder();
        for (String word : text.split(" ")) {
            if (line.length() > 0 && line.length() + 1 + word.length() > width) {
                lines.add(line.toString());
                line.setLength(0);
            }
            line.append(line.length() == 0 ? "" : " ").append(word);
        }
        if (line.length() > 0) {
            lines.add(line.toString());
        }
        return lines;
    }

    private boolean hasFinite(ToDoubleFunction<LookPoint> side) {
        return looks.stream().anyMatch(p -> Double.isFinite(side.applyAsDouble(p)));
    }

    /** The picture in sentences, for screen readers and for anyone reading the SVG. */
    private String description() {
        StringBuilder d = new StringBuilder();
        d.append("Group-sequential chart of ").append(comparison.arm()).append(" on ").append(comparison.label())
                .append(" (").append(Sides.describe(comparison)).append("). ");
        if (looks.isEmpty()) {
            d.append("No look yet. Decision: ").append(comparison.decision().label()).append('.');
            return d.toString();
        }
        LookPoint first = looks.get(0);
        LookPoint last = looks.get(looks.size() - 1);
        d.append("The Z statistic at ").append(looks.size()).append(looks.size() == 1 ? " look" : " looks")
                .append(", information fraction ").append(Numbers.significant(first.fraction(), 3));
        if (looks.size() > 1) {
            d.append(" to ").append(Numbers.significant(last.fraction(), 3));
        }
        d.append(". Current look ").append(last.look()).append(" at fraction ").append(Numbers.significant(last.fraction(), 3))
                .append(": Z = ").append(Numbers.fixed(last.statistic(), 2));
        if (Double.isFinite(last.upper())) {
            d.append(", upper boundary (").append(sides.upper()).append(") ").append(Numbers.fixed(last.upper(), 2));
        }
        if (Double.isFinite(last.lower())) {
            d.append(", lower boundary (").append(sides.lower()).append(") ").append(Numbers.fixed(last.lower(), 2));
        }
        d.append(". Decision: ").append(comparison.decision().label()).append('.');
        for (String note : notes) {
            d.append(' ').append(Character.toUpperCase(note.charAt(0))).append(note.substring(1)).append('.');
        }
        return d.toString();
    }

    private static String text(String cls, double tx, double ty, String anchor, String fill, String content, String extra) {
        return "<text class=\"" + cls + "\" x=\"" + n(tx) + "\" y=\"" + n(ty) + "\" text-anchor=\"" + anchor + "\" fill=\"" + fill
                + "\"" + extra + ">" + Markup.escape(content) + "</text>";
    }

    /** A coordinate with one decimal: enough for a screen, small in the page. */
    static String n(double v) {
        return Numbers.rounded(v, 1).toPlainString();
    }
}
