package dev.interim.events;

import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.MetricKind;
import java.util.HashMap;
import java.util.List;
import java.util.Map;

/**
 * The experiments compiled once into dense indices, shared by the event reader, the tallies, the
 * judge and replay: experiment {@code e} is the e-th of the list given, its arm {@code a} the a-th of
 * {@link ExperimentDefinition#arms()} (control first) and its metric {@code m} the m-th of
 * {@link ExperimentDefinition#metrics()}. Observations travel as these indices, so an experiment is
 * looked up by name once per event (by the reader) and never again downstream.
 *
 * <p>Immutable.
 */
public final class Catalog {
    private final List<ExperimentDefinition> experiments;
    private final Map<String, Integer> byId = new HashMap<>();
    /** Per experiment, its arms as an array (scanned: experiments have a handful of arms). */
    private final String[][] arms;
    /** Per experiment, metric name → index. */
    private final List<Map<String, Integer>> metrics;

    public Catalog(List<ExperimentDefinition> definitions) {
        this.experiments = List.copyOf(definitions);
        this.arms = new String[experiments.size()][];
        Map<String, Integer>[] byName = newMaps(experiments.size());
        for (int e = 0; e < experiments.size(); e++) {
            ExperimentDefinition d = experiments.get(e);
            if (byId.put(d.id(), e) != null) {
                throw new IllegalArgumentException("experiment '" + d.id() + "' is defined twice");
            }
            arms[e] = d.arms().toArray(new String[0]);
            List<MetricDefinition> ms = d.metrics();
            for (int m = 0; m < ms.size(); m++) {
                byName[e].put(ms.get(m).name(), m);
            }
        }
        this.metrics = List.of(byName);
    }

    @SuppressWarnings("unchecked")
    private static Map<String, Integer>[] newMaps(int n) {
        Map<String, Integer>[] maps = new Map[n];
        for (int i = 0; i < n; i++) {
            maps[i] = new HashMap<>();
        }
        return maps;
    }

    /** How many experiments there are. */
    public int size() {
        return experiments.size();
    }

    /** The index of the experiment with this id, or -1. */
    public int index(String experiment) {
        Integer e = byId.get(experiment);
        return e == null ? -1 : e;
    }

    /** The definition of experiment {@code e}. */
    public ExperimentDefinition definition(int e) {
        return experiments.get(e);
    }

    /** The index of {@code arm} in experiment {@code e}, or -1. */
    public int arm(int e, String arm) {
        String[] a = arms[e];
        for (int i = 0; i < a.length; i++) {
            if (a[i].equals(arm)) {
                return i;
            }
        }
        return -1;
    }

    /** The index of {@code metric} in experiment {@code e}, or -1. */
    public int metric(int e, String metric) {
        Integer m = metrics.get(e).get(metric);
        return m == null ? -1 : m;
    }

    /** The definition with this id, or null. */
    public ExperimentDefinition experiment(String id) {
        int e = index(id);
        return e < 0 ? null : experiments.get(e);
    }

    /** Every definition, in index order. */
    public List<ExperimentDefinition> experiments() {
        return experiments;
    }

    public boolean hasArm(String experiment, String arm) {
        int e = index(experiment);
        return e >= 0 && arm(e, arm) >= 0;
    }

    /** The kind of {@code metric} in {@code experiment}, or null when there is no such metric. */
    public MetricKind kind(String experiment, String metric) {
        int e = index(experiment);
        int m = e < 0 ? -1 : metric(e, metric);
        return m < 0 ? null : experiments.get(e).metrics().get(m).kind();
    }
}
