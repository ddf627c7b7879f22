package dev.interim.stream;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.stream.BadEventException.Reason;
import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.math.BigDecimal;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.Collections;
import java.util.Iterator;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Random;

/**
 * The oracle of the bad-input tests, for the invented configuration {@code tile-events.yaml}: what
 * the reader must make of an event (refuse it with a reason, or accept it with exactly these sink
 * calls), worked out here by hand from that configuration's rules as docs/configuration.md states
 * them, not with the reader's code; and a writer that lays an event out as JSON in varied ways
 * (member order, whitespace, escapes), none of which may change what the event says.
 */
final class TileEvents {
    static final String CONFIG_RESOURCE = "/dev/interim/stream/tile-events.yaml";
    static final JsonNodeFactory NODES = JsonNodeFactory.instance;
    /** Arms by experiment, as configured. */
    static final Map<String, List<String>> ARMS = Map.of("tile-cache", List.of("lru", "arc", "tinylfu"),
            "tile-format", List.of("png", "webp"));

    private TileEvents() {}

    static String configYaml() {
        try (InputStream in = TileEvents.class.getResourceAsStream(CONFIG_RESOURCE)) {
            return new String(Objects.requireNonNull(in, CONFIG_RESOURCE).readAllBytes(), StandardCharsets.UTF_8);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    static InterimConfig config() {
        return ConfigLoader.parseWithoutSecrets(configYaml());
    }

    /** What a read must end in: refused with a reason, or accepted with these calls (in any order). */
    record Outcome(Reason refused, List<String> calls) {
        static Outcome refused(Reason reason) {
            return new Outcome(reason, List.of());
        }

        static Outcome accepted(List<String> calls) {
            List<String> sorted = new ArrayList<>(calls);
            Collections.sort(sorted);
            return new Outcome(null, List.copyOf(sorted));
        }

        boolean isAccepted() {
            return refused == null;
        }

        @Override
        public String toString() {
            return isAccepted() ? "accepted " + calls : "refused " + refused;
        }
    }

    /** A check that refuses: its reason. */
    private static final class Refusal extends Exception {
        final Reason reason;

        Refusal(Reason reason) {
            super(reason.label(), null, false, false);
            this.reason = reason;
        }
    }

    // ---- the oracle -----------------------------------------------------------------------------

    /** What reading {@code event} (syntactically valid JSON, as written by {@link #write}) must give. */
    static Outcome expected(JsonNode event) {
        try {
            return Outcome.accepted(calls(event));
        } catch (Refusal r) {
            return Outcome.refused(r.reason);
        }
    }

    private static List<String> calls(JsonNode event) throws Refusal {
        String exp = identity(event.at("/exp"));
        if (!ARMS.containsKey(exp)) {
            throw new Refusal(Reason.UNKNOWN_EXPERIMENT);
        }
        String arm = identity(event.at("/arm"));
        if (!ARMS.get(exp).contains(arm)) {
            throw new Refusal(Reason.UNKNOWN_ARM);
        }
        JsonNode u = event.at("/session");
        String unit;
        if (absent(u)) {
            unit = null;
        } else if (u.isTextual() && unicode(u.textValue())) {
            unit = u.textValue();
        } else if (u.isIntegralNumber()) {
            unit = u.bigIntegerValue().toString();
        } else {
            throw new Refusal(Reason.WRONG_TYPE);
        }
        if (unit != null && unit.length() > JsonEventReader.MAX_UNIT_LENGTH) {
            throw new Refusal(Reason.TOO_LARGE);
        }
        if (unit == null && exp.equals("tile-cache")) {
            throw new Refusal(Reason.MISSING_FIELD);     // hit and bytes are per-unit metrics
        }
        List<String> calls = new ArrayList<>();
        calls.add(RecordingSink.exposureCall(exp, arm, unit));
        if (exp.equals("tile-cache")) {
            JsonNode status = event.at("/status");
            if (!absent(status)) {
                calls.add(RecordingSink.outcomeCall(exp, arm, unit, "errors", atLeast500(status)));
            }
            value(event.at("/timing/ms"), 0, 60000).ifPresent(v -> calls.add(RecordingSink.valueCall(exp, arm, unit, "latency", v)));
            JsonNode cache = event.at("/cache");
            if (!absent(cache)) {
                calls.add(RecordingSink.outcomeCall(exp, arm, unit, "hit", isText(scalar(cache), "hit")));
            }
            value(event.at("/bytes"), 0, Double.POSITIVE_INFINITY)
                    .ifPresent(v -> calls.add(RecordingSink.valueCall(exp, arm, unit, "bytes", v)));
        } else {
            JsonNode result = event.at("/result");
            if (!absent(result)) {
                calls.add(RecordingSink.outcomeCall(exp, arm, unit, "failed", !isText(scalar(result), "ok")));
            }
            value(event.at("/kb"), Double.NEGATIVE_INFINITY, Double.POSITIVE_INFINITY)
                    .ifPresent(v -> calls.add(RecordingSink.valueCall(exp, arm, unit, "size", v)));
        }
        return calls;
    }

    private static boolean absent(JsonNode n) {
        return n.isMissingNode() || n.isNull();
    }

    /** Experiment and arm: text, present. */
    private static String identity(JsonNode n) throws Refusal {
        if (absent(n)) {
            throw new Refusal(Reason.MISSING_FIELD);
        }
        if (!n.isTextual() || !unicode(n.textValue())) {
            throw new Refusal(Reason.WRONG_TYPE);
        }
        return n.textValue();
    }

    /** Unicode text: every surrogate in a pair (checked here by the JDK's encoder, which replaces any other). */
    private static boolean unicode(String s) {
        return StandardCharsets.UTF_8.newEncoder().canEncode(s);
    }

    /** {@code at_least: 500}: needs a finite number. */
    private static boolean atLeast500(JsonNode n) throws Refusal {
        if (!n.isNumber()) {
            throw new Refusal(Reason.WRONG_TYPE);
        }
        if (!Double.isFinite(n.doubleValue())) {
            throw new Refusal(Reason.NOT_FINITE);
        }
        return n.decimalValue().compareTo(BigDecimal.valueOf(500)) >= 0;
    }

    /** {@code equals} and {@code not_equals} compare scalars; a number must be finite. */
    private static JsonNode scalar(JsonNode n) throws Refusal {
        if (n.isContainerNode()) {
            throw new Refusal(Reason.WRONG_TYPE);
        }
        if (n.isNumber() && !Double.isFinite(n.doubleValue())) {
            throw new Refusal(Reason.NOT_FINITE);
        }
        return n;
    }

    private static boolean isText(JsonNode n, String text) {
        return n.isTextual() && n.textValue().equals(text);
    }

    /** A mean's or total's number: finite, within ±{@link JsonEventReader#MAX_MAGNITUDE}, within [min, max]. */
    private static java.util.Optional<Double> value(JsonNode n, double min, double max) throws Refusal {
        if (absent(n)) {
            return java.util.Optional.empty();
        }
        if (!n.isNumber()) {
            throw new Refusal(Reason.WRONG_TYPE);
        }
        double v = n.doubleValue();
        if (!Double.isFinite(v)) {
            throw new Refusal(Reason.NOT_FINITE);
        }
        if (Math.abs(v) > JsonEventReader.MAX_MAGNITUDE || v < min || v > max) {
            throw new Refusal(Reason.FORBIDDEN_VALUE);
        }
        return java.util.Optional.of(v);
    }

    // ---- models -----------------------------------------------------------------------------------

    /** {@code event} with the value at {@code pointer} (one or two levels) replaced; a missing node removes it. */
    static ObjectNode with(ObjectNode event, String pointer, JsonNode value) {
        ObjectNode copy = event.deepCopy();
        String[] path = pointer.substring(1).split("/");
        ObjectNode parent = copy;
        for (int i = 0; i < path.length - 1; i++) {
            JsonNode next = parent.get(path[i]);
            if (next instanceof ObjectNode o) {
                parent = o;
            } else if (value.isMissingNode()) {
                return copy;
            } else {
                parent = parent.putObject(path[i]);
            }
        }
        if (value.isMissingNode()) {
            parent.remove(path[path.length - 1]);
        } else {
            parent.set(path[path.length - 1], value);
        }
        return copy;
    }

    // ---- the writer -------------------------------------------------------------------------------

    /** {@code event} as UTF-8 JSON, laid out at random by {@code layout}. */
    static byte[] bytes(JsonNode event, Random layout) {
        return write(event, layout, null, null).getBytes(StandardCharsets.UTF_8);
    }

    /**
     * {@code event} as JSON text laid out by {@code layout}, except that the value at {@code pointer}
     * (when not null; a member the model holds) is written as {@code raw}, a text that need not be
     * valid JSON. The text starts with '{' and ends with '}'.
     */
    static String write(JsonNode event, Random layout, String pointer, String raw) {
        StringBuilder out = new StringBuilder();
        write(event, "", layout, pointer, raw, out);
        return out.toString();
    }

    private static void write(JsonNode n, String path, Random layout, String pointer, String raw, StringBuilder out) {
        if (path.equals(pointer)) {
            out.append(raw);
        } else if (n.isObject()) {
            List<String> names = names(n);
            Collections.shuffle(names, layout);
            out.append('{');
            boolean first = true;
            for (String name : names) {
                first = separator(first, layout, out);
                out.append(quote(name, layout)).append(space(layout)).append(':').append(space(layout));
                write(n.get(name), path + "/" + name, layout, pointer, raw, out);
            }
            out.append(space(layout)).append('}');
        } else if (n.isArray()) {
            out.append('[');
            boolean first = true;
            for (int i = 0; i < n.size(); i++) {
                first = separator(first, layout, out);
                write(n.get(i), path + "/" + i, layout, pointer, raw, out);
            }
            out.append(space(layout)).append(']');
        } else if (n.isTextual()) {
            out.append(quote(n.textValue(), layout));
        } else if (n.isFloatingPointNumber()) {
            out.append(number(n.doubleValue(), layout));
        } else {
            out.append(n.toString());   // integers, booleans, null
        }
    }

    private static boolean separator(boolean first, Random layout, StringBuilder out) {
        out.append(first ? "" : ",").append(space(layout));
        return false;
    }

    /** JSON whitespace: none mostly, else any of the four characters JSON allows. */
    private static String space(Random layout) {
        return switch (layout.nextInt(8)) {
            case 0 -> " ";
            case 1 -> "\n  ";
            case 2 -> "\t";
            case 3 -> "\r\n";
            default -> "";
        };
    }

    /** A string, sometimes with every non-ASCII character (or every character) written as a \\u escape. */
    static String quote(String s, Random layout) {
        int style = layout.nextInt(6);
        StringBuilder b = new StringBuilder("\"");
        for (int i = 0; i < s.length(); i++) {
            char c = s.charAt(i);
            if (c == '"' || c == '\\') {
                b.append('\\').append(c);
            } else if (c < 0x20 || style == 0 && c > 0x7e || style == 1) {
                b.append(String.format("\\u%04x", (int) c));
            } else {
                b.append(c);
            }
        }
        return b.append('"').toString();
    }

    /** A double in one of the ways JSON may write it; infinities as numbers too large for a double. */
    static String number(double v, Random layout) {
        if (Double.isInfinite(v)) {
            String[] big = {"1e400", "1E999", "2e308", "1.8e308", "123456789e400"};
            return (v < 0 ? "-" : "") + big[layout.nextInt(big.length)];
        }
        String shortest = Double.toString(v);
        if (v == 0 || layout.nextBoolean()) {   // BigDecimal has no negative zero
            return shortest.replace('E', 'e');
        }
        String plain = BigDecimal.valueOf(v).toPlainString();
        plain = plain.contains(".") ? plain : plain + ".0";   // written as a fraction, it stays a floating-point number
        return plain.length() <= 40 ? plain : shortest;
    }

    /** A readable rendering of bytes for failure messages: printable ASCII as is, the rest as \\xHH, clipped. */
    static String show(byte[] bytes) {
        StringBuilder b = new StringBuilder();
        for (int i = 0; i < Math.min(bytes.length, 300); i++) {
            int c = bytes[i] & 0xff;
            b.append(c >= 0x20 && c < 0x7f ? String.valueOf((char) c) : String.format("\\x%02X", c));
        }
        return b + (bytes.length > 300 ? "… (" + bytes.length + " bytes)" : "");
    }

    /** The names of an object's members, for generators. */
    static List<String> names(JsonNode n) {
        List<String> out = new ArrayList<>();
        for (Iterator<String> i = n.fieldNames(); i.hasNext(); ) {
            out.add(i.next());
        }
        return out;
    }
}
