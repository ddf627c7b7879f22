package dev.interim.config;

import com.fasterxml.jackson.databind.JsonNode;
import java.math.BigDecimal;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.function.Function;

/**
 * A value of the parsed YAML tree together with its key path, so that every complaint names where it
 * is. Readers walk the tree through these; each typed accessor either returns the value or throws a
 * {@link ConfigException} at this path. Explicit nulls ({@code key:} with nothing after it) count as
 * absent.
 */
final class ConfigNode {
    private final JsonNode node;
    private final String path;

    private ConfigNode(JsonNode node, String path) {
        this.node = node;
        this.path = path;
    }

    static ConfigNode root(JsonNode node) {
        return new ConfigNode(node, "");
    }

    String path() {
        return path;
    }

    JsonNode json() {
        return node;
    }

    ConfigException error(String problem) {
        return new ConfigException(path, problem);
    }

    // ---- mappings ----

    /** Checks this is a mapping whose keys are all among {@code accepted} (listed in the message otherwise). */
    ConfigNode mapping(Set<String> accepted) {
        if (!node.isObject()) {
            throw error("must be a mapping of " + String.join(", ", accepted) + "; got " + kind());
        }
        for (Iterator<String> names = node.fieldNames(); names.hasNext(); ) {
            String key = names.next();
            if (!accepted.contains(key)) {
                String hint = KeyHints.closest(key, accepted).map(k -> " (did you mean '" + k + "'?)").orElse("");
                throw child(key).error("unknown key" + hint + "; accepted here: " + String.join(", ", accepted));
            }
        }
        return this;
    }

    Optional<ConfigNode> optional(String key) {
        JsonNode value = node.get(key);
        return value == null || value.isNull() ? Optional.empty() : Optional.of(child(key));
    }

    /** The value under {@code key}; when absent, an error saying it is required and {@code what} it should be. */
    ConfigNode required(String key, String what) {
        return optional(key).orElseThrow(() -> child(key).error("is required: " + what));
    }

    boolean has(String key) {
        return optional(key).isPresent();
    }

    private ConfigNode child(String key) {
        return new ConfigNode(node.path(key), path.isEmpty() ? key : path + "." + key);
    }

    /** The entries of a mapping, in file order. */
    Map<String, ConfigNode> entries(String what) {
        if (!node.isObject()) {
            throw error("must be a mapping of " + what + "; got " + kind());
        }
        Map<String, ConfigNode> entries = new LinkedHashMap<>();
        node.fieldNames().forEachRemaining(k -> entries.put(k, child(k)));
        return entries;
    }

    // ---- lists ----

    /** The elements of a list; a single value is not accepted as a list of one. */
    List<ConfigNode> elements(String what) {
        if (!node.isArray()) {
            throw error("must be a list of " + what + "; got " + kind());
        }
        List<ConfigNode> elements = new ArrayList<>();
        for (int i = 0; i < node.size(); i++) {
            elements.add(new ConfigNode(node.get(i), path + "[" + i + "]"));
        }
        return elements;
    }

    // ---- scalars ----

    String text() {
        if (node.isNumber() || node.isBoolean()) {
            throw error("must be text; got " + kind() + " (YAML reads bare numbers and words such as yes, no, on "
                    + "and off as numbers or booleans: write the value in quotes)");
        }
        if (!node.isTextual()) {
            throw error("must be text; got " + kind());
        }
        String text = node.textValue().strip();
        if (text.isEmpty()) {
            throw error("must not be empty");
        }
        return text;
    }

    double number() {
        if (!node.isNumber()) {
            throw error("must be a number; got " + kind());
        }
        return node.doubleValue();
    }

    long integer() {
        boolean finite = node.isNumber() && !(node.isFloatingPointNumber() && !Double.isFinite(node.doubleValue()));
        if (!node.isIntegralNumber() && !(finite && isWhole(node.decimalValue()))) {
            throw error("must be a whole number; got " + kind());
        }
        if (!node.canConvertToLong()) {
            throw error("is too large; got " + shown());
        }
        return node.longValue();
    }

    int intValue() {
        long v = integer();
        if (v < Integer.MIN_VALUE || v > Integer.MAX_VALUE) {
            throw error("is too large; got " + v);
        }
        return (int) v;
    }

    int smallInteger(long min, long max) {
        long v = integer();
        if (v < min || v > max) {
            throw error("must lie between " + min + " and " + max + "; got " + v);
        }
        return (int) v;
    }

    boolean bool() {
        if (!node.isBoolean()) {
            throw error("must be true or false; got " + kind());
        }
        return node.booleanValue();
    }

    /** A duration such as {@code 500ms}, {@code 30s}, {@code 5m} or {@code 1h}, within [min, max]. */
    Duration duration(Duration min, Duration max) {
        String text = node.isTextual() ? node.textValue().strip() : null;
        if (text == null) {
            throw error("must be a duration with its unit, such as 500ms, 30s, 5m or 1h; got " + kind());
        }
        Duration d;
        try {
            d = Durations.parse(text);
        } catch (IllegalArgumentException e) {
            throw error(e.getMessage());
        }
        if (d.compareTo(min) < 0 || d.compareTo(max) > 0) {
            throw error("must lie between " + Durations.format(min) + " and " + Durations.format(max) + "; got " + text);
        }
        return d;
    }

    /** Text turned into a value by {@code parser}; its IllegalArgumentException becomes an error here. */
    <T> T parsed(Function<String, T> parser) {
        String text = text();
        try {
            return parser.apply(text);
        } catch (ConfigException e) {
            throw e;
        } catch (IllegalArgumentException e) {
            throw error(e.getMessage());
        }
    }

    /** The value as a message shows it: text quoted, numbers and booleans as written. */
    String shown() {
        if (node.isTextual()) {
            return "'" + node.textValue() + "'";
        }
        if (node.isFloatingPointNumber() && !Double.isFinite(node.doubleValue())) {
            return node.asText();
        }
        if (node.isNumber()) {
            return node.isIntegralNumber()
                    ? node.bigIntegerValue().toString() : node.decimalValue().stripTrailingZeros().toPlainString();
        }
        return node.toString();
    }

    /** What kind of value this is, for messages. */
    String kind() {
        if (node.isMissingNode() || node.isNull()) {
            return "nothing";
        }
        if (node.isObject()) {
            return "a mapping";
        }
        if (node.isArray()) {
            return "a list";
        }
        if (node.isTextual()) {
            return "text " + shown();
        }
        if (node.isBoolean()) {
            return node.booleanValue() ? "true" : "false";
        }
        return shown();
    }

    private static boolean isWhole(BigDecimal d) {
        return d.stripTrailingZeros().scale() <= 0;
    }
}
