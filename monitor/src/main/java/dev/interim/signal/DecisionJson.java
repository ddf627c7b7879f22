package dev.interim.signal;

import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonGenerator;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.json.JsonMapper;
import dev.interim.experiment.Acknowledgement;
import dev.interim.experiment.DecisionRecord;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.time.Instant;
import java.time.format.DateTimeParseException;

/**
 * A {@link DecisionRecord} as JSON: the value on the decisions topic and the body of the kill
 * webhook. One compact object, snake_case members in a fixed order (layout and example in
 * docs/decision-record.md).
 *
 * <p>Non-finite numbers. JSON has no NaN or infinity, so every non-finite number is written as
 * {@code null}. Reading gives back what each member means:
 * <ul>
 *   <li>{@code estimate.lower} null: −∞ (a one-sided interval, open below), and
 *       {@code estimate.upper} null: +∞ (open above) — unless {@code estimate.level} is null too,
 *       which means there is no interval at all (a hold before the first look): then both are NaN.
 *       A real interval always has a level, and its ends are never NaN.</li>
 *   <li>{@code statistic} null: ±∞ with the sign of {@code estimate.value} when that is a non-zero
 *       number (a statistic is infinite only when its p-value underflows, and it has the sign of the
 *       effect); NaN otherwise (no look yet).</li>
 *   <li>{@code boundary} null: NaN. Null means "no finite boundary at this look" — infinite before
 *       any α is spent, absent before the first look. The direction of an infinite boundary is not
 *       kept: it is the one case where reading does not give back the written value.</li>
 *   <li>{@code fraction}, {@code alpha_spent}, {@code estimate.value}, {@code estimate.level} null:
 *       NaN (none of them is ever infinite).</li>
 *   <li>{@code relative}: the relative change treatment/control − 1 with its repeated interval, read
 *       as {@code estimate} is: {@code relative.lower} null −∞, {@code relative.upper} null +∞, unless
 *       {@code relative.level} is null, which means there is no relative change (no look yet, or a
 *       level that is not positive): then value and both ends are NaN. {@code relative.level} is
 *       the level of {@code estimate}, written only when there is a relative change. Records written
 *       before the member existed have no {@code relative}: read as NaN throughout.</li>
 * </ul>
 *
 * <p>{@code kind} is the metric's kind ({@code event-rate}, ..., {@code event-quantile}); {@code quantile},
 * written for an event-quantile metric only, its probability (0.99 for the 99th percentile).
 * {@code levels.treatment} and {@code levels.control} are the arms' levels at the look (for a
 * quantile metric, the arms' quantiles in the metric's units; control's is the baseline against
 * one), written once there is a look. Records without these members (older writers, a hold before
 * any look) read as kind null, quantile and levels NaN.
 *
 * <p>Reading ignores members it does not know (newer writers may add some) and refuses, naming the
 * member, a record without its identity (experiment, arm, metric, decision, look, at, decision_id)
 * or without {@code dry_run}: a missing dry-run flag is never taken to mean "act".
 *
 * <p>Thread-safe: no state beyond a shared, immutable Jackson factory.
 */
public final class DecisionJson {
    /** The {@code type} member of every record, after the Standard Webhooks payload convention. */
    public static final String TYPE = "interim.decision";

    private static final JsonMapper MAPPER = JsonMapper.builder().build();
    private static final JsonFactory FACTORY = MAPPER.getFactory();

    private DecisionJson() {}

