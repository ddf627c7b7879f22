package dev.interim.events;

import com.fasterxml.jackson.databind.JsonNode;
import java.math.BigDecimal;
import java.util.List;
import java.util.StringJoiner;

/**
 * What counts as a success for a rate: one comparison of the metric's field with a value written in
 * the configuration, such as {@code {at_least: 500}} or {@code {in: [declined, timed_out]}}.
 *
 * <p>Types must match: a number equals only a number (compared by value, so 500 equals 500.0), text
 * only the same text, a boolean only the same boolean. The ordering comparisons ({@code above},
 * {@code at_least}, {@code below}, {@code at_most}) need a number in the event; see
 * {@link #needsNumber()}.
 *
 * @param comparison the comparison
 * @param operands the value compared with (one), or the list for {@code in} and {@code not_in}
 */
public record Condition(Comparison comparison, List<JsonNode> operands) {

    /** The comparisons, by their configuration names. */
    public enum Comparison {
        EQUALS("equals"), NOT_EQUALS("not_equals"), IN("in"), NOT_IN("not_in"),
        ABOVE("above"), AT_LEAST("at_least"), BELOW("below"), AT_MOST("at_most");

        private final String key;

        Comparison(String key) {
            this.key = key;
        }

        /** The key that writes this comparison in a configuration file. */
        public String key() {
            return key;
        }

        public boolean ordering() {
            return this == ABOVE || this == AT_LEAST || this == BELOW || this == AT_MOST;
        }

        public boolean takesList() {
            return this == IN || this == NOT_IN;
        }
    }

    public Condition {
        operands = List.copyOf(operands);
        if (operands.isEmpty() || (!comparison.takesList() && operands.size() != 1)) {
            throw new IllegalArgumentException(comparison.key() + " takes " + (comparison.takesList() ? "a non-empty list" : "one value"));
        }
        for (JsonNode v : operands) {
            if (!v.isValueNode() || v.isNull() || comparison.ordering() && !v.isNumber()) {
                throw new IllegalArgumentException(comparison.key() + " compares with "
                        + (comparison.ordering() ? "a number" : "text, numbers or booleans") + ", got " + v);
            }
        }
    }

    /** True when the comparison orders numbers: an event whose field is not a number is then mistyped. */
    public boolean needsNumber() {
        return comparison.ordering();
    }

    /**
     * Whether the field's value meets the condition. A missing or null value never does (such an event
     * is not an observation of the metric); for the ordering comparisons, neither does a non-number.
     */
    public boolean test(JsonNode value) {
        if (value == null || value.isMissingNode() || value.isNull()) {
            return false;
        }
        return switch (comparison) {
            case EQUALS -> same(value, operands.get(0));
            case NOT_EQUALS -> !same(value, operands.get(0));
            case IN -> sameAsAny(value);
            case NOT_IN -> !sameAsAny(value);
            case ABOVE -> value.isNumber() && compare(value, operands.get(0)) > 0;
            case AT_LEAST -> value.isNumber() && compare(value, operands.get(0)) >= 0;
            case BELOW -> value.isNumber() && compare(value, operands.get(0)) < 0;
            case AT_MOST -> value.isNumber() && compare(value, operands.get(0)) <= 0;
        };
    }

    // Every event of a rate passes here: a loop rather than a stream, and integers compared as longs.

    private boolean sameAsAny(JsonNode value) {
        for (JsonNode o : operands) {
            if (same(value, o)) {
                return true;
            }
        }
        return false;
    }

    private static boolean same(JsonNode value, JsonNode operand) {
        if (value.isNumber() && operand.isNumber()) {
            return compare(value, operand) == 0;
        }
        if (value.isTextual() && operand.isTextual()) {
            return value.textValue().equals(operand.textValue());
        }
        return value.isBoolean() && operand.isBoolean() && value.booleanValue() == operand.booleanValue();
    }

    /** Numbers by their decimal values (500 equals 500.0); two integers that fit a long, as longs. */
    private static int compare(JsonNode a, JsonNode b) {
        if (a.isIntegralNumber() && b.isIntegralNumber() && a.canConvertToLong() && b.canConvertToLong()) {
            return Long.compare(a.longValue(), b.longValue());
        }
        return decimal(a).compareTo(decimal(b));
    }

    private static BigDecimal decimal(JsonNode n) {
        if (n.isFloatingPointNumber() && !Double.isFinite(n.doubleValue())) {
            // Infinities order beyond every decimal; NaN never reaches here from valid events.
            return BigDecimal.valueOf(n.doubleValue() > 0 ? Double.MAX_VALUE : -Double.MAX_VALUE);
        }
        return n.decimalValue();
    }

    /** The condition as the configuration writes it: {@code at_least: 500}, {@code in: [a, b]}. */
    @Override
    public String toString() {
        if (comparison.takesList()) {
            StringJoiner list = new StringJoiner(", ", "[", "]");
            operands.forEach(o -> list.add(o.asText()));
            return comparison.key() + ": " + list;
        }
        return comparison.key() + ": " + operands.get(0).asText();
    }
}
