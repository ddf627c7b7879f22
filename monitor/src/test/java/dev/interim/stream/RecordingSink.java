package dev.interim.stream;

import dev.interim.events.Catalog;
import java.util.ArrayList;
import java.util.List;

/**
 * A sink that writes down every call, one line each, so a test can see exactly what an event
 * reached: {@code exposure EXP ARM UNIT}, {@code outcome EXP ARM UNIT METRIC true}, {@code value EXP
 * ARM UNIT METRIC 12.5} (the value as {@link Double#toString(double)} writes it).
 */
final class RecordingSink implements ObservationSink {
    final List<String> calls = new ArrayList<>();
    /** Names the indices the reader passes. */
    private final Catalog catalog;

    /** A sink for the readers of the tile service's configuration ({@link TileEvents#config()}). */
    RecordingSink() {
        this(TileEvents.config().catalog().catalog());
    }

    RecordingSink(Catalog catalog) {
        this.catalog = catalog;
    }

    private String experiment(int e) {
        return catalog.definition(e).id();
    }

    private String arm(int e, int a) {
        return catalog.definition(e).arms().get(a);
    }

    private String metric(int e, int m) {
        return catalog.definition(e).metrics().get(m).name();
    }

    @Override
    public void exposure(int e, int a, String unit) {
        calls.add(exposureCall(experiment(e), arm(e, a), unit));
    }

    @Override
    public void outcome(int e, int a, String unit, int m, boolean success) {
        calls.add(outcomeCall(experiment(e), arm(e, a), unit, metric(e, m), success));
    }

    @Override
    public void value(int e, int a, String unit, int m, double value) {
        calls.add(valueCall(experiment(e), arm(e, a), unit, metric(e, m), value));
    }

    @Override
    public void ratio(int e, int a, String unit, int m, double numerator, double denominator) {
        calls.add("ratio " + experiment(e) + " " + arm(e, a) + " " + unit + " " + metric(e, m) + " " + numerator + " "
                + denominator);
    }

    static String exposureCall(String experiment, String arm, String unit) {
        return "exposure " + experiment + " " + arm + " " + unit;
    }

    static String outcomeCall(String experiment, String arm, String unit, String metric, boolean success) {
        return "outcome " + experiment + " " + arm + " " + unit + " " + metric + " " + success;
    }

    static String valueCall(String experiment, String arm, String unit, String metric, double value) {
        return "value " + experiment + " " + arm + " " + unit + " " + metric + " " + value;
    }
}
