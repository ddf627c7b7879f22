package dev.interim.stream;

import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.core.StreamReadConstraints;
import com.fasterxml.jackson.core.StreamReadFeature;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.json.JsonMapper;
import dev.interim.events.EventMapping;
import dev.interim.events.MappedExperiment;
import dev.interim.config.InterimConfig;
import dev.interim.events.MetricSource;
import dev.interim.events.ValueRange;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.MetricDefinition;
import dev.interim.stream.BadEventException.Reason;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.charset.CharacterCodingException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;

/**
 * The tree reader oracle: {@link JsonEventReader} as it was before it read events in one streaming
 * pass, kept unchanged apart from its name (it parses the whole event with
 * {@code ObjectMapper.readTree} and then looks the configured JSON Pointers up with
 * {@code JsonNode.at}). {@link JsonEventReaderStreamingDifferentialTest} checks that the streaming
 * reader decides every event exactly as this one does: same refusal, same reason, same message,
 * same sink calls.
 *
 * <p>What it reads, as its own documentation said: JSON events through the configured JSON
 * Pointers: experiment, arm, optional unit, and each metric's field. RFC 8259, strictly: one object
 * and nothing after it but whitespace, each key once in its object, UTF-8 well-formed (Unicode
 * §3.9, Table 3-7; one leading byte order mark allowed, §8.1); experiment, arm and unit free of
 * unpaired surrogate escapes.
 */
final class JsonEventReaderStreamingTreeOracle implements EventReader {
    /** Events above this size are refused before parsing. */
    public static final int MAX_BYTES = 1 << 20;
    /**
     * The largest magnitude a mean's or total's value may have. The tallies keep sums of squared
     * deviations in doubles: below 1e100 a unit's total over 2^63 events, squared and summed over
     * 2^63 units, stays far under Double.MAX_VALUE (about 1.8e308), so no accepted value can make them
     * overflow (which they refuse with an exception that would stop the tally stage).
     */
    public static final double MAX_MAGNITUDE = 1e100;
    /**
     * The longest unit id, in UTF-16 characters. Every unit is held in memory and written as a key to
     * the units topic; an id near the record size limit would make that write fail.
     */
    public static final int MAX_UNIT_LENGTH = 1024;
    private static final int MAX_DEPTH = 64;

    private final ObjectMapper json;
    private final EventMapping mapping;
    private final Map<String, Experiment> experiments = new HashMap<>();
    private final dev.interim.events.Catalog catalog;

    private record Metric(String name, MetricSource source) {}

    private record Experiment(ExperimentDefinition definition, List<Metric> metrics, boolean needsUnit) {}

    JsonEventReaderStreamingTreeOracle(InterimConfig config) {
        this(config, true);
    }

    /**
     * @param strictDuplicates refuse a key repeated anywhere (the old reader), or let the last one win
     *     (for the comparison of an event whose repeats lie where the streaming reader does not read)
     */
    JsonEventReaderStreamingTreeOracle(InterimConfig config, boolean strictDuplicates) {
        this.mapping = config.events();
        this.catalog = config.catalog().catalog();
        com.fasterxml.jackson.core.JsonFactoryBuilder builder = new com.fasterxml.jackson.core.JsonFactoryBuilder();
        builder.streamReadConstraints(StreamReadConstraints.builder()
                .maxNestingDepth(MAX_DEPTH).maxStringLength(MAX_BYTES).maxNumberLength(100).build());
        if (strictDuplicates) {
            builder.enable(StreamReadFeature.STRICT_DUPLICATE_DETECTION);
        }
        JsonFactory factory = builder.build();
        this.json = JsonMapper.builder(factory).enable(DeserializationFeature.FAIL_ON_TRAILING_TOKENS).build();
        for (MappedExperiment e : config.experiments()) {
            List<Metric> metrics = new ArrayList<>();
            for (MetricDefinition m : e.definition().metrics()) {
                metrics.add(new Metric(m.name(), e.source(m)));
            }
            experiments.put(e.definition().id(), new Experiment(e.definition(), metrics, e.definition().needsUnits()));
        }
    }

