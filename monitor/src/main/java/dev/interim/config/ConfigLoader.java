package dev.interim.config;

import dev.interim.events.EventMapping;
import dev.interim.events.MappedExperiment;

import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.core.StreamReadFeature;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import dev.interim.experiment.Assignment;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.StopAction;
import dev.interim.text.UserText;
import java.io.IOException;
import java.io.InputStream;
import java.nio.ByteBuffer;
import java.nio.charset.CharacterCodingException;
import java.nio.charset.CodingErrorAction;
import java.nio.charset.StandardCharsets;
import java.nio.file.AccessDeniedException;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.regex.Pattern;
import org.yaml.snakeyaml.error.MarkedYAMLException;

/**
 * Reads and validates the configuration: one YAML file (docs/configuration.md is the reference) of at
 * most {@link #MAX_BYTES} bytes. Every problem is a {@link ConfigException} naming its key path; a
 * file is refused with all of its problems at once (see {@link ConfigException#problems()}), those of
 * the values first, then those of the environment. Secrets are read from the environment at load
 * time and never appear in messages.
 */
public final class ConfigLoader {
    static final Set<String> TOP_KEYS = ConnectionReaders.keys("kafka", "events", "http", "webhook", "experiments");

    /**
     * The largest configuration file read, 1 MiB. A configuration is a few kilobytes; the limit is
     * checked before parsing, so that a huge file (a stray log, a giant comment) is refused at once
     * rather than parsed for seconds into hundreds of megabytes.
     */
    public static final int MAX_BYTES = 1 << 20;

    private static final YAMLMapper YAML = YAMLMapper.builder()
            .enable(StreamReadFeature.STRICT_DUPLICATE_DETECTION)
            .build();
    /** YAML's non-finite floats, which the YAML parser recognises but cannot turn into a number. */
    private static final Pattern NON_FINITE = Pattern.compile("[-+]?\\.(?:inf|Inf|INF|nan|NaN|NAN)");

    private ConfigLoader() {}

    /** Loads {@code file}, reading secrets from this process's environment. */
    public static InterimConfig load(Path file) {
        return load(file, System.getenv());
    }

    /** Loads {@code file}, reading secrets from {@code environment}. */
    public static InterimConfig load(Path file, Map<String, String> environment) {
        return load(file, Environment.of(environment));
    }

    /**
     * Loads {@code file} without reading the environment: everything is checked except that the
     * variables holding secrets are set (for CI, where the secrets are absent). The result cannot
     * connect anything: its secrets and client properties refuse to give values.
     */
    public static InterimConfig loadWithoutSecrets(Path file) {
        return load(file, Environment.unread());
    }

    /** Parses configuration text, reading secrets from {@code environment}. */
    public static InterimConfig parse(String yaml, Map<String, String> environment) {
        return parse(yaml, Environment.of(environment));
    }

    /** Parses configuration text without reading the environment (see {@link #loadWithoutSecrets}). */
    public static InterimConfig parseWithoutSecrets(String yaml) {
        return parse(yaml, Environment.unread());
    }

    private static InterimConfig load(Path file, Environment env) {
        String name = file.toString();
        String text;
        try {
            text = read(file);
        } catch (ConfigException e) {
            throw e.in(name);
        } catch (NoSuchFileException e) {
            throw new ConfigException("", "no such file; give the path of a YAML configuration file, such as "
                    + "config/interim.example.yaml").in(name);
        } catch (AccessDeniedException e) {
            throw new ConfigException("", "cannot be read: permission denied").in(name);
        } catch (CharacterCodingException e) {
            throw new ConfigException("", "is not UTF-8 text").in(name);
        } catch (IOException e) {
            throw new ConfigException("", "cannot be read (" + e.getClass().getSimpleName() + ")").in(name);
        }
        try {
            return parse(text, env);
        } catch (ConfigException e) {
            throw e.in(name);
        }
    }

    /** The file's text, refused unread when it is over {@link #MAX_BYTES} (and never read past it). */
    private static String read(Path file) throws IOException {
        if (Files.isDirectory(file)) {
            throw new ConfigException("", "is a directory; give the path of a YAML configuration file");
        }
        long size = Files.size(file);
        if (size > MAX_BYTES) {
            throw tooLarge(size + " bytes");
        }
        byte[] bytes;
        try (InputStream in = Files.newInputStream(file)) {
            bytes = in.readNBytes(MAX_BYTES + 1); // a pipe or a growing file: its size said nothing
        }
        if (bytes.length > MAX_BYTES) {
            throw tooLarge("over " + MAX_BYTES + " bytes");
        }
        return StandardCharsets.UTF_8.newDecoder()
                .onMalformedInput(CodingErrorAction.REPORT)
                .onUnmappableCharacter(CodingErrorAction.REPORT)
                .decode(ByteBuffer.wrap(bytes)).toString();
    }

    private static ConfigException tooLarge(String size) {
        return new ConfigException("", "is " + size + "; a configuration file may hold at most 1 MiB ("
                + MAX_BYTES + " bytes): keep only the configuration in it (a configuration is a few kilobytes)");
    }

