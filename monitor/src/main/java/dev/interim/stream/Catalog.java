package dev.interim.stream;

import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.MetricKind;
import java.util.HashMap;
import java.util.List;
import java.util.Map;

/** The experiments as the stream sees them: which arms exist and how each metric is tallied. */
public final class Catalog {
    private final Map<String, ExperimentDefinition> experiments = new HashMap<>();
    private final Map<String, Map<String, MetricKind>> kinds = new HashMap<>();

    public Catalog(List<ExperimentDefinition> definitions) {
        for (ExperimentDefinition e : definitions) {
            if (experiments.put(e.id(), e) != null) {
                throw new IllegalArgumentException("experiment '" + e.id() + "' is defined twice");
            }
            Map<String, MetricKind> byName = new HashMap<>();
            for (MetricDefinition m : e.metrics()) {
                byName.put(m.name(), m.kind());
            }
            kinds.put(e.id(), byName);
        }
    }

    public ExperimentDefinition experiment(String id) {
        return experiments.get(id);
    }

    public List<ExperimentDefinition> experiments() {
        return List.copyOf(experiments.values());
    }

    public boolean hasArm(String experiment, String arm) {
        ExperimentDefinition e = experiments.get(experiment);
        return e != null && (e.control().equals(arm) || e.treatments().contains(arm));
    }

    /** The kind of {@code metric} in {@code experiment}, or null when there is no such metric. */
    public MetricKind kind(String experiment, String metric) {
        Map<String, MetricKind> byName = kinds.get(experiment);
        return byName == null ? null : byName.get(metric);
    }
}
