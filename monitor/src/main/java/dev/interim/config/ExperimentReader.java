package dev.interim.config;

import dev.interim.events.MetricSource;
import dev.interim.events.MappedExperiment;

import dev.interim.experiment.RunMode;

import dev.interim.experiment.Assignment;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.MetricDefinition;
import dev.interim.text.UserText;
import java.time.Duration;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;

/** Reads one entry of {@code experiments}. */
final class ExperimentReader {
    static final Set<String> KEYS = ConnectionReaders.keys("id", "control", "treatments", "split", "look_every",
            "min_per_arm", "dry_run", "sample_ratio_threshold", "metrics", "assignment");
    static final Duration DEFAULT_LOOK_EVERY = Duration.ofMinutes(1);
    static final long DEFAULT_MIN_PER_ARM = 100;
    static final double DEFAULT_SAMPLE_RATIO_THRESHOLD = 0.001;

    private ExperimentReader() {}

    /**
     * @param unitMapped whether events carry a unit (events.unit): arms are then taken as assigned per
     *                   unit unless the experiment says {@code assignment: event}
     */
    static MappedExperiment read(ConfigNode e, boolean unitMapped) {
        e.mapping(KEYS);
        Problems.Checkpoint start = e.checkpoint();
        String id = e.readRequired("id", "the experiment id as it appears in events", ConfigNode::text);
        String control = e.readRequired("control", "the control arm, as it appears in events", ConfigNode::text);
        List<String> treatments = e.readRequired("treatments", "the list of treatment arms (at least one)",
                t -> treatments(t, control));
        Map<String, Double> split = null;
        if (control != null && treatments != null) {
            List<String> arms = new ArrayList<>();
            arms.add(control);
            arms.addAll(treatments);
            split = e.read("split", s -> split(s, arms), null);
        }
        Duration lookEvery = e.read("look_every", d -> d.duration(Duration.ofSeconds(1), Duration.ofHours(24)),
                DEFAULT_LOOK_EVERY);
        Long minPerArm = e.read("min_per_arm", ConfigNode::integer, DEFAULT_MIN_PER_ARM);
        Boolean dryRun = e.read("dry_run", ConfigNode::bool, true);
        Assignment assignment = e.read("assignment", a -> a.parsed(Assignment::parse),
                unitMapped ? Assignment.UNIT : Assignment.EVENT);
        Double sampleRatio = e.read("sample_ratio_threshold", ConfigNode::number, DEFAULT_SAMPLE_RATIO_THRESHOLD);

        List<MetricDefinition> metrics = new ArrayList<>();
        Map<String, MetricSource> sources = new LinkedHashMap<>();
        e.readRequired("metrics", "the list of metrics watched (at least one)", list -> metrics(list, metrics, sources));
        start.requireNone();
        Map<String, Double> shares = split;
        ExperimentDefinition definition = Validated.at(e, KEYS, () -> new ExperimentDefinition(id, control, treatments,
                shares, lookEvery, minPerArm, RunMode.dryRun(dryRun), sampleRatio, metrics, assignment));
        return new MappedExperiment(definition, sources);
    }

    /** Reads every metric of the list into {@code metrics} and {@code sources}, recording the problems of each. */
    private static ConfigNode metrics(ConfigNode list, List<MetricDefinition> metrics, Map<String, MetricSource> sources) {
        List<ConfigNode> elements = list.elements("metrics");
        for (ConfigNode m : elements) {
            MetricReader.Read read = list.problems().attempt(() -> MetricReader.read(m));
            if (read == null) {
                continue;
            }
            String name = read.definition().name();
            if (sources.containsKey(name)) {
                list.report(m.required("name", "").error("metric " + UserText.quoted(name) + " is already defined in "
                        + "this experiment: give each metric its own name"));
                continue;
            }
            metrics.add(read.definition());
            sources.put(name, read.source());
        }
        if (elements.isEmpty()) {
            throw list.error("must list at least one metric");
        }
        return list;
    }

    /** The treatment arms; {@code control} is null when it had a problem of its own. */
    private static List<String> treatments(ConfigNode t, String control) {
        Problems.Checkpoint start = t.checkpoint();
        List<String> arms = new ArrayList<>();
        List<ConfigNode> elements = t.elements("arm names");
        for (ConfigNode arm : elements) {
            String name = t.problems().attempt(() -> {
                String text = arm.text();
                if (text.equals(control)) {
                    throw arm.error("arm " + UserText.quoted(text) + " is already the control: a treatment must be "
                            + "another arm");
                }
                if (arms.contains(text)) {
                    throw arm.error("arm " + UserText.quoted(text) + " is listed twice");
                }
                return text;
            });
            if (name != null) {
                arms.add(name);
            }
        }
        if (elements.isEmpty()) {
            throw t.error("must list at least one treatment arm");
        }
        start.requireNone();
        return arms;
    }

    /** Expected shares by arm: every arm, and only arms, with a positive weight (normalised later). */
    private static Map<String, Double> split(ConfigNode s, List<String> arms) {
        Map<String, Double> shares = new LinkedHashMap<>();
        for (Map.Entry<String, ConfigNode> entry : s.entries("arm names to shares, such as {current: 50, fast: 50}").entrySet()) {
            if (!arms.contains(entry.getKey())) {
                throw entry.getValue().error(UserText.quoted(entry.getKey()) + " is not an arm of this experiment "
                        + "(arms: " + shown(arms) + ")");
            }
            double share = entry.getValue().number();
            if (!(share > 0)) {
                throw entry.getValue().error("a share must be a positive number (any positive weights; they are "
                        + "normalised); got " + entry.getValue().shown());
            }
            shares.put(entry.getKey(), share);
        }
        List<String> missing = arms.stream().filter(a -> !shares.containsKey(a)).toList();
        if (!missing.isEmpty()) {
            throw s.error("gives no share for " + shown(missing) + ": give every arm a share, or leave "
                    + "split out for an equal split");
        }
        return shares;
    }

    private static String shown(List<String> names) {
        return String.join(", ", names.stream().map(UserText::shown).toList());
    }
}
