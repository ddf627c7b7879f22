package dev.interim.stream;

import java.util.ArrayList;
import java.util.List;

/**
 * A sink that writes down every call, one line each, so a test can see exactly what an event
 * reached: {@code exposure EXP ARM UNIT}, {@code outcome EXP ARM UNIT METRIC true}, {@code value EXP
 * ARM UNIT METRIC 12.5} (the value as {@link Double#toString(double)} writes it).
 */
final class RecordingSink implements ObservationSink {
    final List<String> calls = new ArrayList<>();

    @Override
    public void exposure(String experiment, String arm, String unit) {
        calls.add(exposureCall(experiment, arm, unit));
    }

    @Override
    public void outcome(String experiment, String arm, String unit, String metric, boolean success) {
        calls.add(outcomeCall(experiment, arm, unit, metric, success));
    }

    @Override
    public void value(String experiment, String arm, String unit, String metric, double value) {
        calls.add(valueCall(experiment, arm, unit, metric, value));
    }

    @Override
    public void ratio(String experiment, String arm, String unit, String metric, double numerator, double denominator) {
        calls.add("ratio " + experiment + " " + arm + " " + unit + " " + metric + " " + numerator + " " + denominator);
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
