package dev.interim.bench;

import java.util.List;
import java.util.Set;
import java.util.SplittableRandom;

/**
 * The invented traffic of the stream benchmark: "Wendrift Trips", a fictional travel-booking site,
 * runs four experiments at once on one topic of JSON events, each keyed by the traveller (the unit).
 *
 * <ul>
 *   <li>{@code fare-ranking-2031-04}: three fare-ranking models on the search results page
 *       (latency mean, error rate, share of results that lead to an opened fare);</li>
 *   <li>{@code hotel-photo-carousel}: a photo carousel against the grid (latency, did the
 *       traveller book a hotel: unit-rate, hotel spend per traveller: unit-total);</li>
 *   <li>{@code seat-map-v3}: four arms of the seat map (rate of seat choices, render time);</li>
 *   <li>{@code insurance-upsell}: two ways of offering travel insurance at checkout (error rate,
 *       did the traveller add insurance: unit-rate, ancillary spend per traveller: unit-total).</li>
 * </ul>
 *
 * Every experiment assigns arms per unit ({@code assignment: unit}, the default when the unit is
 * mapped): its event-level metrics are tallied as ratios of per-unit sums, counting units. Every
 * event carries a step, a latency and an HTTP status, so that every event is an observation of at
 * least one event-level metric of its experiment: that metric's denominator sum per arm is the
 * number of events of the arm. A traveller is assigned to an arm of each experiment by a hash of
 * the pair, so a unit keeps its arm. Latencies are multiples of 1/8 ms and amounts multiples of 0.25, so their
 * sums are exact in binary floating point.
 */
final class StreamScenario {
    static final String TOPIC = "wendrift.booking-events";

    /** Where a metric reads the event. */
    enum Field {
        LATENCY("/perf/ms"), STATUS("/perf/status"), STEP("/step"), AMOUNT("/basket/eur");

        final String pointer;

        Field(String pointer) {
            this.pointer = pointer;
        }
    }

    enum Kind {
        EVENT_RATE("event-rate", true, false), EVENT_MEAN("event-mean", false, false),
        UNIT_RATE("unit-rate", true, true), UNIT_TOTAL("unit-total", false, true);

        final String label;
        final boolean rate;
        final boolean perUnit;

        Kind(String label, boolean rate, boolean perUnit) {
            this.label = label;
            this.rate = rate;
            this.perUnit = perUnit;
        }
    }

    /**
     * One metric: its kind, its field, and for rates on the step the steps that count (for rates on
     * the status: a status of 500 or above). {@code design} is the rest of its YAML entry.
     */
    record Metric(String name, Kind kind, Field field, Set<String> countedSteps, String design) {
        boolean success(Event e) {
            return field == Field.STATUS ? e.status >= 500 : countedSteps.contains(e.step);
        }

        String yaml(long maxPerArm) {
            StringBuilder b = new StringBuilder("{name: ").append(name).append(", kind: ").append(kind.label)
                    .append(", field: ").append(field.pointer);
            if (kind.rate) {
                b.append(", counts_if: ").append(field == Field.STATUS ? "{at_least: 500}"
                        : countedSteps.size() == 1 ? "{equals: " + countedSteps.iterator().next() + "}"
                        : "{in: [" + String.join(", ", countedSteps.stream().sorted().toList()) + "]}");
            }
            b.append(", ").append(design.replace("MAX", Long.toString(maxPerArm))).append('}');
            return b.toString();
        }
    }

    /**
     * One experiment. Per arm: probabilities of the steps (in the order of {@code steps}), the mean
     * extra latency over {@code baseLatencyMs}, and the share of server errors.
     */
    record Experiment(String id, List<String> arms, double share, List<String> steps, double[][] stepShares,
                      double baseLatencyMs, double[] extraLatencyMs, double[] errorShare,
                      String purchaseStep, double minAmount, double maxAmount, List<Metric> metrics) {
        String control() {
            return arms.get(0);
        }

        boolean perUnit() {
            return metrics.stream().anyMatch(m -> m.kind().perUnit);
        }
    }

