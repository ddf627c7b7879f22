package dev.interim.stream;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.core.JsonPointer;
import dev.interim.config.ConfigLoader;
import dev.interim.events.EventMapping;
import dev.interim.events.MappedExperiment;
import dev.interim.config.InterimConfig;
import dev.interim.events.MetricSource;
import dev.interim.stream.BadEventException.Reason;
import java.io.ByteArrayOutputStream;
import java.nio.charset.Charset;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Random;
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.Example;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;
import net.jqwik.api.statistics.Statistics;
import net.jqwik.api.statistics.StatisticsReport;
import net.jqwik.api.statistics.StatisticsReport.StatisticsReportMode;

/**
 * The streaming {@link JsonEventReader} against the tree reader it replaced
 * ({@link JsonEventReaderStreamingTreeOracle}, that reader's code unchanged): on every input both
 * refuse with the same reason and the same message, or both accept and make the same sink calls in
 * the same order. The inputs are generated as text, so that they can hold what a tree cannot: the
 * same key twice (plainly, or once with a letter written as a {@code \\u} escape), numbers in every form JSON
 * allows and some it does not, nesting near the depth limit, and bytes changed, cut or added.
 *
 * <p>The configurations are invented: the tile service of the other reader tests, the parcel router
 * of {@link JsonEventReaderTest}, and a fictional kiosk whose pointers go into nested objects and
 * arrays ({@code /ctx/exp}, {@code /who/0}, {@code /items/1/amount}), use the escapes ({@code /a~1b}
 * for the key "a/b", {@code /m~0n} for "m~n"), the empty key ({@code /}), an index with a leading
 * zero ({@code /items/00}, a member name only, RFC 6901 §4), a pointer below another one
 * ({@code /items/0/paid/x}), and, built in code since configuration files refuse it, the empty
 * pointer (the whole event, RFC 6901 §5) and no unit at all.
 */
// Source: every expected outcome here is the tree reader oracle's (the reader as it was before the
// streaming rewrite); where an example also names the outcome, it is the oracle's, and the JSON facts it
// relies on are RFC 8259's (grammar, §4 objects, §6 numbers, §8.1 byte order mark), the pointer facts
// RFC 6901's and the encoding facts RFC 3629's and Unicode's (§3.9, Table 3-7).
class JsonEventReaderStreamingDifferentialTest {

    /** One configuration, read by both readers. */
    private record Pair(String name, JsonEventReader streaming, JsonEventReaderStreamingTreeOracle tree,
                        JsonEventReaderStreamingTreeOracle lastWins) {
        Pair(String name, InterimConfig config) {
            this(name, new JsonEventReader(config.catalog()), new JsonEventReaderStreamingTreeOracle(config),
                    new JsonEventReaderStreamingTreeOracle(config, false));
        }
    }

    /** What a read ended in: the refusal (reason and message) or null, and every sink call made. */
    private record Result(Reason reason, String message, List<String> calls) {
        @Override
        public String toString() {
            return reason == null ? "accepted " + calls : "refused " + reason + " (" + message + ")" + (calls.isEmpty() ? "" : " after " + calls);
        }
    }

    static final String KIOSK = """
            kafka:
              input_topics: [kiosk.events]
              input_keyed_by_unit: true
            events:
              experiment: /ctx/exp
              arm: /ctx/arm
              unit: /who/0
            experiments:
              - id: kiosk-layout
                assignment: event
                control: grid
                treatments: [list, carousel]
                metrics:
                  - {name: paid, kind: unit-rate, role: primary, worse: lower, field: /items/0/paid,
                     counts_if: {equals: true}, max_per_arm: 1000}
                  - {name: spend, kind: unit-total, role: guardrail, worse: lower, field: /items/1/amount,
                     range: {min: 0}, max_per_arm: 1000}
                  - {name: slash, kind: event-mean, role: guardrail, worse: higher, field: /a~1b,
                     range: {min: -5, max: 5}, max_per_arm: 1000}
                  - {name: tilde, kind: event-rate, role: guardrail, worse: higher, field: /m~0n,
                     counts_if: {in: [gold, 2, 2.5, true]}, max_per_arm: 1000}
                  - {name: blank, kind: event-rate, role: guardrail, worse: higher, field: /,
                     counts_if: {below: 10}, max_per_arm: 1000}
              - id: kiosk-audio
                assignment: event
                control: quiet
                treatments: [loud]
                metrics:
                  - {name: level, kind: event-mean, role: guardrail, worse: higher, field: /items/0/paid,
                     max_per_arm: 1000}
                  - {name: padded, kind: event-rate, role: guardrail, worse: higher, field: /items/00,
                     counts_if: {not_in: [x, 0]}, max_per_arm: 1000}
                  - {name: whole, kind: event-mean, role: guardrail, worse: higher, field: /timing,
                     max_per_arm: 1000}
                  - {name: inner, kind: event-rate, role: guardrail, worse: higher, field: /items/0/paid/x,
                     counts_if: {not_equals: 1}, max_per_arm: 1000}
                  - {name: second, kind: event-rate, role: guardrail, worse: higher, field: /who/1,
                     counts_if: {at_least: 500}, max_per_arm: 1000}
                  - {name: zero, kind: event-rate, role: guardrail, worse: higher, field: /0,
                     counts_if: {equals: zero}, max_per_arm: 1000}
            """;

