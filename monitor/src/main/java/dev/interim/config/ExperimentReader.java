package dev.interim.config;

import dev.interim.experiment.RunMode;

import dev.interim.experiment.Assignment;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.MetricDefinition;
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
    static ExperimentConfig read(ConfigNode e, boolean unitMapped) {
        e.mapping(KEYS);
        String id = e.required("id", "the experiment id as it appears in events").text();
        String control = e.required("control", "the control arm, as it appears in events").text();
        List<String> treatments = treatments(e.required("treatments", "the list of treatment arms (at least one)"), control);
        List<String> arms = new ArrayList<>();
        arms.add(control);
        arms.addAll(treatments);
        Map<String, Double> split = e.optional("split").map(s -> split(s, arms)).orElse(null);
        Duration lookEvery = e.optional("look_every").map(d -> d.duration(Duration.ofSeconds(1), Duration.ofHours(24)))
                .orElse(DEFAULT_LOOK_EVERY);
        long minPerArm = e.optional("min_per_arm").map(ConfigNode::integer).orElse(DEFAULT_MIN_PER_ARM);
        boolean dryRun = e.optional("dry_run").map(ConfigNode::bool).orElse(true);
        Assignment assignment = e.optional("assignment").map(a -> a.parsed(Assignment::parse))
                .orElse(unitMapped ? Assignment.UNIT : Assignment.EVENT);
        double sampleRatio = e.optional("sample_ratio_threshold").map(ConfigNode::number).orElse(DEFAULT_SAMPLE_RATIO_THRESHOLD);

        ConfigNode metricsNode = e.required("metrics", "the list of metrics watched (at least one)");
        List<MetricDefinition> metrics = new ArrayList<>();
        Map<String, MetricSource> sources = new LinkedHashMap<>();
        for (ConfigNode m : metricsNode.elements("metrics")) {
            MetricReader.Read read = MetricReader.read(m);
            String name = read.definition().name();
            if (sources.containsKey(name)) {
                throw m.required("name", "").error("metric '" + name + "' is already defined in this experiment: "
                        + "give each metric its own name");
            }
            metrics.add(read.definition());
            sources.put(name, read.source());
        }
        if (metrics.isEmpty()) {
            throw metricsNode.error("must list at least one metric");
        }
        ExperimentDefinition definition = Domain.build(e, KEYS, () -> new ExperimentDefinition(id, control, treatments,
                split, lookEvery, minPerArm, RunMode.dryRun(dryRun), sampleRatio, metrics, assignment));
        return new ExperimentConfig(definition, sources);
    }

    private static List<String> treatments(ConfigNode t, String control) {
        List<String> arms = new ArrayList<>();
        for (ConfigNode arm : t.elements("arm names")) {
            String name = arm.text();
            if (name.equals(control)) {
                throw arm.error("arm '" + name + "' is already the control: a treatment must be another arm");
            }
            if (arms.contains(name)) {
                throw arm.error("arm '" + name + "' is listed twice");
            }
            arms.add(name);
        }
        if (arms.isEmpty()) {
            throw t.error("must list at least one treatment arm");
        }
        return arms;
    }

    /** Expected shares by arm: every arm, and only arms, with a positive weight (normalised later). */
    private static Map<String, Double> split(ConfigNode s, List<String> arms) {
        Map<String, Double> shares = new LinkedHashMap<>();
        for (Map.Entry<String, ConfigNode> entry : s.entries("arm names to shares, such as {current: 50, fast: 50}").entrySet()) {
            if (!arms.contains(entry.getKey())) {
                throw entry.getValue().error("'" + entry.getKey() + "' is not an arm of this experiment (arms: "
                        + String.join(", ", arms) + ")");
            }
            double share = entry.getValue().number();
            if (!(share > 0) || !Double.isFinite(share)) {
                throw entry.getValue().error("a share must be a positive number (any positive weights; they are "
                        + "normalised); got " + entry.getValue().shown());
            }
            shares.put(entry.getKey(), share);
        }
        List<String> missing = arms.stream().filter(a -> !shares.containsKey(a)).toList();
        if (!missing.isEmpty()) {
            throw s.error("gives no share for " + String.join(", ", missing) + ": give every arm a share, or leave "
                    + "split out for an equal split");
        }
        return shares;
    }
}