    static final List<Experiment> EXPERIMENTS = List.of(
            new Experiment("fare-ranking-2031-04", List.of("classic", "ranker-v2", "ranker-v2-fresh"), 0.40,
                    List.of("results_shown", "fare_opened", "fare_held"),
                    new double[][] {{0.72, 0.25, 0.03}, {0.70, 0.265, 0.035}, {0.71, 0.26, 0.03}},
                    180, new double[] {0, 2, 9}, new double[] {0.008, 0.008, 0.011}, null, 0, 0,
                    List.of(
                            new Metric("search-latency-ms", Kind.EVENT_MEAN, Field.LATENCY, Set.of(),
                                    "role: guardrail, worse: higher, range: {min: 0}, alpha: 0.01, spending: pocock, max_per_arm: MAX, action: page"),
                            new Metric("search-errors", Kind.EVENT_RATE, Field.STATUS, Set.of(),
                                    "role: guardrail, worse: higher, alpha: 0.01, max_per_arm: MAX, action: page"),
                            new Metric("fare-opened", Kind.EVENT_RATE, Field.STEP, Set.of("fare_opened", "fare_held"),
                                    "role: primary, worse: lower, alpha: 0.05, max_per_arm: MAX"))),
            new Experiment("hotel-photo-carousel", List.of("grid", "carousel"), 0.25,
                    List.of("gallery_viewed", "hotel_opened", "hotel_booked"),
                    new double[][] {{0.80, 0.17, 0.03}, {0.79, 0.177, 0.033}},
                    240, new double[] {0, 14}, new double[] {0.005, 0.006}, "hotel_booked", 60, 1200,
                    List.of(
                            new Metric("page-latency-ms", Kind.EVENT_MEAN, Field.LATENCY, Set.of(),
                                    "role: guardrail, worse: higher, range: {min: 0}, alpha: 0.01, max_per_arm: MAX"),
                            new Metric("hotel-booked", Kind.UNIT_RATE, Field.STEP, Set.of("hotel_booked"),
                                    "role: primary, worse: lower, power: 0.8, effect: 0.003, planned_looks: 20"),
                            new Metric("hotel-spend-eur", Kind.UNIT_TOTAL, Field.AMOUNT, Set.of(),
                                    "role: guardrail, worse: lower, range: {min: 0}, alpha: 0.01, max_per_arm: MAX"))),
            new Experiment("seat-map-v3", List.of("legacy", "v3", "v3-lite", "v3-dark"), 0.20,
                    List.of("seat_map_shown", "seat_chosen", "seat_upgraded", "seat_map_closed"),
                    new double[][] {{0.60, 0.30, 0.05, 0.05}, {0.59, 0.31, 0.05, 0.05}, {0.60, 0.30, 0.04, 0.06},
                            {0.60, 0.30, 0.05, 0.05}},
                    95, new double[] {0, 5, -8, 1}, new double[] {0.004, 0.004, 0.004, 0.004}, null, 0, 0,
                    List.of(
                            new Metric("seat-chosen", Kind.EVENT_RATE, Field.STEP, Set.of("seat_chosen", "seat_upgraded"),
                                    "role: primary, worse: lower, max_per_arm: MAX"),
                            new Metric("render-ms", Kind.EVENT_MEAN, Field.LATENCY, Set.of(),
                                    "role: guardrail, worse: higher, range: {min: 0}, spending: hsd:-4, max_per_arm: MAX"))),
            new Experiment("insurance-upsell", List.of("no-offer", "offer-banner", "offer-modal"), 0.15,
                    List.of("checkout_started", "insurance_added", "paid"),
                    new double[][] {{0.575, 0.005, 0.42}, {0.55, 0.05, 0.40}, {0.54, 0.07, 0.39}},
                    310, new double[] {0, 3, 25}, new double[] {0.010, 0.010, 0.016}, "insurance_added", 9, 79,
                    List.of(
                            new Metric("checkout-errors", Kind.EVENT_RATE, Field.STATUS, Set.of(),
                                    "role: guardrail, worse: higher, alpha: 0.01, max_per_arm: MAX, action: page"),
                            new Metric("insurance-added", Kind.UNIT_RATE, Field.STEP, Set.of("insurance_added"),
                                    "role: primary, worse: lower, max_per_arm: MAX"),
                            new Metric("ancillary-spend-eur", Kind.UNIT_TOTAL, Field.AMOUNT, Set.of(),
                                    "role: guardrail, worse: lower, range: {min: 0}, max_per_arm: MAX"))));