    private static final List<Pair> PAIRS = pairs();

    private static List<Pair> pairs() {
        InterimConfig kiosk = ConfigLoader.parseWithoutSecrets(KIOSK);
        List<Pair> pairs = new ArrayList<>();
        pairs.add(new Pair("tile", TileEvents.config()));
        pairs.add(new Pair("router", JsonEventReaderTest.config()));
        pairs.add(new Pair("kiosk", kiosk));
        // No unit mapped (kiosk-layout's per-unit metrics then refuse every event), and two metrics of
        // kiosk-audio moved to the empty pointer: the whole event, always an object.
        Map<String, Map<String, MetricSource>> moved = Map.of("kiosk-audio", Map.of(
                "level", new MetricSource.Value(JsonPointer.empty()),
                "padded", new MetricSource.Counted(JsonPointer.empty(),
                        ((MetricSource.Counted) source(kiosk, "kiosk-audio", "padded")).countsIf())));
        pairs.add(new Pair("kiosk-no-unit", changed(kiosk, new EventMapping(kiosk.events().experiment(), kiosk.events().arm(),
                Optional.empty(), Optional.empty()), moved)));
        pairs.add(new Pair("kiosk-unit-is-event", changed(kiosk, new EventMapping(kiosk.events().experiment(),
                kiosk.events().arm(), Optional.of(JsonPointer.empty()), Optional.empty()), Map.of())));
        pairs.add(new Pair("kiosk-arm-at-unit", changed(kiosk, new EventMapping(JsonPointer.compile("/ctx/exp"),
                JsonPointer.compile("/who/0"), Optional.of(JsonPointer.compile("/who/0")), Optional.empty()), Map.of())));
        return pairs;
    }

    private static MetricSource source(InterimConfig config, String experiment, String metric) {
        return config.experiment(experiment).orElseThrow().sources().get(metric);
    }

    private static InterimConfig changed(InterimConfig c, EventMapping events, Map<String, Map<String, MetricSource>> sources) {
        List<MappedExperiment> experiments = new ArrayList<>();
        for (MappedExperiment e : c.experiments()) {
            Map<String, MetricSource> s = new HashMap<>(e.sources());
            s.putAll(sources.getOrDefault(e.definition().id(), Map.of()));
            experiments.add(new MappedExperiment(e.definition(), s));
        }
        return new InterimConfig(c.kafka(), events, c.http(), c.webhook(), experiments);
    }

    private static Result result(EventReader reader, byte[] bytes) {
        return result(reader, reader instanceof JsonEventReader j ? j.catalog() : ((JsonEventReaderStreamingTreeOracle) reader).catalog(),
                bytes);
    }

    private static Result result(EventReader reader, dev.interim.events.Catalog catalog, byte[] bytes) {
        RecordingSink sink = new RecordingSink(catalog);
        try {
            reader.read(bytes, sink);
            return new Result(null, null, List.copyOf(sink.calls));
        } catch (BadEventException e) {
            return new Result(e.reason(), e.getMessage(), List.copyOf(sink.calls));
        } catch (RuntimeException | StackOverflowError e) {
            return new Result(null, "threw " + e, List.copyOf(sink.calls));
        }
    }

    /** Both readers, every configuration: the same result. Returns the streaming results, by configuration. */
    private static List<Result> assertSameEverywhere(byte[] bytes) {
        List<Result> results = new ArrayList<>();
        for (Pair pair : PAIRS) {
            Result tree = result(pair.tree(), bytes);
            Result streaming = result(pair.streaming(), bytes);
            if (isDuplicate(tree) && isDuplicate(streaming)) {
                // Both refuse a repeated key; the tree reader names the first repeat anywhere, the
                // streaming reader the first on a path it reads.
                assertThat(streaming.calls()).isEmpty();
                results.add(streaming);
                continue;
            }
            if (isDuplicate(tree)) {
                // A key repeated where nothing reads (docs/configuration.md): the streaming reader reads
                // the event as the tree reader reads it when it lets a repeat pass.
                tree = result(pair.lastWins(), bytes);
            }
            assertThat(streaming).as("%s: %s", pair.name(), TileEvents.show(bytes)).isEqualTo(tree);
            assertThat(streaming.reason() != null || streaming.message() == null)
                    .as("%s: %s %s", pair.name(), TileEvents.show(bytes), streaming).isTrue();   // refused or accepted, nothing thrown
            results.add(streaming);
        }
        return results;
    }

    private static boolean isDuplicate(Result r) {
        return r.reason() == Reason.NOT_JSON && r.message().startsWith("not readable JSON: Duplicate field '");
    }

