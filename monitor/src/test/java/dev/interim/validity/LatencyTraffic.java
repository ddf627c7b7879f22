package dev.interim.validity;

import java.nio.charset.StandardCharsets;
import java.util.SplittableRandom;
import java.util.function.Consumer;

/**
 * Seeded synthetic request latencies of the invented service "vellumd" as JSON event bytes, for the
 * quantile checks ({@link QuantileValidityTest}).
 *
 * <p>Per unit (a client): arm by the split (control "steady" : treatment "brisk"); a number of requests
 * N (1 for independent traffic; 1 + Geometric(mean − 1) for clustered); a latency level L, lognormal
 * with log-sd σ_unit (0 for independent traffic). Per request: with probability {@value #ZERO_SHARE} a
 * 0 (served from a cache); otherwise L·ε with ε lognormal of log-sd σ_event, scaled so that the
 * non-zero latencies have mean {@value #MEAN_MS} ms and log-sd √(σ_unit² + σ_event²) = 0.7 in both
 * shapes (median about 59 ms, 80% of them between 24 and 145 ms, control's p99 about 300 ms).
 *
 * <p>The treatment's only change (when asked): a share {@code slowShare} of its requests, chosen
 * independently, take {@code slowMs} ms longer. Under no effect both arms draw from the same
 * distribution, so every quantile's true difference is exactly 0.
 */
final class LatencyTraffic {
    static final double MEAN_MS = 75;
    static final double SIGMA = 0.7;
    static final double ZERO_SHARE = 0.03;

    /** Independent requests (one per unit) or clustered units of {@code meanEvents} requests each. */
    record Shape(String name, boolean clustered, double meanEvents, double unitSigma, double treatmentShare) {
        double eventSigma() {
            return Math.sqrt(SIGMA * SIGMA - unitSigma * unitSigma);
        }
    }

    /** Independent requests, 50:50. */
    static final Shape INDEPENDENT = new Shape("independent", false, 1, 0, 0.5);
    /** Independent requests, 80:20. */
    static final Shape INDEPENDENT_UNEVEN = new Shape("independent 80:20", false, 1, 0, 0.2);
    /** Clients of 6 requests on average, each with its own level (log-sd 0.5 of the 0.7), 80:20. */
    static final Shape CLUSTERED_UNEVEN = new Shape("clustered 80:20", true, 6, 0.5, 0.2);
    /** The same clients, 50:50. */
    static final Shape CLUSTERED = new Shape("clustered", true, 6, 0.5, 0.5);

    private LatencyTraffic() {
    }

    /**
     * The requests of {@code units} clients in arrival order: one client arrives per time unit and
     * spreads its requests over an exponential span (mean 40 arrivals), so clients interleave.
     * Generated as they are read ({@link ArrivalOrder}); each iteration starts again from {@code seed}.
     */
    static Iterable<Traffic.Event> generate(Shape shape, int units, double slowShare, double slowMs, long seed) {
        return () -> {
            SplittableRandom r = new SplittableRandom(seed);
            StringBuilder b = new StringBuilder(80);
            return new ArrivalOrder(units, (u, out) -> client(shape, slowShare, slowMs, r, b, u, out));
        };
    }

    /** One client's requests, drawn from {@code r}. */
    private static void client(Shape shape, double slowShare, double slowMs, SplittableRandom r, StringBuilder b, int u,
                               Consumer<Traffic.Event> out) {
        double unitSigma = shape.unitSigma();
        double eventSigma = shape.eventSigma();
        // E[L·ε] = MEAN_MS: each lognormal factor has mean 1 after its −σ²/2.
        boolean treated = r.nextDouble() < shape.treatmentShare();
        int n = shape.clustered() ? 1 + Traffic.geometric(r, shape.meanEvents() - 1) : 1;
        double level = MEAN_MS * Math.exp(unitSigma * Traffic.gaussian(r) - unitSigma * unitSigma / 2);
        for (int i = 0; i < n; i++) {
            double t = u + (i == 0 ? 0 : -40 * Math.log(1 - r.nextDouble()));
            double ms = r.nextDouble() < ZERO_SHARE ? 0
                    : level * Math.exp(eventSigma * Traffic.gaussian(r) - eventSigma * eventSigma / 2);
            if (treated && slowShare > 0 && r.nextDouble() < slowShare) {
                ms += slowMs;
            }
            b.setLength(0);
            b.append("{\"x\":\"vellumd\",\"a\":\"").append(treated ? "brisk" : "steady").append("\",\"u\":\"c")
                    .append(u).append("\",\"ms\":");
            appendMicros(b, ms);
            b.append('}');
            out.accept(new Traffic.Event(t, b.toString().getBytes(StandardCharsets.UTF_8)));
        }
    }

    /** Milliseconds to the microsecond, as a latency log writes them ("61.237"). */
    private static void appendMicros(StringBuilder b, double ms) {
        long us = Math.round(ms * 1000);
        b.append(us / 1000).append('.');
        long frac = us % 1000;
        if (frac < 100) {
            b.append('0');
        }
        if (frac < 10) {
            b.append('0');
        }
        b.append(frac);
    }
}