    /** The record as compact UTF-8 JSON. */
    public static byte[] write(DecisionRecord r) {
        ByteArrayOutputStream out = new ByteArrayOutputStream(512);
        try (JsonGenerator g = FACTORY.createGenerator(out)) {
            g.writeStartObject();
            g.writeStringField("type", TYPE);
            g.writeStringField("experiment", r.experiment());
            g.writeStringField("arm", r.arm());
            g.writeStringField("metric", r.metric());
            g.writeStringField("role", r.role());
            if (r.kind() != null) {
                g.writeStringField("kind", r.kind());
            }
            if (!Double.isNaN(r.quantile())) {
                g.writeNumberField("quantile", r.quantile());
            }
            g.writeStringField("decision", r.decision());
            g.writeStringField("previous", r.previous());
            g.writeNumberField("look", r.look());
            number(g, "fraction", r.fraction());
            number(g, "statistic", r.statistic());
            number(g, "boundary", r.boundary());
            number(g, "alpha_spent", r.alphaSpent());
            g.writeObjectFieldStart("estimate");
            number(g, "value", r.estimate());
            number(g, "lower", r.intervalLower());
            number(g, "upper", r.intervalUpper());
            number(g, "level", r.intervalLevel());
            g.writeEndObject();
            boolean relative = !Double.isNaN(r.relative()) || !Double.isNaN(r.relativeLower())
                    || !Double.isNaN(r.relativeUpper());
            g.writeObjectFieldStart("relative");
            number(g, "value", r.relative());
            number(g, "lower", r.relativeLower());
            number(g, "upper", r.relativeUpper());
            number(g, "level", relative ? r.intervalLevel() : Double.NaN);
            g.writeEndObject();
            if (!Double.isNaN(r.treatmentLevel()) || !Double.isNaN(r.controlLevel())) {
                g.writeObjectFieldStart("levels");
                number(g, "treatment", r.treatmentLevel());
                number(g, "control", r.controlLevel());
                g.writeEndObject();
            }
            g.writeStringField("at", r.at() == null ? null : r.at().toString());
            g.writeStringField("decision_id", r.decisionId());
            g.writeBooleanField("dry_run", r.dryRun());
            g.writeStringField("action", r.action());
            g.writeEndObject();
        } catch (IOException e) {
            throw new UncheckedIOException("writing a decision record to memory failed", e);
        }
        return out.toByteArray();
    }

    /** The {@code type} of an operator's acknowledgement, published beside the decision records. */
    public static final String ACKNOWLEDGEMENT_TYPE = "interim.acknowledgement";

    /**
     * An operator's acknowledgement as compact UTF-8 JSON: {@code type}, {@code experiment},
     * {@code stops} (the arm and metric of each stop for harm acknowledged), {@code at}, {@code id} and
     * {@code dry_run} (docs/decision-record.md).
     */
    public static byte[] write(Acknowledgement a) {
        ByteArrayOutputStream out = new ByteArrayOutputStream(256);
        try (JsonGenerator g = FACTORY.createGenerator(out)) {
            g.writeStartObject();
            g.writeStringField("type", ACKNOWLEDGEMENT_TYPE);
            g.writeStringField("experiment", a.experiment());
            g.writeArrayFieldStart("stops");
            for (Acknowledgement.Stop stop : a.stops()) {
                g.writeStartObject();
                g.writeStringField("arm", stop.arm());
                g.writeStringField("metric", stop.metric());
                g.writeEndObject();
            }
            g.writeEndArray();
            g.writeStringField("at", a.at().toString());
            g.writeStringField("id", a.id());
            g.writeBooleanField("dry_run", a.dryRun());
            g.writeEndObject();
        } catch (IOException e) {
            throw new UncheckedIOException("writing an acknowledgement to memory failed", e);
        }
        return out.toByteArray();
    }

    /**
     * The {@code type} member of a record on the decisions topic ({@link #TYPE} or
     * {@link #ACKNOWLEDGEMENT_TYPE}), or null when it is not a JSON object with a text {@code type}.
     */
    public static String type(byte[] json) {
        try {
            JsonNode root = MAPPER.readTree(json);
            return root != null && root.path("type").isTextual() ? root.path("type").asText() : null;
        } catch (IOException e) {
            return null;
        }
    }

    /** The record as one line of JSON text, for logs and the console. */
    public static String writeString(DecisionRecord r) {
        return new String(write(r), java.nio.charset.StandardCharsets.UTF_8);
    }