    private static Result read(String pair, String text) {
        byte[] bytes = text.getBytes(StandardCharsets.UTF_8);
        assertSameEverywhere(bytes);
        return result(PAIRS.stream().filter(p -> p.name().equals(pair)).findFirst().orElseThrow().streaming(), bytes);
    }

    // ---- properties --------------------------------------------------------------------------------

    @Property(tries = 3000)
    @StatisticsReport(StatisticsReportMode.OFF)   // the coverage checks below still run
    void generatedEventsAreReadAsTheTreeReaderReadThem(@ForAll("events") byte[] bytes) {
        List<Result> results = assertSameEverywhere(bytes);
        for (int i = 0; i < PAIRS.size(); i++) {
            Result r = results.get(i);
            Statistics.label(PAIRS.get(i).name()).collect(r.reason() == null ? "accepted" : r.reason());
        }
        // The generator must reach both outcomes in each configuration that can accept at all.
        for (String name : List.of("tile", "kiosk", "router")) {
            Statistics.label(name).coverage(c -> {
                c.check("accepted").percentage(p -> p > 3);
                c.check(Reason.NOT_JSON).percentage(p -> p > 3);
                c.check(Reason.WRONG_TYPE).percentage(p -> p > 1);
            });
        }
    }

    @Property(tries = 1000)
    void eventsChangedByteByByteAreReadAsTheTreeReaderReadThem(@ForAll("events") byte[] bytes, @ForAll Random random) {
        assertSameEverywhere(Mutations.mutate(bytes, random));
    }

    @Property(tries = 300)
    void eventsInOtherEncodingsAreReadAsTheTreeReaderReadThem(@ForAll("events") byte[] bytes,
            @ForAll("otherEncodings") Charset charset) {
        // Jackson's own detection (RFC 4627 §3) takes UTF-16 and UTF-32 input: the tree reader read it too.
        assertSameEverywhere(new String(bytes, StandardCharsets.UTF_8).getBytes(charset));
    }

    @Provide
    Arbitrary<byte[]> events() {
        return Arbitraries.randomValue(random -> new EventText(random).event().getBytes(StandardCharsets.UTF_8));
    }

    @Provide
    Arbitrary<Charset> otherEncodings() {
        return Arbitraries.of(StandardCharsets.UTF_16BE, StandardCharsets.UTF_16LE, StandardCharsets.UTF_16,
                Charset.forName("UTF-32BE"), Charset.forName("UTF-32LE"));
    }

    // ---- examples: each also names what the tree reader did ------------------------------------------

    private static final String TILE = "{\"exp\":\"tile-cache\",\"arm\":\"lru\",";

    @Example
    void anIntegerUnitIsWrittenAsTheTreeWroteIt() {
        // JsonNode.asText() of the node the tree held: -0 is the int 0 (RFC 8259 §6 allows "-0").
        assertThat(read("tile", TILE + "\"session\":-0}").calls()).containsExactly("exposure tile-cache lru 0");
        assertThat(read("tile", TILE + "\"session\":-000}").reason()).isEqualTo(Reason.NOT_JSON);
        for (String n : List.of("2147483647", "2147483648", "-9223372036854775808", "9223372036854775808",
                "123456789012345678901234567890123456789012345678901234567890", "-" + "9".repeat(100))) {
            assertThat(read("tile", TILE + "\"session\":" + n + "}").calls()).containsExactly("exposure tile-cache lru " + n);
        }
        for (String n : List.of("1.0", "1e2", "-0.0", "0E0")) {
            assertThat(read("tile", TILE + "\"session\":" + n + "}").reason()).as(n).isEqualTo(Reason.WRONG_TYPE);
        }
    }

