package dev.interim.dashboard;

import com.fasterxml.jackson.databind.JsonNode;
import dev.interim.experiment.Assignment;
import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.ExperimentView.ComparisonView;
import dev.interim.experiment.LookPoint;
import dev.interim.experiment.SampleRatio;
import dev.interim.experiment.Tally;
import dev.interim.stats.HistogramCounts;
import dev.interim.stats.Moments;
import dev.interim.stats.ProportionCounts;
import dev.interim.stats.RatioMoments;
import java.time.Instant;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * Reads an experiment as {@code GET /api/experiments/{id}} writes it ({@code dev.interim.http.ExperimentApi})
 * back into an {@link ExperimentView}. JSON has no infinity or NaN, so the API writes them as null;
 * reading restores what each member means: {@code upper} null is +∞ and {@code lower} null −∞ (no
 * finite boundary on that side); {@code estimate.lower} null −∞ and {@code estimate.upper} null +∞
 * (an interval open on that side); {@code statistic} null ±∞ with the sign of the estimate when that
 * is a non-zero number, else NaN (the convention of the decision records); {@code relative.value}
 * null (or no {@code relative} at all, from an older daemon) means no relative change, and then its
 * ends are NaN too, else {@code relative.lower} null is −∞ and {@code relative.upper} null +∞; other
 * numbers NaN. An answer without {@code assignment} (an older daemon) is read as per-event
 * assignment, which is how older daemons analysed every experiment.
 */
final class ExperimentJson {
    private ExperimentJson() {}

    /** The view, or an {@link IllegalArgumentException} naming the member that is missing or malformed. */
    static ExperimentView read(JsonNode n) {
        String id = text(n, "id");
        List<String> treatments = new ArrayList<>();
        n.path("treatments").forEach(t -> treatments.add(t.asText()));
        JsonNode srm = n.path("sample_ratio");
        SampleRatio ratio = new SampleRatio(number(srm.get("p_value"), Double.NaN), srm.path("mismatch").asBoolean(false));
        Map<String, Long> exposures = new LinkedHashMap<>();
        n.path("exposures").fields().forEachRemaining(e -> exposures.put(e.getKey(), e.getValue().asLong()));
        Map<String, Map<String, Tally>> tallies = new LinkedHashMap<>();
        n.path("tallies").fields().forEachRemaining(metric -> {
            Map<String, Tally> byArm = new LinkedHashMap<>();
            metric.getValue().fields().forEachRemaining(arm -> byArm.put(arm.getKey(), tally(arm.getValue())));
            tallies.put(metric.getKey(), byArm);
        });
        List<ComparisonView> comparisons = new ArrayList<>();
        for (JsonNode c : n.path("comparisons")) {
            comparisons.add(comparison(c));
        }
        return new ExperimentView(id, text(n, "control"), treatments, n.path("dry_run").asBoolean(true), n.path("held").asBoolean(false),
                n.hasNonNull("hold_reason") ? n.get("hold_reason").asText() : null, ratio, instant(n.get("last_look"), "last_look"),
                exposures, tallies, comparisons, assignment(n.get("assignment")));
    }

    private static Assignment assignment(JsonNode n) {
        if (n == null || n.isNull()) {
            return Assignment.EVENT;
        }
        try {
            return Assignment.parse(n.asText());
        } catch (IllegalArgumentException e) {
            throw new IllegalArgumentException("the daemon's answer has an unknown assignment '" + n.asText() + "'");
        }
    }

    /**
     * A tally: a rate when it has {@code successes}; a ratio of per-unit sums when it has
     * {@code units}, from the units and the mean numerator and denominator (the API shows no spreads
     * of a ratio, so its sums of squared and cross deviations read as 0: enough to show it, not to
     * test it); a quantile's counts when its {@code kind} is {@code quantile}; else a mean from
     * count, mean and standard deviation (the sum of squared deviations is rebuilt as sd²·(n − 1),
     * exact to rounding).
     */
    private static Tally tally(JsonNode t) {
        long count = t.path("count").asLong();
        if ("quantile".equals(t.path("kind").asText(null))) {
            return quantile(t);
        }
        if (t.has("successes")) {
            return new Tally.Rate(new ProportionCounts(t.path("successes").asLong(), count));
        }
        if (t.has("units")) {
            long units = t.path("units").asLong();
            double x = number(t.get("numerator_mean"), Double.NaN);
            double y = number(t.get("denominator_mean"), Double.NaN);
            if (units == 0 || Double.isNaN(x) || Double.isNaN(y)) {
                return new Tally.Ratio(RatioMoments.EMPTY);
            }
            return new Tally.Ratio(new RatioMoments(units, x, y, 0, 0, 0));
        }
        double mean = number(t.get("mean"), Double.NaN);
        if (count == 0 || Double.isNaN(mean)) {
            return new Tally.Mean(Moments.EMPTY);
        }
        double sd = number(t.get("sd"), 0);
        return new Tally.Mean(Moments.of(count, mean, Double.isFinite(sd) ? sd : 0));
    }

