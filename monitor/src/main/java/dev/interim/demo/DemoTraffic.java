package dev.interim.demo;

import java.util.SplittableRandom;
import java.util.function.BiConsumer;

/**
 * Synthetic shoppers of the invented "quorvel" checkout: each shopper is assigned to a build by a
 * hash of their id (a third each), browses, attempts a payment (which may fail and takes some
 * time), and places an order when the payment went through and they decide to. candidate-a is as
 * good as stable (a touch better); candidate-b fails more payments, and 1% of its payments take
 * about 400 ms longer (a retried call), which moves their 99th percentile by some 200 ms and their
 * mean by only about 4 ms. In every build, 0.3% of payments stall at the card issuer for seconds;
 * these stalls, far beyond the 99th percentile, make the mean noisy. Every number here is made up
 * for the demonstration.
 */
public final class DemoTraffic {
    public static final String EXPERIMENT = "quorvel-payments-2026-12";
    static final String[] BUILDS = {"stable", "candidate-a", "candidate-b"};
    private static final String[] FAILURES = {"declined_by_gateway", "timeout", "internal_error"};

    /**
     * Per build: payment failure rate, mean and sd of the payment time (ms), the share of payments
     * slowed by a retry and the retry's mean extra time (ms), chance to order after paying.
     */
    private record Profile(double failure, double meanMs, double sdMs, double retried, double retryMs, double order) {}

    private static final Profile[] PROFILES = {
        new Profile(0.010, 180, 60, 0, 0, 0.62),
        new Profile(0.009, 178, 60, 0, 0, 0.62),
        new Profile(0.024, 180, 60, 0.010, 400, 0.60),
    };
    /** Every build: the share of payments that stall at the card issuer, and the median stall (ms, log-normal). */
    private static final double STALLED = 0.003;
    private static final double STALL_MEDIAN_MS = 4000;

    private final SplittableRandom random;
    private long shopper;

    public DemoTraffic(long stream) {
        this.random = new SplittableRandom(stream);
    }

    /** The build a shopper sees: a stable hash of the id, a third each. */
    static int build(String shopperId) {
        return Math.floorMod(shopperId.hashCode() * 0x9E3779B1, 3);
    }

    /** Emits the events of {@code shoppers} new shoppers as (shopper id, JSON), stamped {@code atMillis}. */
    public void shoppers(int shoppers, long atMillis, BiConsumer<String, String> emit) {
        for (int s = 0; s < shoppers; s++) {
            String id = "shopper-" + (shopper++);
            int b = build(id);
            Profile p = PROFILES[b];
            String head = "{\"at\":" + atMillis + ",\"rollout\":\"" + EXPERIMENT + "\",\"build\":\"" + BUILDS[b]
                    + "\",\"shopper\":\"" + id + "\"";
            emit.accept(id, head + ",\"step\":\"basket\"}");
            boolean failed = random.nextDouble() < p.failure();
            double ms = Math.max(5, p.meanMs() + p.sdMs() * gaussian());
            if (random.nextDouble() < STALLED) {
                ms = STALL_MEDIAN_MS * Math.exp(0.5 * gaussian());
            } else if (random.nextDouble() < p.retried()) {
                ms += p.retryMs() + 40 * gaussian();
            }
            String status = failed ? FAILURES[random.nextInt(FAILURES.length)] : "captured";
            emit.accept(id, head + ",\"step\":\"payment\",\"payment\":{\"status\":\"" + status + "\",\"elapsed_ms\":"
                    + String.format(java.util.Locale.ROOT, "%.1f", ms) + "}}");
            if (!failed && random.nextDouble() < p.order()) {
                emit.accept(id, head + ",\"step\":\"order_placed\"}");
            }
        }
    }

    private double gaussian() {
        double u;
        double v;
        double s;
        do {
            u = 2 * random.nextDouble() - 1;
            v = 2 * random.nextDouble() - 1;
            s = u * u + v * v;
        } while (s >= 1 || s == 0);
        return u * Math.sqrt(-2 * Math.log(s) / s);
    }
}
