package dev.interim.config;

import dev.interim.events.Condition;

import dev.interim.events.MetricSource;
import dev.interim.events.ValueRange;

import dev.interim.experiment.Sides;
import dev.interim.stats.HistogramCounts;

import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.databind.JsonNode;
import dev.interim.experiment.Horizon;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.MetricKind;
import dev.interim.experiment.Role;
import dev.interim.experiment.StopAction;
import dev.interim.experiment.Worse;
import dev.interim.sequential.SpendingFunction;
import dev.interim.text.UserText;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.stream.Collectors;

/** Reads one entry of an experiment's {@code metrics}: its test design and its source in the events. */
final class MetricReader {
    static final Set<String> KEYS = ConnectionReaders.keys("name", "kind", "role", "worse", "field", "counts_if", "range",
            "alpha", "sides", "spending", "futility", "max_per_arm", "power", "effect", "relative_effect", "planned_looks",
            "baseline", "action", "numerator", "denominator", "denominator_range", "cap", "denominator_cap", "quantile");
    static final double DEFAULT_ALPHA = 0.05;
    static final String DEFAULT_SPENDING = "obf";
    static final int DEFAULT_PLANNED_LOOKS = 10;
    static final Set<String> RANGE_KEYS = ConnectionReaders.keys("min", "max");

    /** A metric as read: its definition and where it is read. */
    record Read(MetricDefinition definition, MetricSource source) {
    }

    private MetricReader() {}

    static Read read(ConfigNode m) {
        m.mapping(KEYS);
        Problems.Checkpoint start = m.checkpoint();
        String name = m.readRequired("name", "the metric's name, such as checkout-errors", ConfigNode::text);
        MetricKind kind = m.readRequired("kind", "event-rate, unit-rate, event-mean, unit-total, ratio or event-quantile",
                k -> k.parsed(MetricKind::parse));
        Role role = m.readRequired("role", "guardrail (watches for harm) or primary", r -> r.parsed(Role::parse));
        Worse worse = m.readRequired("worse", "higher or lower: which direction of the metric hurts users",
                w -> w.parsed(Worse::parse));
        MetricSource source = kind == null ? null : m.problems().attempt(() -> source(m, kind));
        Double alpha = m.read("alpha", ConfigNode::number, DEFAULT_ALPHA);
        Integer sides = m.read("sides", ConfigNode::intValue, role == Role.GUARDRAIL ? 1 : 2);
        SpendingFunction spending = m.read("spending", s -> s.parsed(SpendingFunction::parse),
                SpendingFunction.parse(DEFAULT_SPENDING));
        SpendingFunction futility = m.read("futility", f -> f.parsed(SpendingFunction::parse), null);
        Horizon horizon = m.problems().attempt(() -> horizon(m));
        Double baseline = m.read("baseline", ConfigNode::number, null);
        StopAction action = m.read("action", a -> a.parsed(StopAction::parse), StopAction.NONE);
        Double cap = m.read("cap", ConfigNode::number, null);
        Double denominatorCap = m.read("denominator_cap", ConfigNode::number, null);
        Double quantile = m.read("quantile", ConfigNode::number, null);
        if (kind != null && kind.isQuantile() && quantile == null && !m.has("quantile")) {
            m.report(m.error("an event-quantile metric needs quantile: the probability, such as 0.99 for the 99th "
                    + "percentile (or 0.5, 0.95, 0.999)"));
        }
        if (quantile != null && kind != null && !kind.isQuantile()) {
            m.report(m.required("quantile", "").error("applies to event-quantile metrics only; leave it out"));
        }
        if (cap != null && kind != null && kind.isProportion()) {
            m.report(m.required("cap", "").error("applies to event-mean, unit-total and ratio metrics: a rate's events "
                    + "count 0 or 1; leave cap out"));
        }
        if (denominatorCap != null && kind != null && kind != MetricKind.RATIO) {
            m.report(m.required("denominator_cap", "").error("applies to ratio metrics only; leave it out, or use cap"));
        }
        start.requireNone();
        MetricDefinition definition = Validated.at(m, KEYS, () -> new MetricDefinition(name, kind, role, worse, alpha,
                Sides.of(sides), spending, futility, horizon, baseline, action, cap, denominatorCap, quantile));
        return new Read(definition, source);
    }

