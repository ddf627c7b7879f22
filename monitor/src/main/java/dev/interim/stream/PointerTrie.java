package dev.interim.stream;

import com.fasterxml.jackson.core.JsonParseException;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.BooleanNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.MissingNode;
import com.fasterxml.jackson.databind.node.NullNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import com.fasterxml.jackson.databind.node.TextNode;
import java.io.IOException;
import java.util.Arrays;
import java.util.Collection;
import java.util.HashMap;
import java.util.Map;

/**
 * A set of JSON Pointers (RFC 6901) as a tree of their reference tokens, matched against a JSON value
 * in one pass over a parser's tokens, without building the value. Each distinct pointer gets a slot;
 * a pass fills the slots of the pointers that found something, and leaves the others empty (missing).
 *
 * <p>What a pointer finds is what {@link JsonNode#at(JsonPointer)} finds in the value's tree: the
 * empty pointer is the whole value; a reference token selects the member of that name in an object
 * and, when it is an array index (digits without a leading zero, at most {@link Integer#MAX_VALUE}:
 * {@link JsonPointer#getMatchingIndex()}), the element at that index in an array; the escapes
 * {@code ~0} and {@code ~1} are undone by {@link JsonPointer} itself. A pointer that goes on past a
 * scalar, or names no member or element, finds nothing. A scalar found is recorded as the node the
 * tree would hold (the same {@link JsonNodeFactory} calls {@code ObjectMapper.readTree} makes); an
 * object or an array found is recorded as a marker that answers every type question as an empty
 * object or array does, since nothing reads inside it.
 *
 * <p>Every token of the value is read, matched or not, in the order and with the calls the tree
 * reader makes ({@link JsonParser#nextFieldName()} for members, {@link JsonParser#nextToken()} for
 * values): the parser checks its whole input the same way (structure, nesting depth, number length)
 * and fails at the same token with the same message. Strings and numbers not matched are not
 * decoded; the parser still checks their syntax as it passes them. Duplicate keys are looked for
 * only where the pointers read (a member on a pointer's path named twice in its object: the event
 * would say two things there); elsewhere nothing reads them, and they cost nothing.
 *
 * <p>Immutable once built; a pass keeps its state in the array it is given, so passes may run
 * concurrently.
 */
final class PointerTrie {
    /** Recorded for an object found: it answers every type question as an object does. */
    static final JsonNode OBJECT = new ObjectNode(JsonNodeFactory.instance);
    /** Recorded for an array found. */
    static final JsonNode ARRAY = new ArrayNode(JsonNodeFactory.instance);
    private static final JsonNodeFactory NODES = JsonNodeFactory.instance;
    /** Indices below this are held in an array; larger ones (rare in events) in a map. */
    private static final int DENSE_INDICES = 64;

    private final Node root;
    private int slots;
    /** Nodes made so far: each has an id below this, for the pass's record of what it visited. */
    private int nodes;

    PointerTrie() {
        root = new Node(nodes++);
    }

    /** One reference token's place in the tree: its slot (or -1) and what follows it. */
    private final class Node {
        /** Its index in a pass's record of visited nodes. */
        final int id;
        int slot = -1;
        /** Children by member name, null when none. */
        Map<String, Node> members;
        /** Children by array index below {@link #DENSE_INDICES}, null when none. */
        Node[] elements;
        /** Children by larger array index, null when none. */
        Map<Integer, Node> farElements;
        /** The largest index with a child, or -1. */
        int lastIndex = -1;
        /** Text this place is expected to hold, by length, as the nodes to record; null when none is. */
        TextNode[][] known;

        Node(int id) {
            this.id = id;
        }

        Node member(String name) {
            return members == null ? null : members.get(name);
        }

        Node element(int index) {
            if (index > lastIndex) {
                return null;
            }
            if (index < DENSE_INDICES) {
                return elements == null ? null : elements[index];
            }
            return farElements == null ? null : farElements.get(index);
        }