    dev.interim.events.Catalog catalog() {
        return catalog;
    }

    @Override
    public void read(byte[] value, ObservationSink sink) throws BadEventException {
        if (value.length > MAX_BYTES) {
            throw new BadEventException(Reason.TOO_LARGE, "event of " + value.length + " bytes, above " + MAX_BYTES);
        }
        if (!wellFormedUtf8(value)) {
            throw new BadEventException(Reason.NOT_JSON, "not UTF-8: the event holds an ill-formed byte sequence");
        }
        JsonNode event;
        try {
            event = json.readTree(value);
        } catch (IOException | RuntimeException e) {
            throw new BadEventException(Reason.NOT_JSON, "not readable JSON: " + firstLine(e.getMessage()));
        }
        if (event == null || !event.isObject()) {
            throw new BadEventException(Reason.NOT_JSON, "an event must be a JSON object");
        }
        String experimentId = text(event, mapping.experiment(), "experiment");
        Experiment experiment = experiments.get(experimentId);
        if (experiment == null) {
            throw new BadEventException(Reason.UNKNOWN_EXPERIMENT, "unknown experiment '" + clip(experimentId) + "'");
        }
        String arm = text(event, mapping.arm(), "arm");
        ExperimentDefinition d = experiment.definition();
        if (!d.control().equals(arm) && !d.treatments().contains(arm)) {
            throw new BadEventException(Reason.UNKNOWN_ARM, "experiment '" + experimentId + "' has no arm '" + clip(arm) + "'");
        }
        String unit = null;
        if (mapping.unit().isPresent()) {
            JsonNode u = event.at(mapping.unit().get());
            if (u.isTextual() && !isUnicode(u.textValue())) {
                throw new BadEventException(Reason.WRONG_TYPE, "unit at " + mapping.unit().get()
                        + " is not Unicode text: it holds an unpaired surrogate escape");
            }
            if (u.isTextual() || u.isIntegralNumber()) {
                unit = u.asText();
                if (unit.length() > MAX_UNIT_LENGTH) {
                    throw new BadEventException(Reason.TOO_LARGE, "unit at " + mapping.unit().get() + " is " + unit.length()
                            + " characters, above " + MAX_UNIT_LENGTH);
                }
            } else if (!u.isMissingNode() && !u.isNull()) {
                throw new BadEventException(Reason.WRONG_TYPE, "unit at " + mapping.unit().get() + " must be text or an integer");
            }
        }
        if (unit == null && experiment.needsUnit()) {
            throw new BadEventException(Reason.MISSING_FIELD, "no unit at " + mapping.unit().map(Object::toString).orElse("(unmapped)")
                    + ": experiment '" + experimentId + "' has per-unit metrics");
        }
        // Read every metric first, so that a bad field refuses the whole event.
        int n = experiment.metrics().size();
        boolean[] present = new boolean[n];
        boolean[] success = new boolean[n];
        double[] numbers = new double[n];
        for (int i = 0; i < n; i++) {
            Metric m = experiment.metrics().get(i);
            JsonNode field = event.at(m.source().field());
            if (field.isMissingNode() || field.isNull()) {
                continue;
            }
            present[i] = true;
            if (m.source() instanceof MetricSource.Counted c) {
                if (field.isContainerNode()) {
                    throw new BadEventException(Reason.WRONG_TYPE, m.name() + ": " + m.source().field()
                            + " must be a number, text or true/false, not " + (field.isArray() ? "a list" : "an object"));
                }
                if (c.countsIf().needsNumber() && !field.isNumber()) {
                    throw new BadEventException(Reason.WRONG_TYPE, m.name() + ": " + m.source().field() + " must be a number");
                }
                if (field.isNumber() && !Double.isFinite(field.doubleValue())) {
                    throw new BadEventException(Reason.NOT_FINITE, m.name() + ": " + m.source().field() + " is not finite");
                }
                success[i] = c.countsIf().test(field);
            } else {
                if (!field.isNumber()) {
                    throw new BadEventException(Reason.WRONG_TYPE, m.name() + ": " + m.source().field() + " must be a number");
                }
                double v = field.doubleValue();
                if (!Double.isFinite(v)) {
                    throw new BadEventException(Reason.NOT_FINITE, m.name() + ": " + m.source().field() + " is not finite");
                }
                if (Math.abs(v) > MAX_MAGNITUDE) {
                    throw new BadEventException(Reason.FORBIDDEN_VALUE, m.name() + ": " + m.source().field() + " is " + v
                            + ", beyond ±" + MAX_MAGNITUDE + ", the largest magnitude the tallies take");
                }
                ValueRange range = ((MetricSource.Value) m.source()).range();
                if (!range.contains(v)) {
                    throw new BadEventException(Reason.FORBIDDEN_VALUE, m.name() + ": " + m.source().field() + " is " + v
                            + ", outside its range " + range);
                }
                numbers[i] = v;
            }
        }
        int e = catalog.index(experimentId);
        int a = catalog.arm(e, arm);
        sink.exposure(e, a, unit);
        for (int i = 0; i < n; i++) {
            if (!present[i]) {
                continue;
            }
            Metric m = experiment.metrics().get(i);
            if (m.source() instanceof MetricSource.Counted) {
                sink.outcome(e, a, unit, i, success[i]);
            } else {
                sink.value(e, a, unit, i, numbers[i]);
            }
        }
    }

