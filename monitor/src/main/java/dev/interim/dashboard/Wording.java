package dev.interim.dashboard;

import static dev.interim.text.Markup.escape;

import dev.interim.chart.Sides;
import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.ExperimentView.ComparisonView;
import dev.interim.experiment.LookPoint;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.Tally;
import dev.interim.stats.Moments;
import dev.interim.stats.QuantileSignificance;
import dev.interim.stats.RatioMoments;
import dev.interim.text.Numbers;
import java.time.Duration;
import java.time.Instant;
import java.time.ZoneOffset;
import java.time.format.DateTimeFormatter;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;

/**
 * The words and numbers shared by the dashboard and the report. None of them carries a string from
 * configuration, so they are safe in HTML as they are; names go through {@link #h}.
 */
final class Wording {
    private static final DateTimeFormatter TIME = DateTimeFormatter.ofPattern("yyyy-MM-dd HH:mm:ss 'UTC'", Locale.ROOT)
            .withZone(ZoneOffset.UTC);

    private Wording() {}

    /**
     * A decision as a badge: a glyph and words, so that it reads without colour; stop-harm in
     * capitals. The class {@code badge-<label>} carries the colour.
     */
    static String badge(Decision d) {
        String glyph;
        String words;
        switch (d) {
            case STOP_HARM -> {
                glyph = "⚠";
                words = "STOP: HARM";
            }
            case STOP_BENEFIT -> {
                glyph = "✓";
                words = "stop: benefit";
            }
            case STOP_FUTILITY -> {
                glyph = "○";
                words = "stop: futility";
            }
            case COMPLETE -> {
                glyph = "■";
                words = "complete";
            }
            case HELD -> {
                glyph = "‖";
                words = "held";
            }
            default -> {
                glyph = "→";
                words = "continue";
            }
        }
        return "<span class=\"badge badge-" + d.label() + "\" data-decision=\"" + d.label() + "\"><span aria-hidden=\"true\">"
                + glyph + "</span> " + words + "</span>";
    }

    /** Rates are shown in percentage points, other metrics in their own unit. */
    static boolean isRate(ComparisonView c) {
        return c.kind() != null && c.kind().endsWith("-rate");
    }

    /** The effect estimate, e.g. {@code +1.42 pp} for a rate, {@code +12.5} for a mean. */
    static String effect(ComparisonView c, double value) {
        if (!Double.isFinite(value)) {
            return Numbers.NONE;
        }
        return isRate(c) ? Numbers.signed(100 * value, 3) + " pp" : Numbers.signed(value, 4);
    }

    /** The repeated confidence interval, e.g. {@code [0.61, ∞) pp}; open ends are infinite. */
    static String interval(ComparisonView c, LookPoint p) {
        double lo = p.intervalLower();
        double hi = p.intervalUpper();
        if (Double.isNaN(lo) && Double.isNaN(hi)) {
            return Numbers.NONE;
        }
        double scale = isRate(c) ? 100 : 1;
        String left = Double.isInfinite(lo) ? "(-∞" : "[" + Numbers.precise(scale * lo, 3);
        String right = Double.isInfinite(hi) ? "∞)" : Numbers.precise(scale * hi, 3) + "]";
        return left + ", " + right + (isRate(c) ? " pp" : "");
    }

    /**
     * The relative change treatment/control − 1 with its repeated interval, in percent with one
     * decimal, e.g. {@code +4.1% [+0.3%, +8.2%]}; {@link Numbers#NONE} when undefined (a level that
     * is not positive). An end open above reads {@code ∞)}; one open below ({@code −100%}: the
     * interval of the log ratio is open there) reads {@code (-100%}.
     */
    static String relative(LookPoint p) {
        if (!Double.isFinite(p.relative())) {
            return Numbers.NONE;
        }
        String value = percent(p.relative());
        if (Double.isNaN(p.relativeLower()) || Double.isNaN(p.relativeUpper())) {
            return value;
        }
        String left = p.relativeLower() <= -1 ? "(-100%" : "[" + percent(p.relativeLower());
        String right = Double.isInfinite(p.relativeUpper()) ? "∞)" : percent(p.relativeUpper()) + "]";
        return value + " " + left + ", " + right;
    }