    /** 2031-04-14T08:00:00Z, when the invented traffic starts; events are 1 ms apart on average. */
    private static final long START_MILLIS = 1_933_920_000_000L;
    private static final String[] DEVICES = {"ios", "android", "web", "pwa"};
    private static final String[] EIGHTHS = {".0", ".125", ".25", ".375", ".5", ".625", ".75", ".875"};
    private static final String[] QUARTERS = {".0", ".25", ".5", ".75"};
    /** A share of the events comes from a small core of frequent travellers (5% of the pool). */
    private static final double FREQUENT_SHARE = 0.3;

    /** One generated event, reused from event to event. */
    static final class Event {
        int experiment;
        int arm;
        int unit;
        String step;
        int latencyEighths;
        int status;
        /** Amount in quarters of a euro, or -1 when the event carries none. */
        int amountQuarters;
        int device;
        long millis;

        double latency() {
            return latencyEighths / 8.0;
        }

        double amount() {
            return amountQuarters / 4.0;
        }
    }

    private final int units;
    private final int unitDigits;
    private final double[] cumulativeShare;
    private final SplittableRandom random;
    private final StringBuilder text = new StringBuilder(256);
    private long index;

    StreamScenario(int units) {
        this.units = units;
        this.unitDigits = Math.max(7, Integer.toString(units - 1).length());
        this.cumulativeShare = new double[EXPERIMENTS.size()];
        double sum = 0;
        for (int i = 0; i < EXPERIMENTS.size(); i++) {
            sum += EXPERIMENTS.get(i).share();
            cumulativeShare[i] = sum;
        }
        // A fixed stream: every run with the same options writes the same events.
        this.random = new SplittableRandom(0x5C1A_2031_0414L);
    }

    /** The arm of {@code unit} in experiment {@code experiment}: a hash of the pair (SplitMix64's mixer). */
    static int armOf(int unit, int experiment, int arms) {
        long z = unit * 0x9E3779B97F4A7C15L + (experiment + 1) * 0xD1B54A32D192ED03L;
        z = (z ^ (z >>> 30)) * 0xBF58476D1CE4E5B9L;
        z = (z ^ (z >>> 27)) * 0x94D049BB133111EBL;
        z ^= z >>> 31;
        return (int) Math.floorMod(z, (long) arms);
    }

    /** The next event into {@code e}. */
    void next(Event e) {
        double u = random.nextDouble();
        int x = 0;
        while (x < cumulativeShare.length - 1 && u >= cumulativeShare[x]) {
            x++;
        }
        Experiment ex = EXPERIMENTS.get(x);
        e.experiment = x;
        int frequent = Math.max(1, units / 20);
        e.unit = random.nextDouble() < FREQUENT_SHARE ? random.nextInt(frequent) : random.nextInt(units);
        e.arm = armOf(e.unit, x, ex.arms().size());
        double[] shares = ex.stepShares()[e.arm];
        double s = random.nextDouble();
        int k = 0;
        double below = shares[0];
        while (k < shares.length - 1 && s >= below) {
            k++;
            below += shares[k];
        }
        e.step = ex.steps().get(k);
        // Latency: a log-normal-like spread around the arm's mean, kept positive.
        double ms = (ex.baseLatencyMs() + ex.extraLatencyMs()[e.arm]) * Math.exp(0.35 * random.nextGaussian() - 0.06);
        e.latencyEighths = (int) Math.max(1, Math.round(ms * 8));
        e.status = random.nextDouble() < ex.errorShare()[e.arm] ? (random.nextInt(4) == 0 ? 500 : 503) : 200;
        if (ex.purchaseStep() != null && ex.purchaseStep().equals(e.step)) {
            double amount = ex.minAmount() + (ex.maxAmount() - ex.minAmount()) * random.nextDouble();
            e.amountQuarters = (int) Math.round(amount * 4);
        } else {
            e.amountQuarters = -1;
        }
        e.device = random.nextInt(DEVICES.length);
        e.millis = START_MILLIS + index + random.nextInt(3);
        index++;
    }

