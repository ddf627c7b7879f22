package dev.interim.simulate;

import dev.interim.stats.Probabilities;
import java.util.ArrayList;
import java.util.EnumMap;
import java.util.List;
import java.util.Map;

/**
 * What a design does under one true effect, estimated from simulated runs: how often each decision
 * is reached, how much information (and, at a constant traffic rate, how much of the planned
 * duration) it takes, and at which look runs stop. Every estimate carries its Monte Carlo standard
 * error; quantiles carry an interval ({@link LookQuantile}). Immutable.
 *
 * <p>At a constant rate of traffic the information grows in proportion to time, so the expected
 * information fraction at stopping is also the expected share of the planned duration.
 *
 * @param fractions the information fractions of the looks
 * @param counts runs by way of stopping and look: counts[stop ordinal][look, 0-based]
 */
public record OperatingCharacteristics(double[] fractions, long[][] counts) {

    /** The stopping-look quantiles reported. */
    public static final List<Double> QUANTILES = List.of(0.10, 0.25, 0.50, 0.75, 0.90);
    private static final double Z_95 = 1.959963984540054;

    public OperatingCharacteristics {
        fractions = fractions.clone();
        long[][] copy = new long[counts.length][];
        for (int s = 0; s < counts.length; s++) {
            copy[s] = counts[s].clone();
            if (copy[s].length != fractions.length) {
                throw new IllegalArgumentException("one count per look: " + copy[s].length + " counts, "
                        + fractions.length + " looks");
            }
        }
        counts = copy;
        if (counts.length != Stop.values().length) {
            throw new IllegalArgumentException("counts for " + Stop.values().length + " ways of stopping needed");
        }
    }

    @Override
    public double[] fractions() {
        return fractions.clone();
    }

    @Override
    public long[][] counts() {
        long[][] copy = new long[counts.length][];
        for (int s = 0; s < counts.length; s++) {
            copy[s] = counts[s].clone();
        }
        return copy;
    }

    public int looks() {
        return fractions.length;
    }

    /** The number of runs. */
    public long runs() {
        long n = 0;
        for (long[] row : counts) {
            for (long c : row) {
                n += c;
            }
        }
        return n;
    }

    /** Runs that stopped by {@code stop}, at any look. */
    public long count(Stop stop) {
        long n = 0;
        for (long c : counts[stop.ordinal()]) {
            n += c;
        }
        return n;
    }

    /** Runs that stopped at look {@code look} (1-based), any way. */
    public long stoppedAt(int look) {
        long n = 0;
        for (long[] row : counts) {
            n += row[look - 1];
        }
        return n;
    }

    /** Runs that stopped at look {@code look} (1-based) by {@code stop}. */
    public long stoppedAt(Stop stop, int look) {
        return counts[stop.ordinal()][look - 1];
    }

    /** The probability of each way of stopping. */
    public Map<Stop, Estimate> probabilities() {
        Map<Stop, Estimate> p = new EnumMap<>(Stop.class);
        long n = runs();
        for (Stop s : Stop.values()) {
            p.put(s, Estimate.proportion(count(s), n));
        }
        return p;
    }

    /**
     * The probability of rejecting the null hypothesis (a stop for harm or benefit): the false-stop
     * rate under the null, the power under an effect.
     */
    public Estimate rejection() {
        return Estimate.proportion(count(Stop.HARM) + count(Stop.BENEFIT), runs());
    }

    /** The expected information fraction at stopping (= share of the planned duration at constant traffic). */
    public Estimate expectedFraction() {
        return mean(fractions);
    }

    /** The expected stopping look, 1-based. */
    public Estimate expectedLook() {
        double[] numbers = new double[looks()];
        for (int k = 0; k < numbers.length; k++) {
            numbers[k] = k + 1;
        }
        return mean(numbers);
    }

    /** The stopping-look quantiles of {@link #QUANTILES}. */
    public List<LookQuantile> quantiles() {
        List<LookQuantile> q = new ArrayList<>();
        for (double p : QUANTILES) {
            q.add(quantile(p));
        }
        return q;
    }

    /** The p-quantile of the stopping look, 0 &lt; p &lt; 1, with its 95% Monte Carlo interval. */
    public LookQuantile quantile(double p) {
        Probabilities.requireOpen(p, "a quantile's probability");
        long n = runs();
        double spread = Z_95 * Math.sqrt(n * p * (1 - p));
        long rank = clamp((long) Math.ceil(n * p), n);
        long lowRank = clamp((long) Math.floor(n * p - spread), n);
        long highRank = clamp((long) Math.ceil(n * p + spread), n);
        return new LookQuantile(p, lookOfRank(rank), lookOfRank(lowRank), lookOfRank(highRank));
    }

    /** The look (1-based) of the run ranked {@code rank} (1-based) by stopping look. */
    private int lookOfRank(long rank) {
        long cumulative = 0;
        for (int k = 1; k <= looks(); k++) {
            cumulative += stoppedAt(k);
            if (cumulative >= rank) {
                return k;
            }
        }
        return looks();
    }

    private static long clamp(long rank, long n) {
        return Math.max(1, Math.min(n, rank));
    }

    /** Mean over runs of a value per stopping look, and s/√N (two passes, for accuracy). */
    private Estimate mean(double[] valueAtLook) {
        long n = runs();
        double sum = 0;
        for (int k = 0; k < looks(); k++) {
            sum += stoppedAt(k + 1) * valueAtLook[k];
        }
        double mean = sum / n;
        if (n < 2) {
            return new Estimate(mean, Double.NaN);
        }
        double squares = 0;
        for (int k = 0; k < looks(); k++) {
            double d = valueAtLook[k] - mean;
            squares += stoppedAt(k + 1) * d * d;
        }
        return new Estimate(mean, Math.sqrt(squares / (n - 1) / n));
    }
}
