package dev.interim.stream;

/**
 * What a partial tally counts: one metric of one arm of one experiment, within one input partition
 * (the source, "topic-partition"). The metric {@link #EXPOSURES} counts exposures (units, or events
 * when there are no units).
 */
public record PartialKey(String experiment, String arm, String metric, String source) {
    public static final String EXPOSURES = "";

    /** The record key on the tallies topic: experiment, arm, metric and input partition. */
    public String text() {
        return experiment + '\u001f' + arm + '\u001f' + metric + '\u001f' + source;
    }

    public static PartialKey parse(String text) {
        String[] p = text.split("\u001f", -1);
        if (p.length != 4) {
            throw new IllegalArgumentException("not a tally key: " + text);
        }
        return new PartialKey(p[0], p[1], p[2], p[3]);
    }
}
