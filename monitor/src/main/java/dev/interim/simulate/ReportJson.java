package dev.interim.simulate;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.StreamWriteFeature;
import com.fasterxml.jackson.databind.SerializationFeature;
import com.fasterxml.jackson.databind.json.JsonMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.interim.experiment.Horizon;
import dev.interim.sequential.Look;
import dev.interim.text.Numbers;
import java.io.PrintWriter;
import java.io.UncheckedIOException;
import java.math.BigDecimal;
import java.util.Map;

/**
 * The report as one JSON object: {@code settings}, then {@code comparisons}, each with its design,
 * its looks (boundaries) and its {@code effects}; an effect has every estimate as
 * {@code {"estimate", "se"}} (plus {@code "recursion"} where computed), the stopping-look quantiles
 * with their 95% Monte Carlo intervals, and the runs stopped at each look by decision.
 */
final class ReportJson {
    private static final JsonMapper MAPPER = JsonMapper.builder()
            .enable(SerializationFeature.INDENT_OUTPUT)
            .enable(StreamWriteFeature.WRITE_BIGDECIMAL_AS_PLAIN)
            .build();
    private static final int DIGITS = 6;

    private ReportJson() {}

    static void write(SimulationReport report, PrintWriter out) {
        try {
            out.println(MAPPER.writeValueAsString(tree(report)));
        } catch (JsonProcessingException e) {
            throw new UncheckedIOException(e);
        }
        out.flush();
    }

    static ObjectNode tree(SimulationReport report) {
        ObjectNode root = MAPPER.createObjectNode();
        ObjectNode settings = root.putObject("settings");
        settings.put("runs", report.runs());
        settings.put("stream", report.stream());
        settings.put("effect_unit", report.effectUnit() == null ? "default" : report.effectUnit().label());
        ArrayNode fractions = settings.putArray("fractions");
        for (double t : report.fractions()) {
            fractions.add(Numbers.rounded(t, 9));
        }
        settings.put("model", "Z at each look from independent normal score increments with mean drift*dt and "
                + "variance dt (Jennison & Turnbull 2000, ch. 3); drift is the effect over its standard error at "
                + "the planned maximum information");
        settings.put("time", "expected_time_fraction assumes a constant traffic rate, under which information "
                + "grows in proportion to time");
        ArrayNode comparisons = root.putArray("comparisons");
        for (SimulationReport.ComparisonResult result : report.comparisons()) {
            comparisons.add(comparison(result));
        }
        return root;
    }

    private static ObjectNode comparison(SimulationReport.ComparisonResult result) {
        SimulatedComparison c = result.comparison();
        ObjectNode node = MAPPER.createObjectNode();
        node.put("experiment", c.experiment());
        node.put("metric", c.metric().name());
        if (c.metric().quantile() != null) {
            node.put("quantile", Numbers.given(c.metric().quantile()));
        }
        node.put("arm", c.arm());
        node.put("role", Descriptions.role(c));
        node.put("worse", Descriptions.worse(c));
        ObjectNode design = node.putObject("design");
        design.put("alternative", Descriptions.alternative(c));
        design.put("spending", c.design().efficacyLabel());
        if (c.design().futility() == null) {
            design.putNull("futility");
        } else {
            design.put("futility", Descriptions.futility(c));
        }
        design.put("alpha", Numbers.given(c.alpha()));
        design.put("metric_alpha", Numbers.given(c.metric().alpha()));
        design.put("treatments", c.treatments());
        ObjectNode horizon = node.putObject("horizon");
        if (c.metric().horizon() instanceof Horizon.MaxPerArm max) {
            horizon.put("max_per_arm", max.perArm());
            horizon.putNull("drift_per_unit");
        } else {
            Horizon.Powered p = (Horizon.Powered) c.metric().horizon();
            horizon.put("power", Numbers.given(p.power()));
            horizon.put("effect", Numbers.given(p.effect()));
            horizon.put("planned_looks", p.plannedLooks());
            horizon.put("drift_per_unit", number(c.driftPerUnit()));
        }
        ArrayNode looks = node.putArray("looks");
        for (Look look : c.looks()) {
            ObjectNode l = looks.addObject();
            l.put("look", look.number());
            l.put("fraction", Numbers.rounded(look.fraction(), 9));
            putBoundary(l, "upper", look.upper());
            putBoundary(l, "lower", look.lower());
        }
        ArrayNode effects = node.putArray("effects");
        for (SimulationReport.EffectResult e : result.effects()) {
            effects.add(effect(e));
        }
        return node;
    }

    private static ObjectNode effect(SimulationReport.EffectResult e) {
        OperatingCharacteristics oc = e.simulated();
        RecursionCharacteristics exact = e.recursion();
        ObjectNode node = MAPPER.createObjectNode();
        node.put("drift", Numbers.rounded(e.effect().drift(), 9));
        if (e.effect().inMetricUnits() == null) {
            node.putNull("effect");
        } else {
            node.put("effect", number(e.effect().inMetricUnits()));
        }
        node.put("direction", e.effect().direction());
        node.put("runs", oc.runs());
        node.set("reject", estimate(oc.rejection(), exact == null ? null : exact.rejection()));
        ObjectNode decisions = node.putObject("decisions");
        Map<Stop, Estimate> p = oc.probabilities();
        for (Stop s : Stop.values()) {
            decisions.set(s.label(), estimate(p.get(s), exact == null ? null : exact.probabilities().get(s)));
        }
        node.set("expected_fraction", estimate(oc.expectedFraction(), exact == null ? null : exact.expectedFraction()));
        node.set("expected_time_fraction", estimate(oc.expectedFraction(), null));
        node.set("expected_look", estimate(oc.expectedLook(), null));
        ArrayNode quantiles = node.putArray("stopping_look_quantiles");
        for (LookQuantile q : oc.quantiles()) {
            ObjectNode n = quantiles.addObject();
            n.put("probability", Numbers.rounded(q.probability(), 6));
            n.put("look", q.look());
            n.put("low", q.low());
            n.put("high", q.high());
        }
        ArrayNode histogram = node.putArray("stopped_by_look");
        for (int k = 1; k <= oc.looks(); k++) {
            ObjectNode n = histogram.addObject();
            n.put("look", k);
            n.put("total", oc.stoppedAt(k));
            for (Stop s : Stop.values()) {
                n.put(s.label(), oc.stoppedAt(s, k));
            }
        }
        return node;
    }

    private static ObjectNode estimate(Estimate e, Double recursion) {
        ObjectNode n = MAPPER.createObjectNode();
        putNumber(n, "estimate", e.value());
        putNumber(n, "se", e.standardError());
        if (recursion != null) {
            putNumber(n, "recursion", recursion);
        }
        return n;
    }

    private static void putNumber(ObjectNode n, String name, double x) {
        if (Double.isFinite(x)) {
            n.put(name, number(x));
        } else {
            n.putNull(name);
        }
    }

    private static void putBoundary(ObjectNode n, String name, double x) {
        if (Double.isFinite(x)) {
            n.put(name, Numbers.rounded(x, 6));
        } else {
            n.putNull(name);
        }
    }

    private static BigDecimal number(double x) {
        return Numbers.significantDecimal(x, DIGITS);
    }
}
