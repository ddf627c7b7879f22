package dev.interim.demo;

import java.util.SplittableRandom;
import java.util.function.BiConsumer;

/**
 * Synthetic shoppers of the invented "quorvel" checkout: each shopper is assigned to a build by a
 * hash of their id (a third each), browses, attempts a payment (which may fail and takes some
 * time), and places an order when the payment went through and they decide to. candidate-a is as
 * good as stable (a touch better); candidate-b fails more payments and is slower. Every number
 * here is made up for the demonstration.
 */
public final class DemoTraffic {
    public static final String EXPERIMENT = "quorvel-payments-2026-12";
    static final String[] BUILDS = {"stable", "candidate-a", "candidate-b"};
    private static final String[] FAILURES = {"declined_by_gateway", "timeout", "internal_error"};

    /** Per build: payment failure rate, mean and sd of the payment time (ms), chance to order after paying. */
    private record Profile(double failure, double meanMs, double sdMs, double order) {}

    private static final Profile[] PROFILES = {
        new Profile(0.010, 180, 60, 0.62),
        new Profile(0.009, 178, 60, 0.62),
        new Profile(0.024, 196, 70, 0.60),
    };

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
