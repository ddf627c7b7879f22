package dev.interim.replay;

import dev.interim.stream.ObservationSink;
import java.util.Arrays;

/**
 * Holds what one event said until the replay knows it may be applied: the event reader has
 * accepted it, but its time is read afterwards, and a look may be due before it counts. Reused from
 * one event to the next, so the hot path allocates nothing here.
 *
 * <p>Mutable, one owner.
 */
final class EventBuffer implements ObservationSink {
    private static final byte EXPOSURE = 0;
    private static final byte OUTCOME = 1;
    private static final byte VALUE = 2;
    private static final byte RATIO = 3;

    private byte[] kinds = new byte[8];
    private int[] experiments = new int[8];
    private int[] arms = new int[8];
    private String[] units = new String[8];
    private int[] metrics = new int[8];
    private double[] numbers = new double[8];
    /** A ratio's denominator (0 for the other kinds). */
    private double[] denominators = new double[8];
    private int size;

    /** Forgets the event held (its few references stay until overwritten: nothing worth clearing). */
    void clear() {
        size = 0;
    }

    /** The experiment of the event held, by catalog index (every call of one event names the same one). */
    int experiment() {
        if (size == 0) {
            throw new IllegalStateException("no event held");
        }
        return experiments[0];
    }

    @Override
    public void exposure(int experiment, int arm, String unit) {
        add(EXPOSURE, experiment, arm, unit, -1, 0);
    }

    @Override
    public void outcome(int experiment, int arm, String unit, int metric, boolean success) {
        add(OUTCOME, experiment, arm, unit, metric, success ? 1 : 0);
    }

    @Override
    public void value(int experiment, int arm, String unit, int metric, double value) {
        add(VALUE, experiment, arm, unit, metric, value);
    }

    @Override
    public void ratio(int experiment, int arm, String unit, int metric, double numerator, double denominator) {
        add(RATIO, experiment, arm, unit, metric, numerator);
        denominators[size - 1] = denominator;
    }

    /** Hands the event held to {@code sink}, in the order the reader gave it. */
    void applyTo(ObservationSink sink) {
        for (int i = 0; i < size; i++) {
            switch (kinds[i]) {
                case EXPOSURE -> sink.exposure(experiments[i], arms[i], units[i]);
                case OUTCOME -> sink.outcome(experiments[i], arms[i], units[i], metrics[i], numbers[i] != 0);
                case RATIO -> sink.ratio(experiments[i], arms[i], units[i], metrics[i], numbers[i], denominators[i]);
                default -> sink.value(experiments[i], arms[i], units[i], metrics[i], numbers[i]);
            }
        }
    }

    private void add(byte kind, int experiment, int arm, String unit, int metric, double number) {
        if (size == kinds.length) {
            int n = size * 2;
            kinds = Arrays.copyOf(kinds, n);
            experiments = Arrays.copyOf(experiments, n);
            arms = Arrays.copyOf(arms, n);
            units = Arrays.copyOf(units, n);
            metrics = Arrays.copyOf(metrics, n);
            numbers = Arrays.copyOf(numbers, n);
            denominators = Arrays.copyOf(denominators, n);
        }
        kinds[size] = kind;
        experiments[size] = experiment;
        arms[size] = arm;
        units[size] = unit;
        metrics[size] = metric;
        numbers[size] = number;
        denominators[size] = 0;
        size++;
    }
}
