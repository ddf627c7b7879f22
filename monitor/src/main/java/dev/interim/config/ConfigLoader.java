package dev.interim.config;

import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.StreamReadFeature;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import dev.interim.experiment.Assignment;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.StopAction;
import java.io.IOException;
import java.nio.charset.CharacterCodingException;
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

/**
 * Reads and validates the configuration: one YAML file (docs/configuration.md is the reference).
 * Every problem is a {@link ConfigException} naming its key path; the first one found is reported.
 * Secrets are read from the environment at load time and never appear in messages.
 */
public final class ConfigLoader {
    static final Set<String> TOP_KEYS = ConnectionReaders.keys("kafka", "events", "http", "webhook", "experiments");

    private static final YAMLMapper YAML = YAMLMapper.builder()
            .enable(StreamReadFeature.STRICT_DUPLICATE_DETECTION)
            .build();

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
            if (Files.isDirectory(file)) {
                throw new ConfigException("", "is a directory; give the path of a YAML configuration file").in(name);
            }
            text = Files.readString(file);
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

    private static InterimConfig parse(String yaml, Environment env) {
        ConfigNode root = ConfigNode.root(tree(yaml));
        root.mapping(TOP_KEYS);
        KafkaSettings kafka = ConnectionReaders.kafka(root.required("kafka",
                "the kafka section, with at least input_topics"), env);
        EventMapping events = ConnectionReaders.events(root.required("events",
                "the events section, with at least the experiment and arm JSON Pointers"));
        HttpSettings http = ConnectionReaders.http(root.optional("http"), env);
        Optional<WebhookSettings> webhook = root.optional("webhook").map(w -> ConnectionReaders.webhook(w, env));
        List<ExperimentConfig> experiments = experiments(root.required("experiments",
                "the list of experiments to watch (at least one)"), events.unit().isPresent());
        InterimConfig config = new InterimConfig(kafka, events, http, webhook, experiments);
        requireUnitKeyedInput(config);
        requireWebhookForKill(config);
        return config;
    }

    private static JsonNode tree(String yaml) {
        JsonNode tree;
        try (JsonParser documents = YAML.createParser(yaml)) {
            tree = documents.nextToken() == null ? null : YAML.readTree(documents);
            if (tree != null && documents.nextToken() != null) {
                throw new ConfigException("", "holds more than one YAML document (a line '---' starts another): "
                        + "keep the whole configuration in one document");
            }
        } catch (JsonProcessingException e) {
            String where = e.getLocation() == null ? "" : " at line " + e.getLocation().getLineNr() + ", column "
                    + e.getLocation().getColumnNr();
            String why = e.getOriginalMessage() == null ? "" : ": " + e.getOriginalMessage().strip().replaceAll("\\s*\\R\\s*", " ");
            throw new ConfigException("", "is not valid YAML" + where + why);
        } catch (IOException e) {
            throw new ConfigException("", "cannot be read (" + e.getClass().getSimpleName() + ")");
        }
        if (tree == null || tree.isMissingNode() || tree.isNull()) {
            throw new ConfigException("", "is empty: a configuration needs at least kafka.input_topics, events and "
                    + "experiments (see config/interim.example.yaml)");
        }
        return tree;
    }

    private static List<ExperimentConfig> experiments(ConfigNode list, boolean unitMapped) {
        List<ExperimentConfig> experiments = new ArrayList<>();
        Map<String, Integer> seen = new HashMap<>();
        List<ConfigNode> elements = list.elements("experiments");
        for (int i = 0; i < elements.size(); i++) {
            ExperimentConfig e = ExperimentReader.read(elements.get(i), unitMapped);
            Integer before = seen.putIfAbsent(e.definition().id(), i);
            if (before != null) {
                throw new ConfigException(elements.get(i).path() + ".id", "'" + e.definition().id()
                        + "' is already the id of experiments[" + before + "]: give each experiment its own id");
            }
            experiments.add(e);
        }
        if (experiments.isEmpty()) {
            throw list.error("must list at least one experiment");
        }
        return experiments;
    }

    /**
     * Per-unit metrics keep state per unit; the tally stage can keep it only when every event of a
     * unit reaches the same partition, that is when the input is keyed by unit, and it needs the unit
     * id of each event.
     */
    private static void requireUnitKeyedInput(InterimConfig config) {
        for (int i = 0; i < config.experiments().size(); i++) {
            ExperimentDefinition d = config.experiments().get(i).definition();
            if (d.assignment() == Assignment.UNIT) {
                String path = "experiments[" + i + "].assignment";
                String why = "arms assigned per unit (the default when events.unit is set) are analysed per unit, "
                        + "and per-unit sums need input keyed by unit (all events of a unit in one partition)";
                if (config.events().unit().isEmpty()) {
                    throw new ConfigException(path, "unit needs the unit id of each event: set events.unit to its JSON "
                            + "Pointer, such as /user/id; or, if each event is assigned to an arm on its own, "
                            + "assignment: event");
                }
                if (!config.kafka().inputKeyedByUnit()) {
                    throw new ConfigException(path, why + ": make the producers key input records by the unit id, "
                            + "then set kafka.input_keyed_by_unit: true; or, if each event is assigned to an arm on "
                            + "its own (a load balancer per request), set assignment: event");
                }
            }
            List<MetricDefinition> metrics = config.experiments().get(i).definition().metrics();
            for (int j = 0; j < metrics.size(); j++) {
                MetricDefinition m = metrics.get(j);
                if (!m.kind().perUnit()) {
                    continue;
                }
                String path = "experiments[" + i + "].metrics[" + j + "].kind";
                String why = "a " + m.kind().label() + " metric keeps state per unit, and per-unit state needs input "
                        + "keyed by unit (all events of a unit in one partition)";
                if (!config.kafka().inputKeyedByUnit()) {
                    throw new ConfigException(path, why + ": make the producers key input records by the unit id, "
                            + "then set kafka.input_keyed_by_unit: true; or use an event-level kind");
                }
                if (config.events().unit().isEmpty()) {
                    throw new ConfigException(path, why + " and the unit id of each event: set events.unit to its "
                            + "JSON Pointer, such as /user/id");
                }
            }
        }
    }

    private static void requireWebhookForKill(InterimConfig config) {
        if (config.webhook().isPresent()) {
            return;
        }
        for (int i = 0; i < config.experiments().size(); i++) {
            List<MetricDefinition> metrics = config.experiments().get(i).definition().metrics();
            for (int j = 0; j < metrics.size(); j++) {
                if (metrics.get(j).action() == StopAction.KILL) {
                    throw new ConfigException("experiments[" + i + "].metrics[" + j + "].action", "kill calls the kill "
                            + "webhook, and there is no webhook section: add webhook.url and webhook.signing_key_env, "
                            + "or use action: page or none");
                }
            }
        }
    }
}