    @Example
    void pointersReadNestedMembersArrayElementsAndEscapedNames() {
        String ctx = "{\"ctx\":{\"arm\":\"grid\",\"exp\":\"kiosk-layout\"},";
        Result r = read("kiosk", ctx + "\"who\":[\"k-7\",1],\"items\":[{\"paid\":true},{\"amount\":12.5}],"
                + "\"a/b\":-2,\"m~n\":2.50,\"\":9.99}");
        assertThat(r.calls()).containsExactly("exposure kiosk-layout grid k-7", "outcome kiosk-layout grid k-7 paid true",
                "value kiosk-layout grid k-7 spend 12.5", "value kiosk-layout grid k-7 slash -2.0",
                "outcome kiosk-layout grid k-7 tilde true", "outcome kiosk-layout grid k-7 blank true");
        // An index token selects a member of that name in an object (RFC 6901 §4).
        r = read("kiosk", ctx + "\"who\":{\"0\":\"k-8\"},\"items\":{\"1\":{\"amount\":3},\"0\":{\"paid\":0}}}");
        assertThat(r.calls()).containsExactly("exposure kiosk-layout grid k-8", "outcome kiosk-layout grid k-8 paid false",
                "value kiosk-layout grid k-8 spend 3.0");
        // "00" is not an index: it finds nothing in an array, and the member "00" in an object.
        String audio = "{\"ctx\":{\"exp\":\"kiosk-audio\",\"arm\":\"loud\"},\"who\":[\"k-1\"],";
        assertThat(read("kiosk", audio + "\"items\":[\"x\"]}").calls()).containsExactly("exposure kiosk-audio loud k-1");
        assertThat(read("kiosk", audio + "\"items\":{\"00\":\"y\"}}").calls())
                .containsExactly("exposure kiosk-audio loud k-1", "outcome kiosk-audio loud k-1 padded true");
        // A pointer below a scalar, or past the end of an array, finds nothing.
        assertThat(read("kiosk", audio + "\"items\":[7],\"timing\":null}").calls()).containsExactly("exposure kiosk-audio loud k-1");
        assertThat(read("kiosk", audio + "\"items\":[{\"paid\":7}]}").calls())
                .containsExactly("exposure kiosk-audio loud k-1", "value kiosk-audio loud k-1 level 7.0");
        assertThat(read("kiosk", audio + "\"items\":[{\"paid\":{\"x\":2}}]}").reason()).isEqualTo(Reason.WRONG_TYPE);
        assertThat(read("kiosk", "{\"ctx\":{\"exp\":\"kiosk-audio\",\"arm\":\"loud\"},\"who\":[]}").reason())
                .isNull();
    }

    @Example
    void theEmptyPointerIsTheWholeEvent() {
        String audio = "{\"ctx\":{\"exp\":\"kiosk-audio\",\"arm\":\"loud\"},\"who\":[\"k-1\"]}";
        Result r = read("kiosk-no-unit", audio);
        assertThat(r.reason()).isEqualTo(Reason.WRONG_TYPE);
        assertThat(r.message()).isEqualTo("level:  must be a number");
        r = read("kiosk-unit-is-event", audio);
        assertThat(r.reason()).isEqualTo(Reason.WRONG_TYPE);
        assertThat(r.message()).isEqualTo("unit at  must be text or an integer");
        r = read("kiosk-no-unit", "{\"ctx\":{\"exp\":\"kiosk-layout\",\"arm\":\"grid\"}}");
        assertThat(r.message()).isEqualTo("no unit at (unmapped): experiment 'kiosk-layout' has per-unit metrics");
    }

    @Example
    void duplicateKeysAreRefusedWhereTheReaderReadsAndPassElsewhere() {
        // RFC 8259 §4: names SHOULD be unique. This reader holds the keys it reads to it (a key on a
        // pointer's path, at any depth: the event would say two things there); repeats where nothing
        // reads change nothing that is read, and are not looked for.
        for (String dup : List.of("\"timing\":{\"ms\":1,\"ms\":1}", "\"timing\":{\"ms\":1},\"timing\":{}")) {
            Result r = read("tile", TILE + "\"session\":\"s\"," + dup + "}");
            assertThat(r.reason()).as(dup).isEqualTo(Reason.NOT_JSON);
            assertThat(r.message()).as(dup).startsWith("not readable JSON: Duplicate field '");
        }
        for (String dup : List.of("\"extra\":{\"a\":1,\"a\":1}", "\"extra\":[0,{\"a\":[],\"b\":{},\"a\":null}]",
                "\"extra\":{\"a\":{\"b\":{\"c\":1,\"\\u0063\":2}}}", "\"extra\":1,\"extra\":1",
                "\"timing\":{\"ms\":1,\"other\":2,\"other\":3}")) {
            Result r = read("tile", TILE + "\"session\":\"s\"," + dup + "}");
            assertThat(r.reason()).as(dup).isNull();
        }
        assertThat(read("kiosk", "{\"ctx\":{\"exp\":\"kiosk-audio\",\"arm\":\"loud\",\"arm\":\"quiet\"}}").reason())
                .isEqualTo(Reason.NOT_JSON);
    }