    /** A share as a signed percent with one decimal: {@code +4.1%}, {@code -0.3%}, {@code 0.0%}. */
    static String percent(double share) {
        String s = Numbers.fixed(100 * share, 1);
        return share > 0 && !s.equals("0.0") ? "+" + s + "%" : s + "%";
    }

    /** How arms were assigned, in words: "arms assigned per unit" or "arms assigned per event". */
    static String assignment(ExperimentView v) {
        return "arms assigned per " + v.assignment().label();
    }

    /** The simultaneous level of the repeated confidence intervals: 1 − α of the comparison. */
    static String level(ComparisonView c) {
        return Numbers.significant(100 * (1 - c.alpha()), 4) + "%";
    }

    /** The boundary that matters now: the one the statistic is heading for (or the rejecting one). */
    static String boundaryAt(ComparisonView c, LookPoint p) {
        Sides s = Sides.of(c);
        String upper = Numbers.fixed(p.upper(), 2) + " (" + s.upper() + ")";
        String lower = Numbers.fixed(p.lower(), 2) + " (" + s.lower() + ")";
        boolean hasUpper = Double.isFinite(p.upper()) || !Sides.FUTILITY.equals(s.upper());
        boolean hasLower = Double.isFinite(p.lower()) || !Sides.FUTILITY.equals(s.lower());
        if (hasUpper && hasLower) {
            return p.statistic() >= 0 ? upper + " / " + lower : lower + " / " + upper;
        }
        return hasUpper ? upper : lower;
    }

    /** A spending function label ({@code obf}, {@code pocock}, {@code power:1.5}, ...) in words. */
    static String spending(String label) {
        if (label == null) {
            return Numbers.NONE;
        }
        if (label.equals("obf")) {
            return "O'Brien–Fleming-type α spending (Lan–DeMets)";
        }
        if (label.equals("pocock")) {
            return "Pocock-type α spending (Lan–DeMets)";
        }
        if (label.startsWith("power:")) {
            return "power-family α spending α·t^" + label.substring(6) + " (Kim–DeMets)";
        }
        if (label.startsWith("hsd:")) {
            return "Hwang–Shih–DeCani α spending, γ = " + label.substring(4);
        }
        return label;
    }

    /** The sample-ratio check in words, escaped ("p = 0.0421", "p = 2.6e-24"). */
    static String sampleRatio(ExperimentView v) {
        String p = h(Numbers.pValue(v.sampleRatio().pValue()));
        return v.sampleRatio().mismatch() ? p + " — MISMATCH: the split is not as configured; decisions held" : p + " — split as configured";
    }

    /** An instant in UTC, to the second. */
    static String time(Instant t) {
        return t == null ? "never" : TIME.format(t);
    }

    /** How long ago, coarsely ({@code 4 s ago}, {@code 3 min ago}). */
    static String ago(Instant t, Instant now) {
        if (t == null || now == null) {
            return "";
        }
        long s = Math.max(0, Duration.between(t, now).getSeconds());
        if (s < 120) {
            return s + " s ago";
        }
        if (s < 7200) {
            return s / 60 + " min ago";
        }
        return s < 172_800 ? s / 3600 + " h ago" : s / 86_400 + " days ago";
    }