    /**
     * A quantile tally from its {@code buckets} ([value, count] pairs): the counts in one group, whose
     * quantiles are those the daemon computed (the buckets are HdrHistogram's, value by value).
     * Without buckets (the list of experiments), no counts.
     */
    private static Tally quantile(JsonNode t) {
        List<HistogramCounts.Bucket> buckets = new ArrayList<>();
        for (JsonNode b : t.path("buckets")) {
            if (!b.isArray() || b.size() != 2 || !b.get(0).isNumber() || !b.get(1).canConvertToLong()) {
                throw new IllegalArgumentException("the daemon's answer has a malformed quantile bucket " + b
                        + ": [value, count] expected");
            }
            buckets.add(new HistogramCounts.Bucket(b.get(0).asDouble(), b.get(1).asLong()));
        }
        return new Tally.Quantile(HistogramCounts.ofBuckets(buckets));
    }

    private static ComparisonView comparison(JsonNode c) {
        List<LookPoint> looks = new ArrayList<>();
        for (JsonNode p : c.path("looks")) {
            looks.add(point(p));
        }
        if (looks.isEmpty() && c.hasNonNull("last")) {
            looks.add(point(c.get("last")));
        }
        return new ComparisonView(text(c, "arm"), text(c, "metric"), c.path("kind").asText(null), c.path("role").asText(null),
                c.path("worse").asText(null), c.path("action").asText(null), number(c.get("alpha"), Double.NaN),
                c.path("alternative").asText(null), c.path("spending").asText(null), decision(c.get("decision")), looks,
                c.path("skipped").asText(null), number(c.get("quantile"), Double.NaN));
    }

    private static LookPoint point(JsonNode p) {
        JsonNode estimate = p.path("estimate");
        double value = number(estimate.get("value"), Double.NaN);
        double statistic = number(p.get("statistic"), value > 0 ? Double.POSITIVE_INFINITY : value < 0 ? Double.NEGATIVE_INFINITY : Double.NaN);
        JsonNode relative = p.path("relative");
        double change = number(relative.get("value"), Double.NaN);
        boolean none = Double.isNaN(change);
        return new LookPoint(p.path("look").asInt(), instant(p.get("at"), "at"), number(p.get("fraction"), Double.NaN), statistic,
                number(p.get("upper"), Double.POSITIVE_INFINITY), number(p.get("lower"), Double.NEGATIVE_INFINITY),
                number(p.get("alpha_spent"), Double.NaN), value, number(estimate.get("lower"), Double.NEGATIVE_INFINITY),
                number(estimate.get("upper"), Double.POSITIVE_INFINITY), decision(p.get("decision")), change,
                none ? Double.NaN : number(relative.get("lower"), Double.NEGATIVE_INFINITY),
                none ? Double.NaN : number(relative.get("upper"), Double.POSITIVE_INFINITY));
    }

    private static double number(JsonNode n, double whenNull) {
        return n == null || n.isNull() || !n.isNumber() ? whenNull : n.asDouble();
    }

    private static String text(JsonNode n, String member) {
        JsonNode v = n.get(member);
        if (v == null || !v.isTextual()) {
            throw new IllegalArgumentException("the daemon's answer has no '" + member + "'; is it an Interim daemon of the same version?");
        }
        return v.asText();
    }

    private static Instant instant(JsonNode n, String member) {
        if (n == null || n.isNull()) {
            return null;
        }
        try {
            return Instant.parse(n.asText());
        } catch (DateTimeParseException e) {
            throw new IllegalArgumentException("the daemon's answer has a malformed '" + member + "': " + n.asText());
        }
    }

    private static Decision decision(JsonNode n) {
        String label = n == null ? "" : n.asText();
        for (Decision d : Decision.values()) {
            if (d.label().equals(label)) {
                return d;
            }
        }
        throw new IllegalArgumentException("the daemon's answer has an unknown decision '" + label + "'");
    }
}