    private static InterimConfig parse(String yaml, Environment env) {
        if (yaml.length() > MAX_BYTES) {
            throw tooLarge(yaml.length() + " characters");
        }
        Problems problems = new Problems();
        ConfigNode root = ConfigNode.root(tree(yaml), problems);
        root.mapping(TOP_KEYS);
        KafkaSettings kafka = root.readRequired("kafka", "the kafka section, with at least input_topics",
                k -> ConnectionReaders.kafka(k, env));
        EventMapping events = root.readRequired("events",
                "the events section, with at least the experiment and arm JSON Pointers", ConnectionReaders::events);
        HttpSettings http = problems.attempt(() -> ConnectionReaders.http(root.optional("http"), env));
        Optional<WebhookSettings> webhook = problems.attempt(() ->
                root.optional("webhook").map(w -> ConnectionReaders.webhook(w, env)));
        boolean unitMapped = events != null ? events.unit().isPresent()
                : root.optional("events").map(e -> e.has("unit")).orElse(false);
        List<Indexed> experiments = root.readRequired("experiments", "the list of experiments to watch (at least one)",
                list -> experiments(list, unitMapped));
        if (kafka != null && events != null && experiments != null) {
            requireUnitKeyedInput(root, kafka, events, experiments);
        }
        if (experiments != null && !root.has("webhook")) {
            requireWebhookForKill(root, experiments);
        }
        problems.throwIfAny();
        return new InterimConfig(kafka, events, http, webhook, experiments.stream().map(Indexed::config).toList());
    }

    /**
     * The YAML document as a tree. Read node by node rather than with {@code readTree}, so that the
     * non-finite floats YAML allows ({@code .nan}, {@code .inf}, {@code -.inf}) become numbers that the
     * readers refuse with the key's path, instead of failing the whole file as unreadable.
     */
    private static JsonNode tree(String yaml) {
        JsonNode tree;
        try (JsonParser documents = YAML.createParser(yaml)) {
            tree = documents.nextToken() == null ? null : node(documents);
            if (tree != null && documents.nextToken() != null) {
                throw new ConfigException("", "holds more than one YAML document (a line '---' starts another): "
                        + "keep the whole configuration in one document");
            }
        } catch (JsonProcessingException e) {
            throw new ConfigException("", "is not valid YAML" + yamlProblem(e));
        } catch (IOException e) {
            throw new ConfigException("", "cannot be read (" + e.getClass().getSimpleName() + ")");
        }
        if (tree == null || tree.isMissingNode() || tree.isNull()) {
            throw new ConfigException("", "is empty: a configuration needs at least kafka.input_topics, events and "
                    + "experiments (see config/interim.example.yaml)");
        }
        return tree;
    }

    /** The value at the parser's current token, containers read to their end. */
    private static JsonNode node(JsonParser p) throws IOException {
        JsonNodeFactory nodes = YAML.getNodeFactory();
        switch (p.currentToken()) {
            case START_OBJECT -> {
                ObjectNode object = nodes.objectNode();
                while (p.nextToken() == JsonToken.FIELD_NAME) {
                    String key = p.currentName();
                    p.nextToken();
                    object.set(key, node(p));
                }
                return object;
            }
            case START_ARRAY -> {
                ArrayNode array = nodes.arrayNode();
                while (p.nextToken() != JsonToken.END_ARRAY) {
                    array.add(node(p));
                }
                return array;
            }
            case VALUE_STRING -> {
                return nodes.textNode(p.getText());
            }
            case VALUE_TRUE, VALUE_FALSE -> {
                return nodes.booleanNode(p.currentToken() == JsonToken.VALUE_TRUE);
            }
            case VALUE_NULL -> {
                return nodes.nullNode();
            }
            case VALUE_NUMBER_FLOAT -> {
                String written = p.getText().strip();
                if (NON_FINITE.matcher(written).matches()) {
                    return nodes.numberNode(written.endsWith("nan") || written.endsWith("NaN") || written.endsWith("NAN")
                            ? Double.NaN : written.startsWith("-") ? Double.NEGATIVE_INFINITY : Double.POSITIVE_INFINITY);
                }
                return YAML.readTree(p); // as readTree reads numbers: the same types, the same precision
            }
            default -> {
                return YAML.readTree(p);
            }
        }
    }