    /** The record's key: the traveller id, ASCII. */
    byte[] key(Event e) {
        text.setLength(0);
        appendUnit(e.unit);
        return ascii();
    }

    /** The record's value: the event as JSON, ASCII. */
    byte[] json(Event e) {
        Experiment ex = EXPERIMENTS.get(e.experiment);
        StringBuilder b = text;
        b.setLength(0);
        b.append("{\"exp\":{\"id\":\"").append(ex.id()).append("\",\"arm\":\"").append(ex.arms().get(e.arm))
                .append("\"},\"traveller\":\"");
        appendUnit(e.unit);
        b.append("\",\"ts\":").append(e.millis)
                .append(",\"step\":\"").append(e.step)
                .append("\",\"perf\":{\"ms\":").append(e.latencyEighths >> 3).append(EIGHTHS[e.latencyEighths & 7])
                .append(",\"status\":").append(e.status).append('}');
        if (e.amountQuarters >= 0) {
            b.append(",\"basket\":{\"eur\":").append(e.amountQuarters >> 2).append(QUARTERS[e.amountQuarters & 3]).append('}');
        }
        b.append(",\"device\":\"").append(DEVICES[e.device]).append("\"}");
        return ascii();
    }

    private void appendUnit(int unit) {
        text.append("tr-");
        String digits = Integer.toString(unit);
        for (int i = digits.length(); i < unitDigits; i++) {
            text.append('0');
        }
        text.append(digits);
    }

    private byte[] ascii() {
        int n = text.length();
        byte[] out = new byte[n];
        for (int i = 0; i < n; i++) {
            out[i] = (byte) text.charAt(i);
        }
        return out;
    }

    /** The daemon's configuration for this scenario. */
    static String yaml(String bootstrapServers, String prefix, long maxPerArm, int tallyThreads) {
        StringBuilder b = new StringBuilder();
        b.append("# Written by dev.interim.bench.StreamBench: the invented Wendrift Trips traffic on the bench's broker.\n");
        b.append("kafka:\n");
        b.append("  bootstrap_servers: [").append(bootstrapServers).append("]\n");
        b.append("  input_topics: [").append(TOPIC).append("]\n");
        b.append("  decisions_topic: ").append(prefix).append(".decisions\n");
        b.append("  dead_letter_topic: ").append(prefix).append(".dead-letters\n");
        b.append("  state_topic_prefix: ").append(prefix).append(".state\n");
        b.append("  consumer_group_prefix: ").append(prefix).append('\n');
        b.append("  commit_interval: 500ms\n");
        b.append("  tally_threads: ").append(tallyThreads).append('\n');
        b.append("  input_keyed_by_unit: true\n");
        b.append("events:\n");
        b.append("  experiment: /exp/id\n");
        b.append("  arm: /exp/arm\n");
        b.append("  unit: /traveller\n");
        b.append("http:\n");
        b.append("  port: 0\n");
        b.append("experiments:\n");
        for (Experiment e : EXPERIMENTS) {
            b.append("  - id: ").append(e.id()).append('\n');
            b.append("    control: ").append(e.control()).append('\n');
            b.append("    assignment: unit\n");
            b.append("    treatments: [").append(String.join(", ", e.arms().subList(1, e.arms().size()))).append("]\n");
            b.append("    look_every: 1s\n");
            b.append("    min_per_arm: 50\n");
            b.append("    dry_run: true\n");
            b.append("    metrics:\n");
            for (Metric m : e.metrics()) {
                b.append("      - ").append(m.yaml(maxPerArm)).append('\n');
            }
        }
        return b.toString();
    }

    static int arms() {
        return EXPERIMENTS.stream().mapToInt(e -> e.arms().size()).sum();
    }

    static int metrics() {
        return EXPERIMENTS.stream().mapToInt(e -> e.metrics().size()).sum();
    }
}