    private static Horizon horizon(ConfigNode m) {
        boolean max = m.has("max_per_arm");
        boolean powered = m.has("power") || m.has("effect") || m.has("relative_effect");
        if (max && powered) {
            throw m.required("max_per_arm", "").error("give either max_per_arm or power with effect, not both");
        }
        if (max) {
            if (m.has("planned_looks")) {
                throw m.required("planned_looks", "").error("applies to a horizon sized by power and effect; "
                        + "with max_per_arm, leave it out");
            }
            long perArm = m.required("max_per_arm", "").integer();
            return Validated.at(m, KEYS, () -> new Horizon.MaxPerArm(perArm));
        }
        if (!powered) {
            throw m.error("needs a horizon: max_per_arm (the planned maximum per arm), or power with effect "
                    + "(the change to detect, in the metric's units)");
        }
        double power = m.required("power", "the chance to detect effect, such as 0.8, with effect").number();
        if (m.has("effect") && m.has("relative_effect")) {
            throw m.required("relative_effect", "").error("give either effect (in the metric's units) or relative_effect "
                    + "(a share of control's level, such as 0.05 for 5%), not both");
        }
        boolean relative = m.has("relative_effect");
        double effect = relative
                ? m.required("relative_effect", "").number()
                : m.required("effect", "the change to detect (treatment minus control, in the metric's units; or "
                        + "relative_effect: a share of control's level), with power").number();
        int plannedLooks = m.optional("planned_looks").map(ConfigNode::intValue).orElse(DEFAULT_PLANNED_LOOKS);
        Horizon.Scale scale = relative ? Horizon.Scale.RELATIVE : Horizon.Scale.ABSOLUTE;
        return Validated.at(m, KEYS, () -> new Horizon.Powered(power, effect, plannedLooks, scale));
    }

    private static MetricSource source(ConfigNode m, MetricKind kind) {
        if (kind == MetricKind.RATIO) {
            for (String k : List.of("field", "counts_if")) {
                if (m.has(k)) {
                    throw m.required(k, "").error("a ratio reads numerator and denominator: give their JSON Pointers "
                            + "there and leave " + k + " out");
                }
            }
            JsonPointer numerator = Pointers.field(m.required("numerator", "the JSON Pointer of the number summed "
                    + "above the line, such as /order/revenue"));
            JsonPointer denominator = Pointers.field(m.required("denominator", "the JSON Pointer of the number summed "
                    + "below the line, such as /order/sessions"));
            ValueRange range = m.optional("range").map(MetricReader::range).orElse(ValueRange.ANY);
            ValueRange denominatorRange = m.optional("denominator_range").map(MetricReader::range).orElse(ValueRange.ANY);
            return new MetricSource.Ratio(numerator, range, denominator, denominatorRange);
        }
        for (String k : List.of("numerator", "denominator", "denominator_range")) {
            if (m.has(k)) {
                throw m.required(k, "").error("applies to ratio metrics only; a " + kind.label() + " reads field");
            }
        }
        JsonPointer field = Pointers.field(m.required("field", "the JSON Pointer of the field this metric reads, "
                + (kind.isProportion() ? "such as /response/status" : "such as /timing/total_ms")));
        if (!kind.isProportion()) {
            if (m.has("counts_if")) {
                throw m.required("counts_if", "").error("applies to rates only: a " + kind.label()
                        + " takes the number in field; leave counts_if out");
            }
            if (kind.isQuantile()) {
                return new MetricSource.Value(field, quantileRange(m));
            }
            ValueRange range = m.optional("range").map(MetricReader::range).orElse(ValueRange.ANY);
            return new MetricSource.Value(field, range);
        }
        if (m.has("range")) {
            throw m.required("range", "").error("applies to means and totals only: a " + kind.label()
                    + " counts the events that meet counts_if; leave range out");
        }
        ConfigNode c = m.required("counts_if", "the condition that counts an " + (kind.perUnit() ? "unit" : "event")
                + " as a success, such as {at_least: 500} or {equals: purchased}");
        return new MetricSource.Counted(field, condition(c));
    }