    /**
     * The record in {@code json}.
     *
     * @throws IllegalArgumentException when the bytes are not a JSON object, or a required member is
     *     missing or of the wrong type; the message names the member
     */
    public static DecisionRecord read(byte[] json) {
        JsonNode root;
        try {
            root = MAPPER.readTree(json);
        } catch (JsonProcessingException e) {
            throw new IllegalArgumentException("a decision record must be JSON: " + e.getOriginalMessage());
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
        if (root == null || !root.isObject()) {
            throw new IllegalArgumentException("a decision record must be a JSON object");
        }
        JsonNode estimate = root.path("estimate");
        double value = finiteOrNaN(estimate, "estimate.value", "value");
        double level = finiteOrNaN(estimate, "estimate.level", "level");
        boolean noInterval = Double.isNaN(level);
        double lower = number(estimate, "estimate.lower", "lower", noInterval ? Double.NaN : Double.NEGATIVE_INFINITY);
        double upper = number(estimate, "estimate.upper", "upper", noInterval ? Double.NaN : Double.POSITIVE_INFINITY);
        JsonNode rel = root.path("relative");
        if (!rel.isMissingNode() && !rel.isNull() && !rel.isObject()) {
            throw new IllegalArgumentException("decision record member 'relative' must be an object or null");
        }
        double relativeValue = finiteOrNaN(rel, "relative.value", "value");
        boolean noRelative = Double.isNaN(finiteOrNaN(rel, "relative.level", "level"));
        double relativeLower = number(rel, "relative.lower", "lower", noRelative ? Double.NaN : Double.NEGATIVE_INFINITY);
        double relativeUpper = number(rel, "relative.upper", "upper", noRelative ? Double.NaN : Double.POSITIVE_INFINITY);
        JsonNode levels = root.path("levels");
        if (!levels.isMissingNode() && !levels.isNull() && !levels.isObject()) {
            throw new IllegalArgumentException("decision record member 'levels' must be an object or null");
        }
        double infiniteStatistic = value > 0 ? Double.POSITIVE_INFINITY : value < 0 ? Double.NEGATIVE_INFINITY : Double.NaN;
        return new DecisionRecord(
                required(root, "experiment"), required(root, "arm"), required(root, "metric"),
                optional(root, "role"), required(root, "decision"), optional(root, "previous"),
                look(root),
                finiteOrNaN(root, "fraction", "fraction"),
                number(root, "statistic", "statistic", infiniteStatistic),
                finiteOrNaN(root, "boundary", "boundary"),
                finiteOrNaN(root, "alpha_spent", "alpha_spent"),
                value, lower, upper, level,
                at(root), required(root, "decision_id"), dryRun(root), optional(root, "action"),
                relativeValue, relativeLower, relativeUpper, optional(root, "kind"), quantile(root),
                finiteOrNaN(levels, "levels.treatment", "treatment"), finiteOrNaN(levels, "levels.control", "control"));
    }

    /** The probability of a quantile metric, NaN when absent (other kinds, older writers). */
    private static double quantile(JsonNode root) {
        double p = finiteOrNaN(root, "quantile", "quantile");
        if (!Double.isNaN(p) && !(p > 0 && p < 1)) {
            throw new IllegalArgumentException("decision record member 'quantile' must be a probability in (0, 1), got " + p);
        }
        return p;
    }

    private static void number(JsonGenerator g, String name, double value) throws IOException {
        if (Double.isFinite(value)) {
            g.writeNumberField(name, value);
        } else {
            g.writeNullField(name);
        }
    }

    private static double finiteOrNaN(JsonNode parent, String path, String name) {
        return number(parent, path, name, Double.NaN);
    }

    /** The number at {@code name}; {@code ifNull} when it is null or absent. */
    private static double number(JsonNode parent, String path, String name, double ifNull) {
        JsonNode n = parent.get(name);
        if (n == null || n.isNull()) {
            return ifNull;
        }
        if (!n.isNumber()) {
            throw new IllegalArgumentException("decision record member '" + path + "' must be a number or null, got "
                    + n.getNodeType().name().toLowerCase());
        }
        return n.doubleValue();
    }

    private static String required(JsonNode root, String name) {
        JsonNode n = root.get(name);
        if (n == null || !n.isTextual() || n.textValue().isEmpty()) {
            throw new IllegalArgumentException("decision record member '" + name + "' is required and must be a non-empty string");
        }
        return n.textValue();
    }

    private static String optional(JsonNode root, String name) {
        JsonNode n = root.get(name);
        if (n == null || n.isNull()) {
            return null;
        }
        if (!n.isTextual()) {
            throw new IllegalArgumentException("decision record member '" + name + "' must be a string or null");
        }
        return n.textValue();
    }

    private static int look(JsonNode root) {
        JsonNode n = root.get("look");
        if (n == null || !n.isIntegralNumber() || !n.canConvertToInt() || n.intValue() < 0) {
            throw new IllegalArgumentException("decision record member 'look' is required and must be an integer >= 0");
        }
        return n.intValue();
    }

    private static boolean dryRun(JsonNode root) {
        JsonNode n = root.get("dry_run");
        if (n == null || !n.isBoolean()) {
            throw new IllegalArgumentException("decision record member 'dry_run' is required and must be true or false");
        }
        return n.booleanValue();
    }

    private static Instant at(JsonNode root) {
        String text = required(root, "at");
        try {
            return Instant.parse(text);
        } catch (DateTimeParseException e) {
            throw new IllegalArgumentException("decision record member 'at' must be an ISO-8601 instant such as "
                    + "2026-03-01T12:00:00Z, got '" + text + "'");
        }
    }
}