    /**
     * Where and why the YAML parser gave up, in one line: the position of the problem itself (the
     * parser's own position may lie on an earlier line, where the construct it was reading began).
     */
    private static String yamlProblem(JsonProcessingException e) {
        // The cause is the exception of SnakeYAML, the parser under Jackson's YAML format (its own
        // wrapper of it is deprecated): it knows where the problem is and where its context began.
        if (e.getCause() instanceof MarkedYAMLException marked && marked.getProblemMark() != null) {
            String problem = marked.getProblem() == null ? "" : marked.getProblem();
            if (problem.contains("(TAB)")) {
                problem = "found a tab, which YAML does not allow for indentation: indent with spaces";
            }
            String context = marked.getContext() != null && marked.getContextMark() != null
                    && marked.getContextMark().getLine() != marked.getProblemMark().getLine()
                    ? " (" + marked.getContext() + " begun at line " + (marked.getContextMark().getLine() + 1) + ")" : "";
            return " at line " + (marked.getProblemMark().getLine() + 1) + ", column "
                    + (marked.getProblemMark().getColumn() + 1) + ": " + oneLine(problem) + context;
        }
        String where = e.getLocation() == null ? "" : " at line " + e.getLocation().getLineNr() + ", column "
                + e.getLocation().getColumnNr();
        String why = e.getOriginalMessage() == null ? "" : ": " + oneLine(e.getOriginalMessage());
        return where + why;
    }

    private static String oneLine(String text) {
        return UserText.shown(text.strip().replaceAll("\\s*\\R\\s*", " "), 240);
    }

    /** A configured experiment and its place in the list, for the messages of later checks. */
    private record Indexed(int index, MappedExperiment config) {
    }

    /** The experiments read without a problem, each with its index; every problem is recorded. */
    private static List<Indexed> experiments(ConfigNode list, boolean unitMapped) {
        List<Indexed> experiments = new ArrayList<>();
        Map<String, Integer> seen = new HashMap<>();
        List<ConfigNode> elements = list.elements("experiments");
        for (int i = 0; i < elements.size(); i++) {
            ConfigNode element = elements.get(i);
            MappedExperiment e = list.problems().attempt(() -> ExperimentReader.read(element, unitMapped));
            if (e == null) {
                continue;
            }
            Integer before = seen.putIfAbsent(e.definition().id(), i);
            if (before != null) {
                list.report(new ConfigException(element.path() + ".id", UserText.quoted(e.definition().id())
                        + " is already the id of experiments[" + before + "]: give each experiment its own id"));
                continue;
            }
            experiments.add(new Indexed(i, e));
        }
        if (elements.isEmpty()) {
            throw list.error("must list at least one experiment");
        }
        return experiments;
    }

    /**
     * Per-unit metrics keep state per unit; the tally stage can keep it only when every event of a
     * unit reaches the same partition, that is when the input is keyed by unit, and it needs the unit
     * id of each event.
     */
    private static void requireUnitKeyedInput(ConfigNode root, KafkaSettings kafka, EventMapping events,
                                              List<Indexed> experiments) {
        for (Indexed indexed : experiments) {
            int i = indexed.index();
            ExperimentDefinition d = indexed.config().definition();
            if (d.assignment() == Assignment.UNIT) {
                String path = "experiments[" + i + "].assignment";
                String why = "arms assigned per unit (the default when events.unit is set) are analysed per unit, "
                        + "and per-unit sums need input keyed by unit (all events of a unit in one partition)";
                if (events.unit().isEmpty()) {
                    root.report(new ConfigException(path, "unit needs the unit id of each event: set events.unit to "
                            + "its JSON Pointer, such as /user/id; or, if each event is assigned to an arm on its own, "
                            + "assignment: event"));
                    continue;
                }
                if (!kafka.inputKeyedByUnit()) {
                    root.report(new ConfigException(path, why + ": make the producers key input records by the unit "
                            + "id, then set kafka.input_keyed_by_unit: true; or, if each event is assigned to an arm "
                            + "on its own (a load balancer per request), set assignment: event"));
                    continue;
                }
            }
            List<MetricDefinition> metrics = d.metrics();
            for (int j = 0; j < metrics.size(); j++) {
                MetricDefinition m = metrics.get(j);
                if (!m.kind().perUnit()) {
                    continue;
                }
                String path = "experiments[" + i + "].metrics[" + j + "].kind";
                String why = "a " + m.kind().label() + " metric keeps state per unit, and per-unit state needs input "
                        + "keyed by unit (all events of a unit in one partition)";
                if (!kafka.inputKeyedByUnit()) {
                    root.report(new ConfigException(path, why + ": make the producers key input records by the unit "
                            + "id, then set kafka.input_keyed_by_unit: true; or use an event-level kind"));
                    break; // one fix for the whole experiment: say it once
                }
                if (events.unit().isEmpty()) {
                    root.report(new ConfigException(path, why + " and the unit id of each event: set events.unit to "
                            + "its JSON Pointer, such as /user/id"));
                    break;
                }
            }
        }
    }

    private static void requireWebhookForKill(ConfigNode root, List<Indexed> experiments) {
        for (Indexed indexed : experiments) {
            List<MetricDefinition> metrics = indexed.config().definition().metrics();
            for (int j = 0; j < metrics.size(); j++) {
                if (metrics.get(j).action() == StopAction.KILL) {
                    root.report(new ConfigException("experiments[" + indexed.index() + "].metrics[" + j + "].action",
                            "kill calls the kill webhook, and there is no webhook section: add webhook.url and "
                                    + "webhook.signing_key_env, or use action: page or none"));
                    return; // one section to add, whatever the number of kill metrics
                }
            }
        }
    }
}
