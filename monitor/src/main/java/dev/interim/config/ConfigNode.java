package dev.interim.config;

import dev.interim.text.Durations;

import com.fasterxml.jackson.databind.JsonNode;
import dev.interim.text.UserText;
import java.math.BigDecimal;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashSet;
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
 * absent. All nodes of one tree share its {@link Problems}: {@link #read} and {@link #readRequired}
 * record a key's problem there and let the reader go on with the next key.
 */
final class ConfigNode {
    private final JsonNode node;
    private final String path;
    private final Problems problems;
    /** Keys required here that an unknown key was probably meant to be (reported once, as the unknown key). */
    private final Set<String> misspelt = new HashSet<>();

    private ConfigNode(JsonNode node, String path, Problems problems) {
        this.node = node;
        this.path = path;
        this.problems = problems;
    }

    static ConfigNode root(JsonNode node, Problems problems) {
        return new ConfigNode(node, "", problems);
    }

    Problems problems() {
        return problems;
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

    /**
     * Checks this is a mapping (or throws) and records each key not among {@code accepted} as a
     * problem, listing the accepted ones.
     */
    ConfigNode mapping(Set<String> accepted) {
        if (!node.isObject()) {
            throw error("must be a mapping of " + String.join(", ", accepted) + "; got " + kind());
        }
        for (Iterator<String> names = node.fieldNames(); names.hasNext(); ) {
            String key = names.next();
            if (!accepted.contains(key)) {
                Optional<String> meant = KeyHints.closest(key, accepted);
                meant.filter(k -> !node.has(k)).ifPresent(misspelt::add);
                String hint = meant.map(k -> " (did you mean '" + k + "'?)").orElse("");
                problems.add(child(key).error("unknown key" + hint + "; accepted here: " + String.join(", ", accepted)));
            }
        }
        return this;
    }

    /**
     * The value under {@code key} as {@code reader} reads it; {@code absent} when the key is left
     * out; null when the reader found a problem, which is recorded.
     */
    <T> T read(String key, Function<ConfigNode, T> reader, T absent) {
        Optional<ConfigNode> value = optional(key);
        return value.isEmpty() ? absent : problems.attempt(() -> reader.apply(value.get()));
    }

    /** The value under {@code key} as {@code reader} reads it; null when it is absent or has a problem (recorded). */
    <T> T readRequired(String key, String what, Function<ConfigNode, T> reader) {
        return problems.attempt(() -> reader.apply(required(key, what)));
    }

    /** Records {@code problem} and goes on. */
    void report(ConfigException problem) {
        problems.add(problem);
    }

    /** Records a problem of the environment (a secret's variable), reported after those of the values. */
    void reportEnvironment(ConfigException problem) {
        problems.addEnvironment(problem);
    }

    Problems.Checkpoint checkpoint() {
        return problems.checkpoint();
    }

    Optional<ConfigNode> optional(String key) {
        JsonNode value = node.get(key);
        return value == null || value.isNull() ? Optional.empty() : Optional.of(child(key));
    }

    /**
     * The value under {@code key}; when absent, an error saying it is required and {@code what} it
     * should be (or, when an unknown key here was probably meant to be it, an abandoned read: that key
     * is reported already).
     */
    ConfigNode required(String key, String what) {
        Optional<ConfigNode> value = optional(key);
        if (value.isEmpty() && misspelt.contains(key)) {
            throw new Problems.Abandoned();
        }
        return value.orElseThrow(() -> child(key).error("is required: " + what));
    }

    boolean has(String key) {
        return optional(key).isPresent();
    }

    private ConfigNode child(String key) {
        String shown = UserText.shown(key);
        return new ConfigNode(node.path(key), path.isEmpty() ? shown : path + "." + shown, problems);
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
            elements.add(new ConfigNode(node.get(i), path + "[" + i + "]", problems));
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

    /** A finite number: YAML's {@code .nan}, {@code .inf} and {@code -.inf} are refused. */
    double number() {
        if (!node.isNumber()) {
            throw error("must be a number; got " + kind());
        }
        if (!Double.isFinite(node.doubleValue())) {
            throw error("must be a finite number; got " + shown());
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
            throw error("must lie between " + Durations.format(min) + " and " + Durations.format(max) + "; got "
                    + UserText.shown(text));
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

    /**
     * The value as a message shows it: text quoted, numbers and booleans as written, the non-finite
     * numbers as YAML writes them; escaped and shortened by {@link UserText}.
     */
    String shown() {
        if (node.isTextual()) {
            return UserText.quoted(node.textValue());
        }
        if (node.isFloatingPointNumber() && !Double.isFinite(node.doubleValue())) {
            double v = node.doubleValue();
            return Double.isNaN(v) ? ".nan" : v > 0 ? ".inf" : "-.inf";
        }
        if (node.isNumber()) {
            return UserText.shown(node.isIntegralNumber()
                    ? node.bigIntegerValue().toString() : node.decimalValue().stripTrailingZeros().toPlainString());
        }
        return UserText.shown(node.toString());
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