    @Example
    void whatIsSkippedIsCheckedAsWhatIsRead() {
        String tile = TILE + "\"session\":\"s\",\"extra\":";
        // Nesting: 64 levels in all (the event is one) are allowed, 65 are not.
        assertThat(read("tile", tile + "[".repeat(63) + "]".repeat(63) + "}").reason()).isNull();
        assertThat(read("tile", tile + "[".repeat(64) + "]".repeat(64) + "}").reason()).isEqualTo(Reason.NOT_JSON);
        assertThat(read("tile", tile + "{\"a\":".repeat(63) + "1" + "}".repeat(63) + "}").reason()).isNull();
        assertThat(read("tile", tile + "{\"a\":".repeat(64) + "1" + "}".repeat(64) + "}").reason()).isEqualTo(Reason.NOT_JSON);
        // Numbers: at most 100 digits, fraction and exponent included.
        assertThat(read("tile", tile + "9".repeat(100) + "}").reason()).isNull();
        assertThat(read("tile", tile + "-" + "9".repeat(100) + "}").reason()).isNull();
        assertThat(read("tile", tile + "9".repeat(101) + "}").reason()).isEqualTo(Reason.NOT_JSON);
        assertThat(read("tile", tile + "1." + "0".repeat(99) + "}").reason()).isNull();
        assertThat(read("tile", tile + "1." + "0".repeat(99) + "e1}").reason()).isEqualTo(Reason.NOT_JSON);
        // Strings (RFC 8259 §7): control characters escaped, escapes well formed. An unpaired surrogate
        // escape is well-formed JSON (§8.2 leaves it to the reader): in a value it is refused only in the
        // experiment, arm and unit; in a key the parser refuses it, read or skipped.
        assertThat(read("tile", tile + "\"a\tb\"}").reason()).isEqualTo(Reason.NOT_JSON);
        assertThat(read("tile", tile + "\"a\\xb\"}").reason()).isEqualTo(Reason.NOT_JSON);
        assertThat(read("tile", tile + "\"a\\u12\"}").reason()).isEqualTo(Reason.NOT_JSON);
        assertThat(read("tile", tile + "\"a\\ud800\"}").reason()).isNull();
        assertThat(read("tile", tile + "[\"\\udc00\",{\"k\":\"\\ud800\"}]}").reason()).isNull();
        assertThat(read("tile", tile + "{\"k\\ud800\":1}}").reason()).isEqualTo(Reason.NOT_JSON);
        // Literals and numbers JSON does not have (RFC 8259 §3, §6).
        for (String bad : List.of("NaN", "Infinity", "01", "1.", ".5", "+1", "tru", "nul", "[1,]", "{\"a\":1,}", "'a'")) {
            assertThat(read("tile", tile + bad + "}").reason()).as(bad).isEqualTo(Reason.NOT_JSON);
        }
    }

    @Example
    void anIllFormedByteSequenceIsFoundWhereverItIs() {
        // The ASCII prefix is scanned eight bytes at a time: a sequence is put at every offset of
        // events of several lengths, so that it falls at every place in a word and in the tail.
        // Ill-formed per RFC 3629 §3 and Unicode §3.9 Table 3-7: a lone continuation byte, an overlong
        // form, an encoded surrogate, a lead byte cut short; U+00E9 and U+1F600 are well-formed.
        List<byte[]> illFormed = List.of(new byte[] {(byte) 0x80}, new byte[] {(byte) 0xC0, (byte) 0x80},
                new byte[] {(byte) 0xED, (byte) 0xA0, (byte) 0x80}, new byte[] {(byte) 0xF0, (byte) 0x9F});
        List<byte[]> wellFormed = List.of("\u00e9".getBytes(StandardCharsets.UTF_8), "\ud83d\ude00".getBytes(StandardCharsets.UTF_8));
        for (int padding = 0; padding < 9; padding++) {
            byte[] event = (TILE + "\"session\":\"" + "s".repeat(padding) + "\"}").getBytes(StandardCharsets.UTF_8);
            for (int at = 0; at <= event.length; at++) {
                for (byte[] bad : illFormed) {
                    byte[] bytes = inserted(event, at, bad);
                    assertSameEverywhere(bytes);
                    Result r = result(PAIRS.get(0).streaming(), bytes);
                    assertThat(r.reason()).isEqualTo(Reason.NOT_JSON);
                    assertThat(r.message()).as(TileEvents.show(bytes)).startsWith("not UTF-8");
                }
                for (byte[] good : wellFormed) {
                    assertSameEverywhere(inserted(event, at, good));
                }
            }
        }
    }

