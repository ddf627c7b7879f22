package dev.interim.validity;

import java.nio.charset.StandardCharsets;
import java.util.SplittableRandom;
import java.util.function.Consumer;

/**
 * Seeded synthetic traffic of the invented shop "quillfen" as JSON event bytes, with known true
 * effects on the five metric kinds (their population values are set by construction below, so the
 * truth is exact, not estimated).
 *
 * <p>Per unit (user): arm by the split (control "base" 80 : treatment "fresh" 20); a number of events N
 * (1 for independent traffic; 1 + Geometric(mean − 1) for clustered); an error propensity p ~ Beta(κm,
 * κ(1 − m)) (mean m); a latency level L ~ lognormal (mean 200 ms); whether the user buys (prob. c); a
 * price level P ~ lognormal (mean 12). Per event: an error with probability p; a latency L·ε, ε
 * lognormal of mean 1; with probability 0.08 a skewed purchase amount (lognormal σ = 1.2, mean 40) else
 * 0 (zero-inflated revenue); a basket of k ∈ {1, 2, 3} items worth k·P·ε'. N is independent of the
 * unit's levels, so a ratio of per-unit sums has the population value of the level's mean: m, 200 ms,
 * 12 per item (the ratio of expectations E[ΣX]/E[ΣY]).
 *
 * <p>The treatment shifts: m by δ_errors; every latency by +δ_latency ms; c by δ_bought; every
 * purchase amount by δ_revenue/(E[N]·0.08) (so the mean total per unit moves by δ_revenue); every
 * item's worth by +δ_basket.
 */
final class Traffic {
    static final double ERROR_MEAN = 0.05;
    static final double ERROR_CONCENTRATION = 4;
    static final double LATENCY_MEAN = 200;
    static final double LATENCY_SIGMA = 0.8;
    static final double BUY = 0.3;
    static final double PURCHASE_SHARE = 0.08;
    static final double PURCHASE_MEAN = 40;
    static final double PRICE_MEAN = 12;
    static final double CONTROL_SHARE = 0.8;

    /** Metric names, in the configuration's order. */
    static final String[] METRICS = {"errors", "latency", "bought", "revenue", "basket"};

    /** Independent events (one per unit) or clustered units with {@code meanEvents} each. */
    record Shape(String name, boolean clustered, double meanEvents) {
        double expectedEvents() {
            return clustered ? meanEvents : 1;
        }
    }

    static final Shape INDEPENDENT = new Shape("independent", false, 1);
    static final Shape CLUSTERED = new Shape("clustered", true, 7);

    /** One event: its arrival time (for interleaving) and its JSON bytes. */
    record Event(double time, byte[] json) {
    }

    private Traffic() {
    }

    /**
     * The events of {@code units} users in arrival order; users arrive one per time unit and spread
     * their events over an exponential span (mean 40 arrivals), so units interleave and a look sees
     * many of them half-way. Generated as they are read ({@link ArrivalOrder}); each iteration
     * starts again from {@code seed}.
     */
    static Iterable<Event> generate(Shape shape, int units, double[] effects, long seed) {
        return () -> {
            SplittableRandom r = new SplittableRandom(seed);
            StringBuilder b = new StringBuilder(200);
            return new ArrivalOrder(units, (u, out) -> unit(shape, effects, r, b, u, out));
        };
    }

    /** One user's events, drawn from {@code r}. */
    private static void unit(Shape shape, double[] effects, SplittableRandom r, StringBuilder b, int u,
                             Consumer<Event> out) {
        double meanN = shape.expectedEvents();
        boolean treated = r.nextDouble() >= CONTROL_SHARE;
        String arm = treated ? "fresh" : "base";
        int n = shape.clustered() ? 1 + geometric(r, shape.meanEvents() - 1) : 1;
        double m = ERROR_MEAN + (treated ? effects[0] : 0);
        double p = beta(r, ERROR_CONCENTRATION * m, ERROR_CONCENTRATION * (1 - m));
        double level = LATENCY_MEAN * Math.exp(LATENCY_SIGMA * gaussian(r) - LATENCY_SIGMA * LATENCY_SIGMA / 2);
        boolean buys = r.nextDouble() < BUY + (treated ? effects[2] : 0);
        double price = PRICE_MEAN * Math.exp(0.5 * gaussian(r) - 0.125);
        double purchaseShift = treated ? effects[3] / (meanN * PURCHASE_SHARE) : 0;
        double start = u;
        for (int i = 0; i < n; i++) {
            double t = start + (i == 0 ? 0 : -40 * Math.log(1 - r.nextDouble()));
            boolean error = r.nextDouble() < p;
            double ms = level * Math.exp(0.3 * gaussian(r) - 0.045) + (treated ? effects[1] : 0);
            double spend = r.nextDouble() < PURCHASE_SHARE
                    ? PURCHASE_MEAN * Math.exp(1.2 * gaussian(r) - 0.72) + purchaseShift : 0;
            int items = 1 + r.nextInt(3);
            double value = items * (price * Math.exp(0.2 * gaussian(r) - 0.02) + (treated ? effects[4] : 0));
            // The purchase step rides on the unit's first event, so a look sees it once the unit is seen.
            String step = buys && i == 0 ? "bought" : "viewed";
            b.setLength(0);
            b.append("{\"x\":\"quillfen\",\"a\":\"").append(arm).append("\",\"u\":\"u").append(u)
                    .append("\",\"status\":\"").append(error ? "error" : "ok")
                    .append("\",\"ms\":").append(ms)
                    .append(",\"step\":\"").append(step)
                    .append("\",\"spend\":").append(spend)
                    .append(",\"value\":").append(value)
                    .append(",\"items\":").append(items).append('}');
            out.accept(new Event(t, b.toString().getBytes(StandardCharsets.UTF_8)));
        }
    }

    static double gaussian(SplittableRandom r) {
        return Math.sqrt(-2 * Math.log(1 - r.nextDouble())) * Math.cos(2 * Math.PI * r.nextDouble());
    }

    /** Failures before the first success, mean {@code mean} (inversion). */
    static int geometric(SplittableRandom r, double mean) {
        double q = mean / (1 + mean);
        return (int) Math.floor(Math.log(1 - r.nextDouble()) / Math.log(q));
    }

    /** Beta(a, b) as G_a/(G_a + G_b) with Marsaglia–Tsang (2000) gammas. */
    static double beta(SplittableRandom r, double a, double b) {
        double x = gamma(r, a);
        double y = gamma(r, b);
        return x / (x + y);
    }

    static double gamma(SplittableRandom r, double shape) {
        if (shape < 1) {
            return gamma(r, shape + 1) * Math.pow(1 - r.nextDouble(), 1 / shape);
        }
        double d = shape - 1.0 / 3;
        double c = 1 / Math.sqrt(9 * d);
        while (true) {
            double z = gaussian(r);
            double v = 1 + c * z;
            if (v <= 0) {
                continue;
            }
            v = v * v * v;
            double u = 1 - r.nextDouble();
            if (Math.log(u) < 0.5 * z * z + d - d * v + d * Math.log(v)) {
                return d * v;
            }
        }
    }
}
