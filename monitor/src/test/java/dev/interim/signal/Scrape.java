package dev.interim.signal;

import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/** A small reader of the Prometheus text format for assertions: samples by name and labels. */
record Scrape(String text, List<Sample> samples) {
    private static final Pattern LINE = Pattern.compile("^([a-zA-Z_:][a-zA-Z0-9_:]*)(?:\\{(.*)})? (\\S+)(?: \\d+)?$");
    private static final Pattern LABEL = Pattern.compile("([a-zA-Z_][a-zA-Z0-9_]*)=\"((?:[^\"\\\\]|\\\\.)*)\"");

    record Sample(String name, Map<String, String> labels, String value) {
        double number() {
            return switch (value) {
                case "+Inf" -> Double.POSITIVE_INFINITY;
                case "-Inf" -> Double.NEGATIVE_INFINITY;
                case "NaN" -> Double.NaN;
                default -> Double.parseDouble(value);
            };
        }
    }

    static Scrape of(String text) {
        List<Sample> samples = new ArrayList<>();
        for (String line : text.split("\n")) {
            if (line.isBlank() || line.startsWith("#")) {
                continue;
            }
            Matcher m = LINE.matcher(line);
            if (!m.matches()) {
                throw new AssertionError("not a sample line of the Prometheus text format: " + line);
            }
            Map<String, String> labels = new LinkedHashMap<>();
            if (m.group(2) != null) {
                Matcher l = LABEL.matcher(m.group(2));
                while (l.find()) {
                    labels.put(l.group(1), l.group(2));
                }
            }
            samples.add(new Sample(m.group(1), labels, m.group(3)));
        }
        return new Scrape(text, samples);
    }

    /** The samples of {@code name} whose labels include all of {@code labels} (k1, v1, k2, v2, ...). */
    List<Sample> find(String name, String... labels) {
        List<Sample> found = new ArrayList<>();
        for (Sample s : samples) {
            if (!s.name().equals(name)) {
                continue;
            }
            boolean all = true;
            for (int i = 0; i < labels.length; i += 2) {
                all &= labels[i + 1].equals(s.labels().get(labels[i]));
            }
            if (all) {
                found.add(s);
            }
        }
        return found;
    }

    /** The one sample of {@code name} with these labels. */
    Sample one(String name, String... labels) {
        List<Sample> found = find(name, labels);
        if (found.size() != 1) {
            throw new AssertionError("expected one sample " + name + " " + String.join(",", labels) + ", found " + found.size()
                    + "\n" + text);
        }
        return found.get(0);
    }

    double value(String name, String... labels) {
        return one(name, labels).number();
    }
}