        Node child(JsonPointer step) {
            String name = step.getMatchingProperty();
            Node child = members == null ? null : members.get(name);
            if (child == null) {
                child = new Node(nodes++);
                if (members == null) {
                    members = new HashMap<>();
                }
                members.put(name, child);
                // The same token, read as an index, selects the element: the two never meet in one
                // value, which is either an object or an array.
                int index = step.getMatchingIndex();
                if (index >= 0) {
                    if (index < DENSE_INDICES) {
                        if (elements == null || elements.length <= index) {
                            elements = elements == null ? new Node[index + 1] : Arrays.copyOf(elements, index + 1);
                        }
                        elements[index] = child;
                    } else {
                        if (farElements == null) {
                            farElements = new HashMap<>();
                        }
                        farElements.put(index, child);
                    }
                    lastIndex = Math.max(lastIndex, index);
                }
            }
            return child;
        }
    }

    /** Adds {@code pointer}, or finds it already added: its slot. */
    int add(JsonPointer pointer) {
        Node node = root;
        for (JsonPointer at = pointer; !at.matches(); at = at.tail()) {
            node = node.child(at);
        }
        if (node.slot < 0) {
            node.slot = slots++;
        }
        return node.slot;
    }

    /**
     * Texts that {@code pointer} (already added) usually finds, such as the configured experiment ids:
     * a pass records one of these nodes when the text is equal to it, instead of decoding a new string.
     * What is recorded is the same either way; only the work differs.
     */
    void expect(JsonPointer pointer, Collection<String> texts) {
        Node node = root;
        for (JsonPointer at = pointer; !at.matches(); at = at.tail()) {
            node = node.child(at);
        }
        int longest = texts.stream().mapToInt(String::length).max().orElse(-1);
        TextNode[][] byLength = node.known == null ? new TextNode[longest + 1][] : node.known;
        if (byLength.length <= longest) {
            byLength = Arrays.copyOf(byLength, longest + 1);
        }
        for (String text : new java.util.LinkedHashSet<>(texts)) {
            TextNode[] same = byLength[text.length()];
            if (same == null || Arrays.stream(same).noneMatch(t -> t.textValue().equals(text))) {
                same = same == null ? new TextNode[1] : Arrays.copyOf(same, same.length + 1);
                same[same.length - 1] = NODES.textNode(text);
                byLength[text.length()] = same;
            }
        }
        node.known = byLength;
    }

    /** How many slots a pass fills: one per distinct pointer added. */
    int slots() {
        return slots;
    }

    /** What the slot holds after a pass: the node found, or a missing node. */
    static JsonNode found(JsonNode[] found, int slot) {
        JsonNode n = slot < 0 ? null : found[slot];
        return n == null ? MissingNode.getInstance() : n;
    }

    /**
     * Reads the value whose first token, {@code first}, the parser has just returned, through its
     * last token, and records in {@code found} (one entry per slot) what each pointer finds in it.
     */
    void read(JsonParser p, JsonToken first, JsonNode[] found) throws IOException {
        value(p, first, root, found, new boolean[nodes]);
    }

    private static void value(JsonParser p, JsonToken t, Node node, JsonNode[] found, boolean[] visited)
            throws IOException {
        if (t == JsonToken.START_OBJECT) {
            if (node.slot >= 0) {
                found[node.slot] = OBJECT;
            }
            if (node.members == null) {
                skipObject(p);
            } else {
                object(p, node, found, visited);
            }
        } else if (t == JsonToken.START_ARRAY) {
            if (node.slot >= 0) {
                found[node.slot] = ARRAY;
            }
            if (node.lastIndex < 0) {
                skipArray(p);
            } else {
                array(p, node, found, visited);
            }
        } else if (t == null || t == JsonToken.NOT_AVAILABLE) {
            throw endOfInput(p);
        } else if (node.slot >= 0) {
            found[node.slot] = t == JsonToken.VALUE_STRING && node.known != null ? text(p, node.known) : scalar(p, t);
        }
    }