    /** {@code {min: X, max: Y}}, either end optional but not both; each end a finite number, min ≤ max. */
    private static ValueRange range(ConfigNode r) {
        Problems.Checkpoint start = r.checkpoint();
        r.mapping(RANGE_KEYS);
        if (!r.has("min") && !r.has("max")) {
            start.requireNone(); // an unknown key, reported already, was meant to be one of them
            throw r.error("must give min, max or both, such as {min: 0} or {min: 0, max: 60000}");
        }
        double min = r.optional("min").map(MetricReader::end).orElse(Double.NEGATIVE_INFINITY);
        double max = r.optional("max").map(MetricReader::end).orElse(Double.POSITIVE_INFINITY);
        if (min > max) {
            throw r.error("min " + r.required("min", "").shown() + " is above max " + r.required("max", "").shown()
                    + ": no value would be allowed");
        }
        return new ValueRange(min, max);
    }

    /**
     * A quantile's values are counted in histograms from 0 to {@link HistogramCounts#HIGHEST}: its
     * range is {min: 0} unless given, and must lie within those (an event outside is refused); an end
     * left open is the histograms' end ({@code {max: 60000}} is [0, 60000], {@code {min: 0}} the default).
     */
    private static ValueRange quantileRange(ConfigNode m) {
        ValueRange range = m.optional("range").map(MetricReader::range).orElse(new ValueRange(0, HistogramCounts.HIGHEST));
        double min = range.min() == Double.NEGATIVE_INFINITY ? 0 : range.min();
        double max = range.max() == Double.POSITIVE_INFINITY ? HistogramCounts.HIGHEST : range.max();
        if (min < 0 || max < 0 || max > HistogramCounts.HIGHEST) {
            throw m.required("range", "").error("of an event-quantile must lie within [0, " + (long) HistogramCounts.HIGHEST
                    + "]: its values are counted in histograms from 0; shift or rescale the field, such as latency in ms");
        }
        return new ValueRange(min, max);
    }

    /** An end of a range: a finite number; an open end is left out. */
    private static double end(ConfigNode n) {
        if (n.json().isNumber() && !Double.isFinite(n.json().doubleValue())) {
            throw n.error("must be a finite number (leave the key out for an open end); got " + n.kind());
        }
        return n.number();
    }

    /** {@code {OPERATOR: VALUE}} with exactly one of the operators of {@link Condition.Comparison}. */
    static Condition condition(ConfigNode c) {
        String accepted = Arrays.stream(Condition.Comparison.values()).map(Condition.Comparison::key)
                .collect(Collectors.joining(", "));
        if (!c.json().isObject()) {
            throw c.error("must be one comparison, such as {at_least: 500} or {in: [declined, timed_out]}; "
                    + "accepted: " + accepted + "; got " + c.kind());
        }
        if (c.json().size() != 1) {
            throw c.error("must hold exactly one comparison (accepted: " + accepted + "); got "
                    + (c.json().isEmpty() ? "none" : String.join(", ", c.entries("one comparison").keySet().stream()
                    .map(UserText::shown).toList())));
        }
        Map.Entry<String, ConfigNode> only = c.entries("one comparison").entrySet().iterator().next();
        Condition.Comparison comparison = Arrays.stream(Condition.Comparison.values())
                .filter(k -> k.key().equals(only.getKey())).findFirst()
                .orElseThrow(() -> only.getValue().error("unknown comparison" + KeyHints.closest(only.getKey(),
                        Arrays.stream(Condition.Comparison.values()).map(Condition.Comparison::key).toList())
                        .map(k -> " (did you mean '" + k + "'?)").orElse("") + "; accepted: " + accepted));
        ConfigNode operand = only.getValue();
        List<JsonNode> operands = new ArrayList<>();
        if (comparison.takesList()) {
            for (ConfigNode v : operand.elements("values to compare with, such as [declined, timed_out]")) {
                operands.add(scalar(v, comparison));
            }
            if (operands.isEmpty()) {
                throw operand.error("must list at least one value");
            }
        } else {
            operands.add(scalar(operand, comparison));
        }
        return new Condition(comparison, operands);
    }

    private static JsonNode scalar(ConfigNode v, Condition.Comparison comparison) {
        JsonNode n = v.json();
        if (comparison.ordering()) {
            if (!n.isNumber() || !Double.isFinite(n.doubleValue())) {
                throw v.error(comparison.key() + " compares numbers: give a finite number; got " + v.kind());
            }
        } else if (n.isNumber() && !Double.isFinite(n.doubleValue())) {
            throw v.error("must be a finite number; got " + v.kind());
        } else if (!(n.isTextual() || n.isNumber() || n.isBoolean())) {
            throw v.error("must be text, a number or true/false; got " + v.kind());
        }
        return n;
    }
}