    private static String text(JsonNode event, JsonPointer pointer, String what) throws BadEventException {
        JsonNode node = event.at(pointer);
        if (node.isMissingNode() || node.isNull()) {
            throw new BadEventException(Reason.MISSING_FIELD, "no " + what + " at " + pointer);
        }
        if (!node.isTextual()) {
            throw new BadEventException(Reason.WRONG_TYPE, what + " at " + pointer + " must be text");
        }
        if (!isUnicode(node.textValue())) {
            throw new BadEventException(Reason.WRONG_TYPE, what + " at " + pointer
                    + " is not Unicode text: it holds an unpaired surrogate escape");
        }
        return node.textValue();
    }

    /**
     * Whether {@code value} is well-formed UTF-8. Jackson's own decoding lets overlong forms, encoded
     * surrogates and code points above U+10FFFF through, so the JDK's strict decoder checks the bytes
     * from the first non-ASCII one on; an all-ASCII event, the usual case, costs one pass.
     */
    private static boolean wellFormedUtf8(byte[] value) {
        int first = 0;
        while (first < value.length && value[first] >= 0) {
            first++;
        }
        if (first == value.length) {
            return true;
        }
        try {
            StandardCharsets.UTF_8.newDecoder().decode(ByteBuffer.wrap(value, first, value.length - first));
            return true;
        } catch (CharacterCodingException e) {
            return false;
        }
    }

    /** Whether every surrogate in {@code s} is half of a pair. */
    private static boolean isUnicode(String s) {
        for (int i = 0; i < s.length(); i++) {
            char c = s.charAt(i);
            if (Character.isHighSurrogate(c) && i + 1 < s.length() && Character.isLowSurrogate(s.charAt(i + 1))) {
                i++;
            } else if (Character.isSurrogate(c)) {
                return false;
            }
        }
        return true;
    }

    private static String clip(String s) {
        return s.length() <= 80 ? s : s.substring(0, 80) + "…";
    }

    private static String firstLine(String message) {
        if (message == null) {
            return "";
        }
        int nl = message.indexOf('\n');
        return clip(nl < 0 ? message : message.substring(0, nl));
    }
}
