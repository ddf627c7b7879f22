package dev.interim.stats;

/**
 * A running {@link RatioMoments}: Welford's update extended to the co-moment (Welford 1962; the
 * bivariate form as in Chan, Golub &amp; LeVeque 1979), with removal, so that a unit's pair can be
 * replaced when its sums grow. Mutable and not thread-safe; {@link #snapshot()} is what leaves it.
 */
public final class RunningRatioMoments {
    private long count;
    private double meanX = Double.NaN;
    private double meanY = Double.NaN;
    private double m2x;
    private double m2y;
    private double cxy;

    /**
     * Adds one unit's pair.
     *
     * @throws IllegalArgumentException if either value is not finite; the state is then unchanged
     */
    public void accept(double x, double y) {
        finite(x, y);
        if (count == 0) {
            count = 1;
            meanX = x;
            meanY = y;
            return;
        }
        long n = count + 1;
        double dx = x - meanX;
        double dy = y - meanY;
        double mx = meanX + dx / n;
        double my = meanY + dy / n;
        double nx = m2x + dx * (x - mx);
        double ny = m2y + dy * (y - my);
        double nc = cxy + dx * (y - my);
        if (!Double.isFinite(nx) || !Double.isFinite(ny) || !Double.isFinite(nc)) {
            throw new IllegalArgumentException("the pair (" + x + ", " + y + ") is too large in magnitude: the sums of"
                    + " squared deviations overflow a double; rescale the metric");
        }
        count = n;
        meanX = mx;
        meanY = my;
        m2x = nx;
        m2y = ny;
        cxy = nc;
    }

    /**
     * Removes a pair accepted earlier (the update run backwards).
     *
     * @throws IllegalArgumentException if empty or a value is not finite
     */
    public void remove(double x, double y) {
        finite(x, y);
        if (count == 0) {
            throw new IllegalArgumentException("cannot remove a pair from an empty tally");
        }
        if (count == 1) {
            reset();
            return;
        }
        long n = count - 1;
        double mx = (count * meanX - x) / n;
        double my = (count * meanY - y) / n;
        if (n == 1) {
            m2x = 0;
            m2y = 0;
            cxy = 0;
        } else {
            m2x = Math.max(0, m2x - (x - mx) * (x - meanX));
            m2y = Math.max(0, m2y - (y - my) * (y - meanY));
            cxy = cxy - (x - mx) * (y - meanY);
        }
        count = n;
        meanX = mx;
        meanY = my;
    }

    /** Replaces a unit's pair (x0, y0), accepted earlier, by (x1, y1). */
    public void replace(double x0, double y0, double x1, double y1) {
        remove(x0, y0);
        accept(x1, y1);
    }

    /** Units so far. */
    public long count() {
        return count;
    }

    /** An immutable copy of the state. */
    public RatioMoments snapshot() {
        return count == 0 ? RatioMoments.EMPTY : new RatioMoments(count, meanX, meanY, m2x, m2y, cxy);
    }

    /** A running tally that starts from restored moments. */
    public static RunningRatioMoments from(RatioMoments m) {
        Arguments.notNull("moments", m);
        RunningRatioMoments r = new RunningRatioMoments();
        if (m.count() > 0) {
            r.count = m.count();
            r.meanX = m.meanX();
            r.meanY = m.meanY();
            r.m2x = m.sumSquaredDeviationsX();
            r.m2y = m.sumSquaredDeviationsY();
            r.cxy = m.sumCrossDeviations();
        }
        return r;
    }

    private void reset() {
        count = 0;
        meanX = Double.NaN;
        meanY = Double.NaN;
        m2x = 0;
        m2y = 0;
        cxy = 0;
    }

    private static void finite(double x, double y) {
        if (!Double.isFinite(x) || !Double.isFinite(y)) {
            throw new IllegalArgumentException("RunningRatioMoments accepts only finite pairs, got (" + x + ", " + y + ")");
        }
    }
}