    private static void object(JsonParser p, Node node, JsonNode[] found, boolean[] visited) throws IOException {
        for (String name = p.nextFieldName(); name != null; name = p.nextFieldName()) {
            Node child = node.member(name);
            if (child != null && visited[child.id]) {
                // A pointer names each place once, so a node is reached twice only through a repeated key.
                throw new JsonParseException(p, "Duplicate field '" + name + "'");
            }
            JsonToken t = p.nextToken();
            if (child != null) {
                visited[child.id] = true;
                value(p, t, child, found, visited);
            } else {
                skip(p, t);
            }
        }
    }

    private static void array(JsonParser p, Node node, JsonNode[] found, boolean[] visited) throws IOException {
        int index = 0;
        for (JsonToken t = p.nextToken(); t != JsonToken.END_ARRAY; t = p.nextToken(), index++) {
            Node child = node.element(index);
            if (child != null) {
                value(p, t, child, found, visited);
            } else {
                skip(p, t);
            }
        }
    }

    /** Reads past the value that starts with {@code t}, checking all of it, recording nothing. */
    private static void skip(JsonParser p, JsonToken t) throws IOException {
        if (t == JsonToken.START_OBJECT) {
            skipObject(p);
        } else if (t == JsonToken.START_ARRAY) {
            skipArray(p);
        } else if (t == null || t == JsonToken.NOT_AVAILABLE) {
            throw endOfInput(p);
        }
    }

    /**
     * A blocking parser reports an end of input inside a value itself; this only guards the loops, and
     * stops a non-blocking parser, which says {@link JsonToken#NOT_AVAILABLE} until it is fed more.
     * (Its {@code nextFieldName()} then says null, as at the end of an object: whoever feeds it checks
     * that the value really ended.)
     */
    private static JsonParseException endOfInput(JsonParser p) {
        return new JsonParseException(p, "Unexpected end-of-input within a value");
    }

    // JsonParser.skipChildren() would do as well for the checks (it reads every token too, through
    // nextToken()), but it reads member names with nextToken() where the tree reader uses
    // nextFieldName(); walking the same way keeps even the error messages the same. The recursion is
    // as deep as the input nests, which the parser's nesting limit bounds.

    private static void skipObject(JsonParser p) throws IOException {
        while (p.nextFieldName() != null) {
            skip(p, p.nextToken());
        }
    }

    private static void skipArray(JsonParser p) throws IOException {
        for (JsonToken t = p.nextToken(); t != JsonToken.END_ARRAY; t = p.nextToken()) {
            skip(p, t);
        }
    }

    /** The current string token as a node: one of {@code known} when it equals one, else a new one. */
    private static JsonNode text(JsonParser p, TextNode[][] known) throws IOException {
        char[] chars = p.getTextCharacters();
        int offset = p.getTextOffset();
        int length = p.getTextLength();
        if (length < known.length && known[length] != null) {
            for (TextNode candidate : known[length]) {
                String k = candidate.textValue();
                int i = 0;
                while (i < length && k.charAt(i) == chars[offset + i]) {
                    i++;
                }
                if (i == length) {
                    return candidate;
                }
            }
        }
        return NODES.textNode(new String(chars, offset, length));
    }

    /**
     * The scalar the current token is, as the tree reader makes it: text, an int, long or big integer
     * by the number's size, a double for any number with a fraction or an exponent (a JSON parser
     * does not tell float sizes apart, so the tree reader takes its double value), true, false, null.
     */
    private static JsonNode scalar(JsonParser p, JsonToken t) throws IOException {
        switch (t) {
            case VALUE_STRING:
                return NODES.textNode(p.getText());
            case VALUE_NUMBER_INT:
                switch (p.getNumberType()) {
                    case INT:
                        return NODES.numberNode(p.getIntValue());
                    case LONG:
                        return NODES.numberNode(p.getLongValue());
                    default:
                        return NODES.numberNode(p.getBigIntegerValue());
                }
            case VALUE_NUMBER_FLOAT:
                return NODES.numberNode(p.getDoubleValue());
            case VALUE_TRUE:
                return BooleanNode.TRUE;
            case VALUE_FALSE:
                return BooleanNode.FALSE;
            case VALUE_NULL:
                return NullNode.getInstance();
            default:
                // No other token starts a JSON value (embedded objects come only from binary formats).
                throw new JsonParseException(p, "Unexpected token " + t);
        }
    }
}