    private static byte[] inserted(byte[] bytes, int at, byte[] what) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        out.write(bytes, 0, at);
        out.writeBytes(what);
        out.write(bytes, at, bytes.length - at);
        return out.toByteArray();
    }

    @Example
    void onlyAnObjectFollowedByWhitespaceIsAnEvent() {
        for (String text : List.of("", " \n", "null", "[]", "5", "\"tile-cache\"", "[] x", "5 6", "{} {}", "{}]",
                "{} 1", "{} null", "{} \"s\"", "{}\u0000", "{}//", "{\"a\":1} ]", "\ufeff{}", "\ufeff\ufeff{}")) {
            Result r = read("tile", text);
            assertThat(r.reason()).as(text).isIn(Reason.NOT_JSON, Reason.MISSING_FIELD);
        }
        assertThat(read("tile", TILE + "\"session\":\"s\"} \r\n\t").reason()).isNull();
        assertThat(read("tile", TILE + "\"session\":\"s\"}{}").message())
                .startsWith("not readable JSON: Trailing token (of type START_OBJECT) found after value");
        assertThat(read("tile", "[]").message()).isEqualTo("an event must be a JSON object");
    }

    @Example
    void faultsAreFoundInTheSameOrderWhereverTheMembersAre() {
        // An unknown arm comes before a bad metric, an unknown experiment before a missing arm.
        for (String text : List.of("{\"kb\":\"big\",\"arm\":\"gif\",\"exp\":\"tile-format\"}",
                "{\"exp\":\"tile-format\",\"kb\":\"big\",\"arm\":\"gif\"}")) {
            assertThat(read("tile", text).reason()).isEqualTo(Reason.UNKNOWN_ARM);
        }
        assertThat(read("tile", "{\"kb\":[],\"exp\":\"tile-x\"}").reason()).isEqualTo(Reason.UNKNOWN_EXPERIMENT);
        // The metrics in their configured order: errors (/status) before latency (/timing/ms).
        Result r = read("tile", "{\"timing\":{\"ms\":-1},\"status\":\"500\",\"session\":\"s\",\"arm\":\"arc\",\"exp\":\"tile-cache\"}");
        assertThat(r.message()).isEqualTo("errors: /status must be a number");
    }

    // ---- the generator -----------------------------------------------------------------------------

    /**
     * Writes events as text, drawing on the names the configurations read, so that many are accepted
     * by one of them, and on everything else JSON can hold (and sometimes what it cannot), so that
     * many are refused, each for its own reason.
     */
    static final class EventText {
        private static final List<String> KEYS = List.of("exp", "arm", "session", "status", "timing", "ms", "cache",
                "bytes", "result", "kb", "ctx", "who", "items", "paid", "amount", "a/b", "m~n", "", "0", "1", "00", "x",
                "user", "step", "extra", "tags");
        private static final List<String> NAMES = List.of("tile-cache", "tile-format", "kiosk-layout", "kiosk-audio",
                "router-canary", "lru", "arc", "tinylfu", "png", "webp", "grid", "list", "carousel", "quiet", "loud", "old",
                "new", "hit", "miss", "ok", "error", "booked", "gold", "x", "zero", "", "LRU", "k-1", "s-1", "u1");
        private static final List<String> NUMBERS = List.of("0", "-0", "1", "-1", "2", "2.5", "2.50", "9.99", "10", "12.5",
                "500", "500.0", "5e2", "499.999", "-5", "5", "5.000001", "60000", "60000.0000001", "2147483647",
                "2147483648", "-2147483649", "9223372036854775807", "9223372036854775808", "-9223372036854775809",
                "1e100", "-1e100", "1.0000000000000002e100", "1e101", "1e308", "1e309", "-1e400", "1e-400", "4.9e-324",
                "0.0", "-0.0", "0e0", "0E+0", "1E-2", "123456789012345678901234567890");
        private static final List<String> NOT_JSON = List.of("NaN", "Infinity", "-Infinity", "01", "1.", ".5", "+1",
                "1e", "0x10", "tru", "nul", "'s'", "\"\\x\"", "\"\\u12\"", "\"a\u0001b\"", "[1,]", "{\"a\":1,}", "{,}", "]",
                "}", ":", "\"open", "-");

        private final Random random;
        private final StringBuilder out = new StringBuilder();
        /** Whether this event may hold text JSON does not allow. */
        private final boolean broken;

        EventText(Random random) {
            this.random = random;
            this.broken = random.nextInt(6) == 0;
        }

        private boolean chance(int percent) {
            return random.nextInt(100) < percent;
        }

        private <T> T any(List<T> list) {
            return list.get(random.nextInt(list.size()));
        }

        private void space() {
            if (chance(20)) {
                out.append(any(List.of(" ", "\n", "\t", "\r\n", "  ")));
            }
        }

        String event() {
            space();
            if (chance(4)) {
                value(0);                                    // anything but an object, mostly
            } else {
                members(eventMembers(), 0);
            }
            space();
            if (broken && chance(30)) {
                out.append(any(List.of("x", "{}", "[]", "1", "null", ",", "}", "\"s\"", " {\"exp\":\"tile-cache\"}")));
            }
            return out.toString();
        }

        /** A member: its key, and what writes its value. */
        private record Member(String key, Runnable value) {}

        /** The members of an event: the fields the configurations read, each maybe absent or odd, and others. */
        private List<Member> eventMembers() {
            List<Member> members = new ArrayList<>();
            int which = random.nextInt(10);
            if (which < 4) {
                boolean layout = chance(50);
                List<String> arms = layout == chance(90) ? List.of("grid", "list", "carousel") : List.of("quiet", "loud");
                members.add(member("ctx", () -> {
                    List<Member> ctx = new ArrayList<>();
                    ctx.add(member("exp", () -> field(List.of(layout ? "kiosk-layout" : "kiosk-audio"))));
                    ctx.add(member("arm", () -> field(arms)));
                    extras(ctx, 1);
                    members(ctx, 1);
                }));
                members.add(member("who", () -> elements(List.of(this::unit, () -> field(List.of())), 1)));
                members.add(member("items", () -> {
                    if (chance(80)) {
                        elements(List.of(() -> members(List.of(member("paid", () -> field(List.of()))), 2),
                                () -> members(List.of(member("amount", () -> field(List.of()))), 2)), 1);
                    } else {
                        value(1);
                    }
                }));
                for (String key : List.of("a/b", "m~n", "", "00", "0", "timing")) {
                    members.add(member(key, () -> field(List.of())));
                }
            } else {
                boolean router = which < 6;
                String exp = router ? "router-canary" : chance(50) ? "tile-cache" : "tile-format";
                List<String> arms = switch (chance(90) ? exp : "") {
                    case "router-canary" -> List.of("old", "new");
                    case "tile-cache" -> List.of("lru", "arc", "tinylfu");
                    case "tile-format" -> List.of("png", "webp");
                    default -> List.of("lru", "png", "old", "grid", "LRU");
                };
                members.add(member("exp", () -> field(List.of(exp))));
                members.add(member("arm", () -> field(arms)));
                members.add(member(router ? "user" : "session", this::unit));
                for (String key : router ? List.of("status", "ms", "step", "amount") : List.of("status", "cache", "bytes", "result", "kb")) {
                    members.add(member(key, () -> field(key.equals("step") ? List.of("booked", "paid") : key.equals("cache")
                            ? List.of("hit", "miss") : key.equals("result") ? List.of("ok", "error") : List.of())));
                }
                if (!router) {
                    members.add(member("timing", () -> {
                        if (chance(80)) {
                            members(List.of(member("ms", () -> field(List.of()))), 1);
                        } else {
                            value(1);
                        }
                    }));
                }
            }
            List<Member> present = new ArrayList<>();
            for (int i = 0; i < members.size(); i++) {
                if (i < 3 ? chance(92) : chance(55)) {       // experiment, arm, unit (ctx, who, items) are nearly always there
                    present.add(members.get(i));
                }
            }
            extras(present, 0);
            return present;
        }

        private void extras(List<Member> members, int depth) {
            int n = chance(50) ? 0 : random.nextInt(4);
            for (int i = 0; i < n; i++) {
                members.add(member(any(KEYS), () -> value(depth + 1)));
            }
        }

        private Member member(String key, Runnable value) {
            return new Member(key, value);
        }

        private void member(Member m) {
            key(m.key());
            space();
            out.append(':');
            space();
            m.value().run();
        }

        /** Members in random order, each key once; sometimes one of them twice, plainly or through an escape. */
        private void members(List<Member> members, int depth) {
            Map<String, Member> byKey = new java.util.LinkedHashMap<>();
            members.forEach(m -> byKey.putIfAbsent(m.key(), m));
            List<Member> list = new ArrayList<>(byKey.values());
            java.util.Collections.shuffle(list, random);
            if (!list.isEmpty() && chance(2)) {
                list.add(random.nextInt(list.size() + 1), list.get(random.nextInt(list.size())));
            }
            out.append('{');
            for (int i = 0; i < list.size(); i++) {
                if (i > 0) {
                    out.append(',');
                }
                space();
                member(list.get(i));
                space();
            }
            if (broken && chance(5)) {
                out.append(',');
            }
            out.append('}');
        }

        private void elements(List<Runnable> elements, int depth) {
            out.append('[');
            int n = chance(15) ? random.nextInt(elements.size() + 1) : elements.size();
            for (int i = 0; i < n; i++) {
                if (i > 0) {
                    out.append(',');
                }
                space();
                elements.get(i).run();
                space();
            }
            if (chance(20)) {
                out.append(n > 0 ? "," : "");
                value(depth + 1);
            }
            out.append(']');
        }

        /** A field's value: mostly one of {@code likely} (text) or a number, else anything. */
        private void field(List<String> likely) {
            int dice = random.nextInt(100);
            if (!likely.isEmpty() && dice < 85) {
                string(any(likely));
            } else if (dice < 90) {
                out.append(any(NUMBERS));
            } else if (dice < 93) {
                out.append(any(List.of("true", "false", "null")));
            } else {
                value(1);
            }
        }

        private void unit() {
            int dice = random.nextInt(100);
            if (dice < 55) {
                string(any(NAMES));
            } else if (dice < 70) {
                string(text(1 + random.nextInt(12)));
            } else if (dice < 90) {
                out.append(any(NUMBERS));
            } else if (dice < 92) {
                string("u".repeat(1020 + random.nextInt(8)));
            } else {
                value(1);
            }
        }

        /** Any JSON value, nested a few levels, or now and then past the nesting limit. */
        private void value(int depth) {
            int dice = random.nextInt(100);
            if (broken && dice < 8) {
                out.append(any(NOT_JSON));
            } else if (dice < 30) {
                string(chance(50) ? any(NAMES) : text(random.nextInt(10)));
            } else if (dice < 55) {
                out.append(chance(90) ? any(NUMBERS) : number());
            } else if (dice < 65) {
                out.append(any(List.of("true", "false", "null")));
            } else if (dice < 67) {
                int levels = 56 + random.nextInt(12);        // around the limit of 64 levels in all
                boolean objects = chance(50);
                out.append((objects ? "{\"a\":" : "[").repeat(levels)).append(objects ? "0" : "")
                        .append((objects ? "}" : "]").repeat(levels));
            } else if (depth > 3 || dice < 84) {
                List<Member> members = new ArrayList<>();
                extras(members, depth);
                members(members, depth);
            } else {
                List<Runnable> elements = new ArrayList<>();
                for (int i = random.nextInt(4); i > 0; i--) {
                    elements.add(() -> value(depth + 1));
                }
                elements(elements, depth);
            }
        }

        /** A number as JSON writes it, up to a little over the 100 digits allowed. */
        private String number() {
            StringBuilder n = new StringBuilder(chance(30) ? "-" : "");
            int digits = chance(10) ? 95 + random.nextInt(10) : 1 + random.nextInt(25);
            n.append(chance(20) ? '0' : (char) ('1' + random.nextInt(9)));
            if (n.charAt(n.length() - 1) != '0') {
                for (int i = 1; i < digits; i++) {
                    n.append((char) ('0' + random.nextInt(10)));
                }
            }
            if (chance(40)) {
                n.append('.');
                for (int i = 1 + random.nextInt(20); i > 0; i--) {
                    n.append((char) ('0' + random.nextInt(10)));
                }
            }
            if (chance(30)) {
                n.append(any(List.of("e", "E", "e+", "e-", "E-"))).append(random.nextInt(chance(10) ? 1000 : 20));
            }
            return n.toString();
        }

        private void key(String key) {
            string(key, false);
        }

        private void string(String text) {
            string(text, true);
        }

        /**
         * A JSON string of {@code text}, some characters escaped (the same text, written otherwise), and
         * now and then an unpaired surrogate escape: Jackson refuses one in a key, so mostly in values.
         */
        private void string(String text, boolean value) {
            out.append('"');
            boolean escape = chance(15);
            for (int i = 0; i < text.length(); i++) {
                char c = text.charAt(i);
                if (c == '"' || c == '\\') {
                    out.append('\\').append(c);
                } else if (c < 0x20 || (escape && chance(30))) {
                    out.append(String.format("\\u%04x", (int) c));
                } else {
                    out.append(c);
                }
            }
            if (chance(value ? 3 : 0) || chance(1) && chance(20)) {
                out.append(String.format("\\u%04X", 0xd800 + random.nextInt(0x800)));
            }
            out.append('"');
        }

        /** Text of any characters: ASCII mostly, control characters, others of the BMP, some beyond it. */
        private String text(int length) {
            StringBuilder s = new StringBuilder();
            for (int i = 0; i < length; i++) {
                int dice = random.nextInt(100);
                if (dice < 70) {
                    s.append((char) (' ' + random.nextInt(95)));
                } else if (dice < 78) {
                    s.append((char) random.nextInt(0x20));
                } else if (dice < 92) {
                    char c = (char) (0x80 + random.nextInt(0xff80));
                    s.append(Character.isSurrogate(c) ? 'é' : c);
                } else {
                    s.appendCodePoint(0x10000 + random.nextInt(0x100000));
                }
            }
            return s.toString();
        }
    }

    /** Byte-level changes: one byte replaced, inserted or removed, a cut, a byte order mark, garbage after. */
    static final class Mutations {
        private Mutations() {}

        static byte[] mutate(byte[] bytes, Random random) {
            ByteArrayOutputStream out = new ByteArrayOutputStream();
            int at = bytes.length == 0 ? 0 : random.nextInt(bytes.length);
            switch (random.nextInt(6)) {
                case 0 -> {                                   // replace a byte, often with one JSON gives meaning to
                    out.write(bytes, 0, at);
                    out.write(random.nextBoolean() ? "{}[],:\"\\ 0-e.".charAt(random.nextInt(13)) : random.nextInt(256));
                    out.write(bytes, Math.min(at + 1, bytes.length), Math.max(0, bytes.length - at - 1));
                }
                case 1 -> {                                   // insert one
                    out.write(bytes, 0, at);
                    out.write(random.nextBoolean() ? "{}[],:\"\\ 0-e.".charAt(random.nextInt(13)) : random.nextInt(256));
                    out.write(bytes, at, bytes.length - at);
                }
                case 2 -> {                                   // remove one
                    out.write(bytes, 0, at);
                    out.write(bytes, Math.min(at + 1, bytes.length), Math.max(0, bytes.length - at - 1));
                }
                case 3 -> out.write(bytes, 0, at);            // cut
                case 4 -> {                                   // a byte order mark (RFC 8259 §8.1), at the start or not
                    int where = random.nextBoolean() ? 0 : at;
                    out.write(bytes, 0, where);
                    out.writeBytes(new byte[] {(byte) 0xEF, (byte) 0xBB, (byte) 0xBF});
                    out.write(bytes, where, bytes.length - where);
                }
                default -> {                                  // something after the event
                    out.writeBytes(bytes);
                    out.writeBytes(List.of(" ", "\n", "x", "{}", "[", "0", "\"", "null", "\u00e9", "/*", "\u0000")
                            .get(random.nextInt(11)).getBytes(StandardCharsets.UTF_8));
                }
            }
            return out.toByteArray();
        }
    }
}
