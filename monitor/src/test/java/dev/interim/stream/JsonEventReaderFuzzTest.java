package dev.interim.stream;

import dev.interim.events.Catalog;

import static dev.interim.stream.TileEvents.NODES;
import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.MissingNode;
import com.fasterxml.jackson.databind.node.NullNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.interim.events.MappedExperiment;
import dev.interim.stream.BadEventException.Reason;
import dev.interim.stream.TileEvents.Outcome;
import java.io.ByteArrayOutputStream;
import java.math.BigInteger;
import java.nio.charset.StandardCharsets;
import java.util.Arrays;
import java.util.HashSet;
import java.util.List;
import java.util.Random;
import java.util.Set;
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.Combinators;
import net.jqwik.api.ForAll;
import net.jqwik.api.From;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;
import net.jqwik.api.Tuple;
import net.jqwik.api.constraints.IntRange;
import net.jqwik.api.constraints.Size;

/**
 * Property-based fuzzing of {@link JsonEventReader} on an invented configuration
 * ({@code tile-events.yaml}). Whatever the bytes, a read ends in one of two ways: the event is
 * accepted, and the sink got exactly one exposure and the observations the configuration's rules
 * give (worked out by {@link TileEvents}, not by the reader); or {@link BadEventException} with the
 * reason those rules give, and the sink got nothing. Never another exception, never half an event.
 *
 * <p>The inputs: valid events laid out in every way JSON allows; each field replaced by a value of
 * every JSON type, by NaN, infinities and values outside a metric's range; unknown experiments and
 * arms; random bytes and JSON-like noise; truncations; nesting past the limit; huge strings and
 * numbers; records above {@link JsonEventReader#MAX_BYTES}; ill-formed UTF-8; escaped unpaired
 * surrogates; duplicate keys; a byte order mark; trailing garbage. Each property runs at most 1,000
 * tries (fewer where one try is a megabyte), the whole class in a few seconds.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class JsonEventReaderFuzzTest {
    private static final JsonEventReader READER = new JsonEventReader(TileEvents.config().catalog());
    private static final Catalog CATALOG = new Catalog(TileEvents.config().experiments().stream()
            .map(MappedExperiment::definition).toList());
    /** The longest detail a refusal may carry: it travels in a header of the dead letter. */
    private static final int MAX_DETAIL = 300;
    private static final List<String> POINTERS = List.of("/exp", "/arm", "/session", "/status", "/timing/ms",
            "/timing", "/cache", "/bytes", "/result", "/kb", "/extra");

    /** Reads {@code bytes} into a recording sink and checks the contract that holds for every input. */
    static Outcome read(byte[] bytes) {
        RecordingSink sink = new RecordingSink();
        try {
            READER.read(bytes, sink);
        } catch (BadEventException e) {
            assertThat(sink.calls).as("a refused event reaches the sink not at all: %s", TileEvents.show(bytes)).isEmpty();
            assertThat(e.reason()).isNotNull();
            assertThat(e.getMessage()).as("detail of %s", TileEvents.show(bytes)).isNotNull()
                    .hasSizeLessThanOrEqualTo(MAX_DETAIL);
            return Outcome.refused(e.reason());
        } catch (RuntimeException | StackOverflowError e) {
            throw new AssertionError("read threw " + e + " instead of refusing " + TileEvents.show(bytes), e);
        }
        assertThat(sink.calls).as("an accepted event: %s", TileEvents.show(bytes)).isNotEmpty();
        assertThat(sink.calls.get(0)).as("an accepted event is first an exposure").startsWith("exposure ");
        assertThat(sink.calls.stream().filter(c -> c.startsWith("exposure "))).as("exposures of one event").hasSize(1);
        return Outcome.accepted(sink.calls);
    }

    private static Outcome read(String text) {
        return read(text.getBytes(StandardCharsets.UTF_8));
    }

    private static void assertRead(byte[] bytes, Outcome expected) {
        assertThat(read(bytes)).as(TileEvents.show(bytes)).isEqualTo(expected);
    }

    // ---- valid events, and every value at every pointer -------------------------------------------

    @Property(tries = 1000)
    void validEventsAreAcceptedWithTheirObservations(@ForAll("events") ObjectNode event, @ForAll Random layout) {
        Outcome expected = TileEvents.expected(event);
        assertThat(expected.isAccepted()).as("the generator makes valid events: %s", event).isTrue();
        assertRead(TileEvents.bytes(event, layout), expected);
    }

    @Property(tries = 1000)
    void anyValueAtAnyPointerGetsTheOutcomeItsTypeAndRangeCallFor(@ForAll("events") ObjectNode event,
            @ForAll("pointers") String pointer, @ForAll("values") JsonNode value, @ForAll Random layout) {
        ObjectNode changed = TileEvents.with(event, pointer, value);
        assertRead(TileEvents.bytes(changed, layout), TileEvents.expected(changed));
    }

    @Property(tries = 1000)
    void aValueIsAcceptedExactlyWhenItLiesInItsMetricsRange(@ForAll("events") ObjectNode event,
            @ForAll("nearRangeEnds") double v, @ForAll boolean latency, @ForAll Random layout) {
        ObjectNode cache = TileEvents.with(TileEvents.with(event, "/exp", NODES.textNode("tile-cache")), "/arm",
                NODES.textNode("arc"));
        cache = TileEvents.with(cache, "/session", NODES.textNode("s-1"));
        ObjectNode changed = TileEvents.with(cache, latency ? "/timing/ms" : "/bytes", NODES.numberNode(v));
        Outcome outcome = read(TileEvents.bytes(changed, layout));
        boolean inside = latency ? v >= 0 && v <= 60000 : v >= 0;   // latency {min: 0, max: 60000}; bytes {min: 0}
        if (inside) {
            assertThat(outcome.calls()).contains(RecordingSink.valueCall("tile-cache", "arc", "s-1", latency ? "latency" : "bytes", v));
        } else {
            assertThat(outcome.refused()).isEqualTo(Reason.FORBIDDEN_VALUE);
        }
    }

    @Property(tries = 1000)
    void experimentsAndArmsNotConfiguredAreNamedSo(@ForAll("events") ObjectNode event, @ForAll("nearNames") String name,
            @ForAll boolean atArm, @ForAll Random layout) {
        ObjectNode changed = TileEvents.with(event, atArm ? "/arm" : "/exp", NODES.textNode(name));
        String exp = changed.path("exp").asText();
        boolean known = atArm ? TileEvents.ARMS.get(exp).contains(name) : TileEvents.ARMS.containsKey(name);
        Outcome outcome = read(TileEvents.bytes(changed, layout));
        if (!known) {
            assertThat(outcome.refused()).isEqualTo(atArm ? Reason.UNKNOWN_ARM : Reason.UNKNOWN_EXPERIMENT);
        }
        assertThat(outcome).isEqualTo(TileEvents.expected(changed));
    }

    // ---- bytes that are not a JSON object --------------------------------------------------------

    @Property(tries = 1000)
    void randomBytesAreRefused(@ForAll @Size(max = 400) byte[] bytes) {
        Outcome outcome = read(bytes);
        assertThat(outcome.refused()).as(TileEvents.show(bytes)).isIn(Reason.NOT_JSON, Reason.MISSING_FIELD);
    }

    @Property(tries = 1000)
    void jsonLikeNoiseIsAcceptedOrRefusedButNeverThrowsAnythingElse(@ForAll("noise") String noise) {
        read(noise);   // the contract checks in read() are the property
    }

    @Property(tries = 1000)
    void everyTruncationOfAnEventIsNotJson(@ForAll("events") ObjectNode event, @ForAll Random layout,
            @ForAll @IntRange(min = 0, max = 10_000) int cut) {
        byte[] whole = TileEvents.bytes(event, layout);
        byte[] prefix = Arrays.copyOf(whole, cut % whole.length);   // may end inside a UTF-8 sequence
        assertThat(read(prefix).refused()).as(TileEvents.show(prefix)).isEqualTo(Reason.NOT_JSON);
    }

    @Property(tries = 300)
    void nestingBeyondTheLimitIsNotJson(@ForAll("events") ObjectNode event, @ForAll("pointers") String pointer,
            @ForAll @IntRange(min = 64, max = 20_000) int depth, @ForAll boolean objects, @ForAll boolean closed,
            @ForAll Random layout) {
        String open = objects ? "{\"a\":" : "[";
        String raw = open.repeat(depth) + (objects ? "1" : "") + (closed ? (objects ? "}" : "]").repeat(depth) : "");
        ObjectNode placeholder = TileEvents.with(event, pointer, NullNode.getInstance());
        String text = TileEvents.write(placeholder, layout, pointer, raw);
        assertThat(read(text).refused()).isEqualTo(Reason.NOT_JSON);
    }

    @Property(tries = 300)
    void nestingWithinTheLimitIsJustAValue(@ForAll("events") ObjectNode event, @ForAll("pointers") String pointer,
            @ForAll @IntRange(min = 1, max = 60) int depth, @ForAll Random layout) {
        JsonNode nested = NODES.numberNode(7);
        for (int i = 0; i < depth; i++) {
            nested = i % 2 == 0 ? NODES.arrayNode().add(nested) : NODES.objectNode().set("a", nested);
        }
        ObjectNode changed = TileEvents.with(event, pointer, nested);
        assertRead(TileEvents.bytes(changed, layout), TileEvents.expected(changed));
    }

    // ---- size ----------------------------------------------------------------------------------

    @Property(tries = 20)
    void hugeStringsAreReadAsTextAndNeverEchoedWhole(@ForAll("events") ObjectNode event,
            @ForAll("textPointers") String pointer, @ForAll @IntRange(min = 1_000, max = JsonEventReader.MAX_BYTES - 2_000) int length,
            @ForAll("text") String pattern, @ForAll Random layout) {
        String unit = pattern.isEmpty() ? "x" : pattern;
        String huge = unit.repeat(length / unit.length() + 1).substring(0, length);
        if (Character.isHighSurrogate(huge.charAt(huge.length() - 1))) {
            huge = huge.substring(0, huge.length() - 1);
        }
        ObjectNode changed = TileEvents.with(event, pointer, NODES.textNode(huge));
        byte[] bytes = TileEvents.bytes(changed, layout);
        if (bytes.length <= JsonEventReader.MAX_BYTES) {
            assertRead(bytes, TileEvents.expected(changed));
        } else {
            assertThat(read(bytes).refused()).isEqualTo(Reason.TOO_LARGE);
        }
    }

    @Property(tries = 1000)
    void hugeAndOddNumbersAreReadByTheirValueOrRefused(@ForAll("events") ObjectNode event,
            @ForAll("numberPointers") String pointer, @ForAll("numberTexts") String number, @ForAll Random layout) {
        ObjectNode placeholder = TileEvents.with(event, pointer, NullNode.getInstance());
        Outcome outcome = read(TileEvents.write(placeholder, layout, pointer, number));
        if (number.chars().filter(Character::isDigit).count() > 100) {
            // More than 100 digits (mantissa and exponent together) is refused by the parser's constraint.
            assertThat(outcome.refused()).as(number).isEqualTo(Reason.NOT_JSON);
            return;
        }
        boolean integral = !number.contains(".") && !number.contains("e") && !number.contains("E");
        JsonNode value = integral ? NODES.numberNode(new BigInteger(number)) : NODES.numberNode(Double.parseDouble(number));
        assertThat(outcome).as(number).isEqualTo(TileEvents.expected(TileEvents.with(event, pointer, value)));
    }

    @Property(tries = 1000)
    void numbersJsonDoesNotAllowAreNotJson(@ForAll("events") ObjectNode event, @ForAll("numberPointers") String pointer,
            @ForAll("notNumbers") String token, @ForAll Random layout) {
        ObjectNode placeholder = TileEvents.with(event, pointer, NullNode.getInstance());
        assertThat(read(TileEvents.write(placeholder, layout, pointer, token)).refused()).as(token).isEqualTo(Reason.NOT_JSON);
    }

    @Property(tries = 20)
    void recordsAboveTheLimitAreTooLargeAndAtTheLimitAreRead(@ForAll("events") ObjectNode event,
            @ForAll @IntRange(min = 0, max = 4096) int excess, @ForAll Random layout) {
        byte[] bytes = TileEvents.bytes(event, layout);
        byte[] padded = Arrays.copyOf(bytes, JsonEventReader.MAX_BYTES + excess);
        Arrays.fill(padded, bytes.length, padded.length, (byte) ' ');
        if (excess == 0) {
            assertRead(padded, TileEvents.expected(event));
        } else {
            assertThat(read(padded).refused()).isEqualTo(Reason.TOO_LARGE);
        }
    }

    // ---- encoding --------------------------------------------------------------------------------

    /** A marker in the written text that is then replaced by raw bytes. */
    private static final String MARK = "@@MARK@@";

    @Property(tries = 1000)
    void illFormedUtf8AnywhereIsNotJson(@ForAll("events") ObjectNode event, @ForAll("illFormedUtf8") byte[] bad,
            @ForAll("markPlaces") String place, @ForAll Random layout) {
        String text = place.equals("key")
                ? "{\"x" + MARK + "\":1," + TileEvents.write(event, layout, null, null).substring(1)
                : TileEvents.write(TileEvents.with(event, place, NullNode.getInstance()), layout, place, "\"a" + MARK + "b\"");
        byte[] bytes = replaceMark(text, bad);
        assertThat(read(bytes).refused()).as(TileEvents.show(bytes)).isEqualTo(Reason.NOT_JSON);
    }

    @Property(tries = 1000)
    void wellFormedUtf8IsReadAsTheTextItEncodes(@ForAll("events") ObjectNode event, @ForAll("text") String text,
            @ForAll Random layout) {
        ObjectNode changed = TileEvents.with(event, "/session", NODES.textNode(text));
        assertRead(TileEvents.bytes(changed, layout), TileEvents.expected(changed));
    }

    @Property(tries = 1000)
    void anUnpairedSurrogateEscapeInAnIdentityFieldIsNotText(@ForAll("events") ObjectNode event,
            @ForAll("loneSurrogates") String escape, @ForAll("identityPointers") String pointer, @ForAll Random layout) {
        ObjectNode placeholder = TileEvents.with(event, pointer, NullNode.getInstance());
        String text = TileEvents.write(placeholder, layout, pointer, "\"s" + escape + "1\"");
        assertThat(read(text).refused()).as(text).isEqualTo(Reason.WRONG_TYPE);
    }

    @Property(tries = 300)
    void aLeadingByteOrderMarkIsSkippedAndAnyOtherIsNotJson(@ForAll("events") ObjectNode event, @ForAll Random layout,
            @ForAll @IntRange(min = 0, max = 2) int where) {
        byte[] bytes = TileEvents.bytes(event, layout);
        byte[] bom = {(byte) 0xEF, (byte) 0xBB, (byte) 0xBF};
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        if (where == 0) {                                 // one at the start: allowed (RFC 8259 §8.1)
            out.writeBytes(bom);
            out.writeBytes(bytes);
            assertRead(out.toByteArray(), TileEvents.expected(event));
            return;
        }
        if (where == 1) {                                 // two at the start
            out.writeBytes(bom);
            out.writeBytes(bom);
            out.writeBytes(bytes);
        } else {                                          // one after the opening brace
            out.write('{');
            out.writeBytes(bom);
            out.write(bytes, 1, bytes.length - 1);
        }
        assertThat(read(out.toByteArray()).refused()).isEqualTo(Reason.NOT_JSON);
    }

    // ---- structure -------------------------------------------------------------------------------

    /** The first reference token of every pointer the tile configuration reads: the top-level keys read. */
    private static final java.util.Set<String> READ_AT_TOP = readAtTop();

    private static java.util.Set<String> readAtTop() {
        var config = TileEvents.config();
        java.util.List<com.fasterxml.jackson.core.JsonPointer> pointers = new java.util.ArrayList<>();
        pointers.add(config.events().experiment());
        pointers.add(config.events().arm());
        config.events().unit().ifPresent(pointers::add);
        config.events().time().ifPresent(pointers::add);
        config.experiments().forEach(e -> e.sources().values().forEach(source -> {
            pointers.add(source.field());
            if (source instanceof dev.interim.events.MetricSource.Ratio r) {
                pointers.add(r.denominator());
            }
        }));
        java.util.Set<String> top = new java.util.HashSet<>();
        pointers.forEach(p -> top.add(p.getMatchingProperty()));
        return top;
    }

    @Property(tries = 1000)
    void aKeyRepeatedWhereTheReaderReadsIsNotJsonAndElsewhereChangesNothing(@ForAll("events") ObjectNode event,
            @ForAll Random layout, @ForAll boolean nested, @ForAll("values") JsonNode other) {
        // The duplicate holds the same value or another one; it goes at the top or inside "timing" (whose
        // "ms" is read). Repeats are looked for only on the pointers' paths (docs/configuration.md).
        JsonNode value = other.isMissingNode() ? NODES.numberNode(12) : other;
        String again = TileEvents.write(NODES.arrayNode().add(value), layout, null, null).replaceAll("^\\[\\s*|\\s*]$", "");
        String text;
        boolean read;
        if (nested) {
            ObjectNode placeholder = TileEvents.with(event, "/timing", NullNode.getInstance());
            text = TileEvents.write(placeholder, layout, "/timing", "{\"ms\":12," + TileEvents.quote("ms", layout) + ":" + again + "}");
            read = true;
        } else {
            List<String> names = TileEvents.names(event);
            String name = names.get(layout.nextInt(names.size()));
            text = "{" + TileEvents.quote(name, layout) + ":" + again + "," + TileEvents.write(event, layout, null, null).substring(1);
            read = READ_AT_TOP.contains(name);
        }
        if (read) {
            assertThat(read(text).refused()).as(text).isEqualTo(Reason.NOT_JSON);
        } else {
            assertRead(text.getBytes(StandardCharsets.UTF_8), TileEvents.expected(event));
        }
    }

    @Property(tries = 1000)
    void anythingAfterTheEventIsNotJsonButWhitespaceIsFine(@ForAll("events") ObjectNode event, @ForAll Random layout,
            @ForAll("garbage") String tail, @ForAll @IntRange(min = 0, max = 3) int spaces) {
        String text = TileEvents.write(event, layout, null, null) + " \n\t\r".substring(0, spaces);
        assertRead(text.getBytes(StandardCharsets.UTF_8), TileEvents.expected(event));
        assertThat(read(text + tail).refused()).as(text + tail).isEqualTo(Reason.NOT_JSON);
    }

    // ---- into the real tallies -------------------------------------------------------------------

    @Property(tries = 300)
    void theTalliesTakeEveryAcceptedEventAndARefusalLeavesThemAsTheyWere(
            @ForAll @Size(min = 1, max = 30) List<@From("extremeEvents") ObjectNode> events, @ForAll Random layout) {
        PartitionState state = new PartitionState("tiles.events-0", CATALOG);
        for (ObjectNode event : events) {
            byte[] bytes = TileEvents.bytes(event, layout);
            Set<PartitionState.Partial> before = new HashSet<>(state.partials());
            int units = state.unitCount();
            try {
                READER.read(bytes, state);
            } catch (BadEventException e) {
                assertThat(new HashSet<>(state.partials())).as("refused: %s", TileEvents.show(bytes)).isEqualTo(before);
                assertThat(state.unitCount()).isEqualTo(units);
            } catch (RuntimeException e) {
                throw new AssertionError("the tallies threw " + e + " on an accepted event " + TileEvents.show(bytes), e);
            }
        }
    }

    // ---- generators ------------------------------------------------------------------------------

    // Built once, in this order (each uses the ones above): building arbitraries costs more than drawing from them.
    private static final Arbitrary<String> TEXT = text(24);
    private static final Arbitrary<JsonNode> JSON = nested(nested(scalars()));
    private static final Arbitrary<ObjectNode> EVENTS = validEvents();

    @Provide
    Arbitrary<ObjectNode> events() {
        return EVENTS;
    }

    private static Arbitrary<ObjectNode> validEvents() {
        Arbitrary<String[]> who = Arbitraries.of(List.of(new String[] {"tile-cache", "lru"}, new String[] {"tile-cache", "arc"},
                new String[] {"tile-cache", "tinylfu"}, new String[] {"tile-format", "png"}, new String[] {"tile-format", "webp"}));
        Arbitrary<JsonNode> unit = Arbitraries.oneOf(
                TEXT.map(NODES::textNode),
                Arbitraries.longs().map(NODES::numberNode),
                Arbitraries.bigIntegers().between(BigInteger.TEN.pow(20).negate(), BigInteger.TEN.pow(40)).map(NODES::numberNode),
                Arbitraries.just(MissingNode.getInstance()));
        Arbitrary<JsonNode> status = optional(Arbitraries.oneOf(
                Arbitraries.integers().between(100, 599).map(NODES::numberNode),
                Arbitraries.doubles().between(100, 600).ofScale(3).map(NODES::numberNode)));
        Arbitrary<JsonNode> ms = optional(Arbitraries.doubles().between(0, 60000).map(NODES::numberNode));
        Arbitrary<JsonNode> cache = optional(Arbitraries.oneOf(
                Arbitraries.of("hit", "miss", "HIT", " hit", "", "stale").map(NODES::textNode),
                Arbitraries.of(NODES.numberNode(1), NODES.booleanNode(true), NODES.booleanNode(false))));
        Arbitrary<JsonNode> bytes = optional(Arbitraries.oneOf(
                Arbitraries.doubles().between(0, 1e12).map(NODES::numberNode),
                Arbitraries.longs().between(0, Long.MAX_VALUE).map(NODES::numberNode)));
        Arbitrary<JsonNode> result = optional(Arbitraries.oneOf(
                Arbitraries.of("ok", "error", "OK", "timeout").map(NODES::textNode),
                Arbitraries.of(NODES.numberNode(0), NODES.booleanNode(false))));
        Arbitrary<JsonNode> kb = optional(Arbitraries.doubles().between(-1e9, 1e9).map(NODES::numberNode));
        Arbitrary<ObjectNode> measured = Combinators.combine(who, unit, status, ms, cache, bytes, result, kb).as((w, u, st, m, c, b, r, k) -> {
            ObjectNode e = NODES.objectNode().put("exp", w[0]).put("arm", w[1]);
            put(e, "session", u.isMissingNode() && w[0].equals("tile-cache") ? NODES.textNode("s-0") : u);
            put(e, "status", st);
            if (!m.isMissingNode()) {
                e.putObject("timing").set("ms", m);
            }
            put(e, "cache", c);
            put(e, "bytes", b);
            put(e, "result", r);
            put(e, "kb", k);
            return e;
        });
        return Combinators.combine(measured, extras()).as((e, x) -> {
            ObjectNode copy = e.deepCopy();
            copy.setAll(x);
            return copy;
        });
    }

    private static void put(ObjectNode e, String name, JsonNode value) {
        if (!value.isMissingNode()) {
            e.set(name, value);
        }
    }

    /** Absent (a missing node), null, or a value. */
    private static Arbitrary<JsonNode> optional(Arbitrary<JsonNode> value) {
        return Arbitraries.frequencyOf(Tuple.of(2, Arbitraries.just(MissingNode.getInstance())),
                Tuple.of(1, Arbitraries.just(NullNode.getInstance())), Tuple.of(5, value));
    }

    /** Members the configuration does not read, some with names close to those it does. */
    private static Arbitrary<ObjectNode> extras() {
        Arbitrary<String> names = Arbitraries.of("region", "tags", "ctx", "trace", "Exp", "ARM", "ms", "timing ", "extra");
        return Combinators.combine(names, json()).as(Tuple::of).list().ofMaxSize(3).map(members -> {
            ObjectNode o = NODES.objectNode();
            members.forEach(t -> o.set(t.get1(), t.get2()));
            return o;
        });
    }

    /** Any JSON value, nested up to three levels. */
    private static Arbitrary<JsonNode> json() {
        return JSON;
    }

    /** {@code inner}, or an array or an object of up to three of it. */
    private static Arbitrary<JsonNode> nested(Arbitrary<JsonNode> inner) {
        Arbitrary<JsonNode> arrays = inner.list().ofMaxSize(3).map(l -> NODES.arrayNode().addAll(l));
        Arbitrary<JsonNode> objects = Combinators.combine(Arbitraries.strings().alpha().ofMaxLength(4), inner).as(Tuple::of)
                .list().ofMaxSize(3).map(l -> {
                    ObjectNode o = NODES.objectNode();
                    l.forEach(t -> o.set(t.get1(), t.get2()));
                    return o;
                });
        return Arbitraries.oneOf(inner, arrays, objects);
    }

    private static Arbitrary<JsonNode> scalars() {
        return Arbitraries.oneOf(TEXT.map(NODES::textNode), Arbitraries.longs().map(NODES::numberNode),
                finiteDoubles().map(NODES::numberNode), Arbitraries.of(true, false).map(NODES::booleanNode),
                Arbitraries.just(NullNode.getInstance()));
    }

    @Provide
    Arbitrary<String> pointers() {
        return Arbitraries.of(POINTERS);
    }

    @Provide
    Arbitrary<String> textPointers() {
        return Arbitraries.of("/exp", "/arm", "/session", "/cache", "/result", "/timing/ms", "/extra");
    }

    @Provide
    Arbitrary<String> numberPointers() {
        return Arbitraries.of("/session", "/status", "/timing/ms", "/cache", "/bytes", "/result", "/kb", "/extra");
    }

    @Provide
    Arbitrary<String> identityPointers() {
        return Arbitraries.of("/exp", "/arm", "/session");
    }

    @Provide
    Arbitrary<String> markPlaces() {
        return Arbitraries.of("/exp", "/arm", "/session", "/cache", "/result", "/extra", "key");
    }

    /** A value of every JSON type, and the special and extreme ones; a missing node means "absent". */
    @Provide
    Arbitrary<JsonNode> values() {
        return Arbitraries.oneOf(
                Arbitraries.of(MissingNode.getInstance(), NullNode.getInstance()),
                Arbitraries.of("NaN", "Infinity", "-Infinity", "1e400", "500", "hit", "ok", "miss", "lru", "arc", "webp",
                        "tile-cache", "tile-format", "", " hit", "HIT", "null", "true").map(NODES::textNode),
                TEXT.map(NODES::textNode),
                Arbitraries.longs().map(NODES::numberNode),
                Arbitraries.bigIntegers().between(BigInteger.TEN.pow(60).negate(), BigInteger.TEN.pow(60)).map(NODES::numberNode),
                finiteDoubles().map(NODES::numberNode),
                Arbitraries.of(Double.POSITIVE_INFINITY, Double.NEGATIVE_INFINITY).map(NODES::numberNode),
                Arbitraries.of(true, false).map(NODES::booleanNode),
                json().filter(JsonNode::isContainerNode));
    }

    private static Arbitrary<Double> finiteDoubles() {
        return Arbitraries.oneOf(
                Arbitraries.doubles().between(-1e6, 1e6),
                Arbitraries.doubles(),
                Arbitraries.of(0.0, -0.0, 60000.0, Math.nextUp(60000.0), -Double.MIN_VALUE, 1e99, 1e100,
                        Math.nextUp(1e100), -1e100, 1e101, 1e154, 1e300, -1e300, Double.MAX_VALUE, -Double.MAX_VALUE));
    }

    @Provide
    Arbitrary<Double> nearRangeEnds() {
        return Arbitraries.oneOf(
                Arbitraries.of(0.0, -0.0, Double.MIN_VALUE, -Double.MIN_VALUE, 60000.0, Math.nextUp(60000.0),
                        Math.nextDown(60000.0), -1.0, 1e-300, -1e-300),
                Arbitraries.doubles().between(-10, 10),
                Arbitraries.doubles().between(59990, 60010),
                Arbitraries.doubles().between(-1e9, 1e9));
    }

    /** Names near the configured ones: other case, padding, control characters, the other experiment's arms. */
    @Provide
    Arbitrary<String> nearNames() {
        return Arbitraries.oneOf(
                Arbitraries.of("tile-cache", "tile-format", "lru", "arc", "tinylfu", "png", "webp", "LRU", "Tile-Cache",
                        "lru ", " arc", "tile-cache\u0000", "tile–cache", "tile_cache", "", "null", "arc\n"),
                TEXT);
    }

    /** Text of up to 24 characters and two more beyond the BMP: mostly ASCII, some control characters, any others. */
    @Provide
    Arbitrary<String> text() {
        return TEXT;
    }

    private static Arbitrary<String> text(int maxLength) {
        Arbitrary<String> ascii = Arbitraries.strings().withCharRange(' ', '~').ofMaxLength(maxLength);
        Arbitrary<String> any = Arbitraries.strings().withCharRange('\u0000', '\u001f').withCharRange(' ', '~')
                .withCharRange('\u0080', '\ud7ff').withCharRange('\ue000', '\uffff').ofMaxLength(maxLength);
        Arbitrary<String> supplementary = Arbitraries.integers().between(0x10000, 0x10ffff).list().ofMaxSize(2)
                .map(cps -> cps.stream().map(Character::toString).reduce("", String::concat));
        return Combinators.combine(Arbitraries.frequencyOf(Tuple.of(3, ascii), Tuple.of(1, any)), supplementary)
                .as((t, s) -> t.substring(0, t.length() / 2) + s + t.substring(t.length() / 2));
    }

    /** Numbers JSON allows: long digit strings, fractions, exponents far out of a double's range. */
    @Provide
    Arbitrary<String> numberTexts() {
        Arbitrary<String> digits = Arbitraries.strings().numeric().ofMinLength(1).ofMaxLength(3000)
                .map(d -> d.replaceFirst("^0+(?=.)", ""));
        Arbitrary<String> fraction = Arbitraries.strings().numeric().ofMinLength(1).ofMaxLength(120);
        Arbitrary<Integer> exponent = Arbitraries.oneOf(Arbitraries.integers().between(-400, 400),
                Arbitraries.integers().between(-2_000_000_000, 2_000_000_000));
        return Combinators.combine(Arbitraries.of("", "-"), digits, fraction.injectNull(0.5), exponent.injectNull(0.5),
                Arbitraries.of("e", "E", "e+"))
                .as((sign, d, f, e, mark) -> sign + d + (f == null ? "" : "." + f)
                        + (e == null ? "" : (e < 0 ? mark.substring(0, 1) : mark) + e));
    }

    @Provide
    Arbitrary<String> notNumbers() {
        return Arbitraries.of("NaN", "-NaN", "Infinity", "-Infinity", "+Infinity", "+1", ".5", "1.", "01", "-", "0x1F",
                "1e", "1e+", "--1", "1.5.2", "tru", "nul", "True", "'text'", "\"unterminated", "\"bad \\x escape\"",
                "\"\\u12\"", "[1,]", "{\"a\":}", "{,}", "[", "]", "}", "undefined", "1_000", "١٢٣");
    }

    /** Ill-formed UTF-8 (Unicode §3.9, Table 3-7): every kind of byte sequence a decoder must refuse. */
    @Provide
    Arbitrary<byte[]> illFormedUtf8() {
        Arbitrary<Integer> cont = Arbitraries.integers().between(0x80, 0xbf);
        Arbitrary<Integer> notCont = Arbitraries.oneOf(Arbitraries.integers().between(0x00, 0x7f).filter(b -> b != '"' && b != '\\'),
                Arbitraries.integers().between(0xc0, 0xff));
        return Arbitraries.oneOf(
                cont.map(c -> bytes(c)),                                                            // lone continuation
                Arbitraries.of(0xc0, 0xc1).flatMap(l -> cont.map(c -> bytes(l, c))),                // overlong 2-byte
                Arbitraries.integers().between(0xf5, 0xff).map(l -> bytes(l, 0x80, 0x80, 0x80)),    // no such lead
                Combinators.combine(Arbitraries.integers().between(0x80, 0x9f), cont).as((a, b) -> bytes(0xe0, a, b)),  // overlong 3-byte
                Combinators.combine(Arbitraries.integers().between(0xa0, 0xbf), cont).as((a, b) -> bytes(0xed, a, b)),  // surrogate
                Combinators.combine(Arbitraries.integers().between(0x80, 0x8f), cont, cont).as((a, b, c) -> bytes(0xf0, a, b, c)),  // overlong 4-byte
                Combinators.combine(Arbitraries.integers().between(0x90, 0xbf), cont, cont).as((a, b, c) -> bytes(0xf4, a, b, c)),  // above U+10FFFF
                Combinators.combine(Arbitraries.integers().between(0xc2, 0xf4), notCont).as((l, n) -> bytes(l, n)),    // lead, then no continuation
                Arbitraries.of(bytes(0xe2, 0x82), bytes(0xf0, 0x9f, 0x98), bytes(0xc3)));         // cut short
    }

    private static byte[] bytes(int... values) {
        byte[] b = new byte[values.length];
        for (int i = 0; i < values.length; i++) {
            b[i] = (byte) values[i];
        }
        return b;
    }

    private static byte[] replaceMark(String text, byte[] with) {
        byte[] bytes = text.getBytes(StandardCharsets.UTF_8);
        byte[] mark = MARK.getBytes(StandardCharsets.UTF_8);
        for (int i = 0; i + mark.length <= bytes.length; i++) {
            if (Arrays.equals(bytes, i, i + mark.length, mark, 0, mark.length)) {
                ByteArrayOutputStream out = new ByteArrayOutputStream();
                out.write(bytes, 0, i);
                out.writeBytes(with);
                out.write(bytes, i + mark.length, bytes.length - i - mark.length);
                return out.toByteArray();
            }
        }
        throw new AssertionError("no mark in " + text);
    }

    /** Escapes of unpaired surrogates: alone, reversed, or a high one followed by no low one. */
    @Provide
    Arbitrary<String> loneSurrogates() {
        Arbitrary<String> high = Arbitraries.integers().between(0xd800, 0xdbff).map(c -> String.format("\\u%04x", c));
        Arbitrary<String> low = Arbitraries.integers().between(0xdc00, 0xdfff).map(c -> String.format("\\u%04X", c));
        return Arbitraries.oneOf(high, low, Combinators.combine(low, high).as((l, h) -> l + h),
                high.map(h -> h + "\\u0041"), high.map(h -> h + h));
    }

    /** What may follow a complete event: anything that starts with something other than whitespace. */
    @Provide
    Arbitrary<String> garbage() {
        return Arbitraries.oneOf(
                Arbitraries.of("xyz", "}", "]", "{}", "[]", ",", "0", "null", "\"s\"", "{\"exp\":\"tile-cache\"}", "\u0000",
                        "\uFEFF", "//", "/* c */", "#"),
                Arbitraries.strings().all().ofMinLength(1).ofMaxLength(20)
                        .filter(s -> !Character.isSurrogate(s.charAt(0)) && " \n\r\t".indexOf(s.charAt(0)) < 0));
    }

    /** JSON-like noise: the characters of JSON in random order, with a few bytes beyond. */
    @Provide
    Arbitrary<String> noise() {
        Arbitrary<String> token = Arbitraries.of("{", "}", "[", "]", ":", ",", "\"", "\\", "\"exp\"", "\"arm\"",
                "\"session\"", "\"tile-cache\"", "\"lru\"", "\"timing\"", "\"ms\"", "0", "-1", "1e400", "true", "null",
                " ", "\n", "\\u", "d800", "é", "\uD83D\uDE00", "\u0000", "NaN");
        return token.list().ofMaxSize(60).map(l -> String.join("", l));
    }

    /** Valid events whose numbers are extreme, on a few units, so that per-unit totals add up. */
    @Provide
    Arbitrary<ObjectNode> extremeEvents() {
        Arbitrary<Double> extreme = Arbitraries.of(0.0, 1.0, 1e99, 1e100, -1e100, 1e101, 1e154, 1e155, 1e200, 1e300,
                -1e300, Double.MAX_VALUE, -Double.MAX_VALUE, 5e-324);
        return Combinators.combine(events(), extreme, Arbitraries.of("/timing/ms", "/bytes", "/kb"), Arbitraries.of("s-1", "s-2"))
                .as((e, v, pointer, unit) -> {
                    ObjectNode x = TileEvents.with(e, pointer, NODES.numberNode(v));
                    return x.path("exp").asText().equals("tile-cache") ? TileEvents.with(x, "/session", NODES.textNode(unit)) : x;
                });
    }
}