    /**
     * What the last look saw of {@code arm} on {@code metric}: {@code 412 of 16,484 (2.50%)} for a
     * rate, {@code n 16,484 · mean 212.4 · sd 30.1} for a mean or total,
     * {@code 3,120 units · ratio 0.0251 (per unit 0.412 over 16.41)} for a ratio of per-unit sums,
     * {@code n 16,484 · p99 412} for a quantile (to 3 significant digits: the histogram knows a value
     * to within 0.8%); "none" without a tally.
     */
    static String observed(ExperimentView v, String metric, String arm) {
        Tally t = v.tallies().getOrDefault(metric, Map.of()).get(arm);
        if (t == null) {
            return "none";
        }
        if (t instanceof Tally.Quantile q) {
            double p = quantileOf(v, metric);
            if (q.count() == 0 || Double.isNaN(p)) {
                return "n " + Numbers.count(q.count());
            }
            return "n " + Numbers.count(q.count()) + " · " + Numbers.percentile(p) + " "
                    + Numbers.precise(q.counts().quantile(p), 3);
        }
        if (t instanceof Tally.Rate r) {
            long n = r.counts().trials();
            return Numbers.count(r.counts().successes()) + " of " + Numbers.count(n)
                    + (n == 0 ? "" : " (" + Numbers.precise(100.0 * r.counts().successes() / n, 3) + "%)");
        }
        if (t instanceof Tally.Ratio r) {
            RatioMoments m = r.moments();
            if (m.count() == 0) {
                return "0 units";
            }
            return Numbers.count(m.count()) + (m.count() == 1 ? " unit" : " units") + " · ratio "
                    + Numbers.precise(m.ratio(), 4) + " (per unit " + Numbers.precise(m.meanX(), 4) + " over "
                    + Numbers.precise(m.meanY(), 4) + ")";
        }
        Moments m = ((Tally.Mean) t).moments();
        if (m.count() == 0) {
            return "n 0";
        }
        return "n " + Numbers.count(m.count()) + " · mean " + Numbers.precise(m.mean(), 4)
                + (m.count() > 1 ? " · sd " + Numbers.precise(m.standardDeviation(), 3) : "");
    }

    /** The probability of quantile metric {@code metric}, from its comparisons; NaN when none names one. */
    static double quantileOf(ExperimentView v, String metric) {
        for (ComparisonView c : v.comparisons()) {
            if (c.metric().equals(metric) && c.isQuantile()) {
                return c.quantile();
            }
        }
        return Double.NaN;
    }

    /**
     * Why comparison {@code c} has no look yet, in words, or null when it gave no reason. A quantile
     * that waits for values beyond it says so with the arms' counts: {@code waiting for 50 values
     * beyond the p99 in each arm (5,000 events per arm): b has 1,234, control 2,001} (the arms still
     * short); any other reason is the comparison's own.
     */
    static String waiting(ExperimentView v, ComparisonView c) {
        String reason = c.skipped();
        if (!c.isQuantile() || reason == null || !reason.contains("values beyond it")) {
            return reason;
        }
        long needed = MetricDefinition.quantileEventsNeeded(c.quantile());
        Map<String, Tally> byArm = v.tallies().getOrDefault(c.metric(), Map.of());
        List<String> shortArms = new ArrayList<>();
        for (String arm : List.of(c.arm(), v.control())) {
            long n = count(byArm.get(arm));
            if (n < needed) {
                shortArms.add(arm + (shortArms.isEmpty() ? " has " : " ") + Numbers.count(n));
            }
        }
        return "waiting for " + QuantileSignificance.MIN_TAIL + " values beyond the " + Numbers.percentile(c.quantile())
                + " in each arm (" + Numbers.count(needed) + " events per arm)"
                + (shortArms.isEmpty() ? "" : ": " + String.join(", ", shortArms));
    }

    private static long count(Tally t) {
        return t == null ? 0 : t.count();
    }

    /** A count of exposures, or "none". */
    static String exposures(ExperimentView v, String arm) {
        Long n = v.exposures().get(arm);
        return n == null ? "none" : Numbers.count(n);
    }

    /** Plain text escaped for HTML (a shorter name at call sites). */
    static String h(String text) {
        return escape(text);
    }
}
