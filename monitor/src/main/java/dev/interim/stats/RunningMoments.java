package dev.interim.stats;

/**
 * A running count, mean and sum of squared deviations, updated one observation at a time.
 *
 * <p><b>Mutable and not thread-safe:</b> confine an instance to one thread (a partition's tally) and
 * hand out {@link #snapshot()}s, which are immutable.
 *
 * <p>The update is Welford's (1962), "Note on a method for calculating corrected sums of squares
 * and products", Technometrics 4(3):419–420: it keeps the deviation from the running mean, so the
 * variance of values like 10,000,000.1 ± 0.1 loses no digits to cancellation. Instances merge with
 * the pairwise formula of Chan, Golub &amp; LeVeque (1983), see {@link Moments#plus}.
 *
 * <p>Empty state: count 0, mean NaN. Non-finite input is refused rather than absorbed, because one
 * NaN would silently poison every later look.
 */
public final class RunningMoments {

    private long count;
    private double mean = Double.NaN;
    /** The part of the exact running mean that {@code mean} cannot hold (see {@link Moments}). */
    private double meanResidual;
    private double sumSquaredDeviations;

    /**
     * Adds one observation.
     *
     * @throws IllegalArgumentException if {@code value} is NaN or infinite, or so large that the sum
     *                                  of squared deviations would overflow; the state is then unchanged
     */
    public void accept(double value) {
        if (!Double.isFinite(value)) {
            throw new IllegalArgumentException("RunningMoments accepts only finite values, got " + value
                    + "; filter out or map missing and invalid measurements before accepting them");
        }
        if (count == 0) {
            count = 1;
            mean = value;
            meanResidual = 0;
            return;
        }
        long n = Math.addExact(count, 1);
        // Welford's update on the double-double mean: the deviations are taken from mean + residual.
        double delta = (value - mean) - meanResidual;
        double[] newMean = Moments.twoSum(mean, meanResidual + delta / n);
        double newM2 = sumSquaredDeviations + delta * ((value - newMean[0]) - newMean[1]);
        // Checked before committing so that an overflow leaves the tally as it was.
        if (!Double.isFinite(newMean[0]) || !Double.isFinite(newM2)) {
            throw new IllegalArgumentException("value " + value + " is too large in magnitude: the sum of squared"
                    + " deviations overflows a double; rescale the metric (e.g. to other units)");
        }
        count = n;
        mean = newMean[0];
        meanResidual = newMean[1];
        sumSquaredDeviations = newM2;
    }

    /**
     * Removes one observation accepted earlier (Welford's update run backwards), for tallies whose
     * observations change — a unit's running total is removed and accepted again when it grows.
     * Removal loses the extra digits of the mean (its residual is reset), which is harmless for
     * values of ordinary size.
     *
     * @throws IllegalArgumentException if the tally is empty or the value is not finite
     */
    public void remove(double value) {
        if (!Double.isFinite(value)) {
            throw new IllegalArgumentException("RunningMoments can only remove finite values, got " + value);
        }
        if (count == 0) {
            throw new IllegalArgumentException("cannot remove a value from an empty tally");
        }
        if (count == 1) {
            count = 0;
            mean = Double.NaN;
            meanResidual = 0;
            sumSquaredDeviations = 0;
            return;
        }
        long n = count - 1;
        double exactMean = mean + meanResidual;
        double delta = value - exactMean;
        double newMean = exactMean - delta / n;
        sumSquaredDeviations = Math.max(0, sumSquaredDeviations - delta * (value - newMean));
        if (n == 1) {
            sumSquaredDeviations = 0;
        }
        count = n;
        mean = newMean;
        meanResidual = 0;
    }

    /**
     * Merges {@code other} (a tally of a disjoint sample) into this one; {@code other} is unchanged.
     *
     * @return this
     */
    public RunningMoments combine(RunningMoments other) {
        Moments merged = snapshot().plus(Arguments.notNull("other", other).snapshot());
        count = merged.count();
        mean = merged.mean();
        meanResidual = merged.meanResidual();
        sumSquaredDeviations = merged.sumSquaredDeviations();
        return this;
    }

    /** A running tally that starts from {@code moments} (restored state). */
    public static RunningMoments from(Moments moments) {
        RunningMoments r = new RunningMoments();
        Arguments.notNull("moments", moments);
        r.count = moments.count();
        r.mean = moments.mean();
        r.meanResidual = moments.meanResidual();
        r.sumSquaredDeviations = moments.sumSquaredDeviations();
        return r;
    }

    /** Number of observations accepted so far. */
    public long count() {
        return count;
    }

    /** Running mean; NaN while empty. */
    public double mean() {
        return mean;
    }

    /** An immutable copy of the current state. */
    public Moments snapshot() {
        return count == 0 ? Moments.EMPTY : new Moments(count, mean, sumSquaredDeviations, meanResidual);
    }
}
