package dev.interim.sequential;

import java.util.Arrays;

/**
 * The sub-density of the standardized statistic Z_k on the continuation region after look k: the
 * density of Z_k restricted to the sample paths that have not stopped at looks 1..k. Its integral is
 * the probability of continuing past look k.
 *
 * <p>Method: Jennison & Turnbull (2000), ch. 19. The score S_k = Z_k·√t_k (information in units of
 * the planned maximum) has independent normal increments with mean η·Δt and variance Δt, where η is
 * the drift (θ·√I_max; 0 under the null). The density is held on their grid (6r − 1 points with
 * spacing 3/(2r) in the centre and logarithmic tails, cut at the boundaries, midpoints added) and
 * carried to the next look by integrating the Gaussian transition kernel.
 *
 * <p>Two integration paths, chosen per look. When the kernel is wide compared with the grid (the
 * usual case of a few planned looks), Simpson's rule on the grid, as in the book. When it is narrow
 * (many looks with small information increments, the common case of continuous monitoring, and the
 * limit of a look that adds almost nothing), Simpson's rule would alias the kernel; instead the
 * density is interpolated by the quadratic through each Simpson panel and integrated exactly
 * against the kernel with closed forms in Φ and φ, over the few panels the kernel reaches. Either
 * way one look costs the same at look 10 and at look 10,000: only this density is carried forward.
 *
 * <p>Immutable. Not part of the public API: {@link BoundaryRecursion} drives it.
 */
final class SubDensity {
    /** Kernel half-width in standard deviations beyond which its mass (< 1e-19) is ignored. */
    private static final double KERNEL_REACH = 9.0;
    /** Simpson's rule is used only when the kernel spans at least this many central grid steps. */
    private static final double WIDE_KERNEL_STEPS = 6.0;

    final double fraction;
    final double drift;
    private final int r;
    /** Grid points (odd count, panels [z[2j], z[2j+2]] with midpoints z[2j+1]); empty if nothing continues. */
    private final double[] z;
    private final double[] f;
    private final double[] weight;
    /** Mass of the panels before panel j: prefix[j]; prefix[panels] is the total mass. */
    private final double[] prefix;

    private SubDensity(double fraction, double drift, int r, double[] z, double[] f) {
        this.fraction = fraction;
        this.drift = drift;
        this.r = r;
        this.z = z;
        this.f = f;
        this.weight = simpsonWeights(z);
        int panels = panels();
        this.prefix = new double[panels + 1];
        for (int j = 0; j < panels; j++) {
            int i = 2 * j;
            prefix[j + 1] = prefix[j] + (z[i + 2] - z[i]) / 6 * (f[i] + 4 * f[i + 1] + f[i + 2]);
        }
    }

    /** The state before the first look: no information, the score is 0 with certainty. */
    static SubDensity origin(double drift, int r) {
        return new SubDensity(0, drift, r, new double[0], new double[0]);
    }

    boolean isOrigin() {
        return fraction == 0;
    }

    /** Probability of having continued past every look so far. */
    double mass() {
        return isOrigin() ? 1 : prefix[panels()];
    }

    int gridSize() {
        return z.length;
    }

    /** P(continued so far and Z ≥ b at fraction t1 > fraction). */
    double upperTail(double t1, double b) {
        if (b == Double.POSITIVE_INFINITY) {
            return 0;
        }
        if (isOrigin()) {
            return StandardNormal.sf(b - drift * Math.sqrt(t1));
        }
        Kernel k = kernel(t1);
        double c = k.centre(b);
        if (z.length == 0) {
            return 0;
        }
        if (!k.narrow) {
            double sum = 0;
            for (int i = 0; i < z.length; i++) {
                sum += weight[i] * f[i] * StandardNormal.cdf((z[i] - c) / k.s);
            }
            return sum;
        }
        return exactUpper(c, k.s);
    }

    /** P(continued so far and Z ≤ a at fraction t1 > fraction). */
    double lowerTail(double t1, double a) {
        if (a == Double.NEGATIVE_INFINITY) {
            return 0;
        }
        if (isOrigin()) {
            return StandardNormal.cdf(a - drift * Math.sqrt(t1));
        }
        Kernel k = kernel(t1);
        double c = k.centre(a);
        if (z.length == 0) {
            return 0;
        }
        if (!k.narrow) {
            double sum = 0;
            for (int i = 0; i < z.length; i++) {
                sum += weight[i] * f[i] * StandardNormal.sf((z[i] - c) / k.s);
            }
            return sum;
        }
        return mass() - exactUpper(c, k.s);
    }

    /** Density at x of Z at fraction t1 on the paths that continued so far (not yet cut at t1). */
    double densityAt(double t1, double x) {
        if (isOrigin()) {
            return StandardNormal.pdf(x - drift * Math.sqrt(t1));
        }
        if (z.length == 0) {
            return 0;
        }
        return densityAt(kernel(t1), x);
    }

    /** The sub-density at fraction t1 > fraction on the continuation region (lower, upper). */
    SubDensity advance(double t1, double lower, double upper) {
        double[] grid = grid(drift * Math.sqrt(t1), lower, upper, r);
        double[] values = new double[grid.length];
        if (isOrigin()) {
            double mean = drift * Math.sqrt(t1);
            for (int i = 0; i < grid.length; i++) {
                values[i] = StandardNormal.pdf(grid[i] - mean);
            }
        } else if (z.length > 0) {
            Kernel k = kernel(t1);
            for (int i = 0; i < grid.length; i++) {
                values[i] = densityAt(k, grid[i]);
            }
        }
        return new SubDensity(t1, drift, r, grid, values);
    }

    // ---- the transition kernel ---------------------------------------------------------------

    /**
     * From u = Z_k to x = Z at t1: x·√t1 = u·√t_k + N(η·Δ, Δ). As a function of u the kernel is
     * normal with centre (x·√t1 − η·Δ)/√t_k and standard deviation s = √(Δ/t_k); the density of x
     * carries the Jacobian ρ = √(t1/t_k).
     */
    private Kernel kernel(double t1) {
        double delta = t1 - fraction;
        if (!(delta > 0)) {
            throw new IllegalArgumentException("a look must add information: " + t1 + " after " + fraction);
        }
        double s = Math.sqrt(delta / fraction);
        double step = 3.0 / (4 * r);
        return new Kernel(Math.sqrt(t1 / fraction), drift * delta / Math.sqrt(fraction), s,
                s < WIDE_KERNEL_STEPS * step);
    }

    private static final class Kernel {
        final double rho;
        final double shift;
        final double s;
        final boolean narrow;
        final double scale;

        Kernel(double rho, double shift, double s, boolean narrow) {
            this.rho = rho;
            this.shift = shift;
            this.s = s;
            this.narrow = narrow;
            this.scale = rho; // x·√t1/√t_k = x·ρ
        }

        double centre(double x) {
            return x * scale - shift;
        }
    }

    private double densityAt(Kernel k, double x) {
        double c = k.centre(x);
        if (!k.narrow) {
            double sum = 0;
            double inv = 1 / k.s;
            for (int i = 0; i < z.length; i++) {
                sum += weight[i] * f[i] * StandardNormal.pdf((z[i] - c) * inv);
            }
            return k.rho * inv * sum;
        }
        return k.rho * exactDensity(c, k.s);
    }

    // ---- exact integration against the piecewise-quadratic interpolant --------------------------

    private int panels() {
        return z.length == 0 ? 0 : (z.length - 1) / 2;
    }

    /** ∫ q(u)·φ((u − c)/s)/s du over the panels the kernel reaches. */
    private double exactDensity(double c, double s) {
        double lo = c - KERNEL_REACH * s;
        double hi = c + KERNEL_REACH * s;
        int first = panelIndex(lo);
        double sum = 0;
        for (int j = first; j < panels() && z[2 * j] < hi; j++) {
            double p = Math.max(z[2 * j], lo);
            double q = Math.min(z[2 * j + 2], hi);
            if (q <= p) {
                continue;
            }
            double[] a = inKernelUnits(j, c, s);
            double w1 = (p - c) / s;
            double w2 = (q - c) / s;
            double phi1 = StandardNormal.pdf(w1);
            double phi2 = StandardNormal.pdf(w2);
            double m0 = StandardNormal.cdf(w2) - StandardNormal.cdf(w1);
            double m1 = phi1 - phi2;
            double m2 = m0 + w1 * phi1 - w2 * phi2;
            sum += a[0] * m0 + a[1] * m1 + a[2] * m2;
        }
        return Math.max(0, sum);
    }

    /** ∫ q(u)·Φ((u − c)/s) du: the mass beyond the kernel's reach plus closed forms inside it. */
    private double exactUpper(double c, double s) {
        double lo = c - KERNEL_REACH * s;
        double hi = c + KERNEL_REACH * s;
        int panels = panels();
        int last = panelIndex(hi);
        double sum = 0;
        if (hi < z[z.length - 1]) {
            double top = Math.max(hi, z[0]);
            sum += prefix[panels] - prefix[last + 1] + polynomialIntegral(last, top, z[2 * last + 2]);
        }
        for (int j = panelIndex(lo); j < panels && z[2 * j] < hi; j++) {
            double p = Math.max(z[2 * j], lo);
            double q = Math.min(z[2 * j + 2], hi);
            if (q <= p) {
                continue;
            }
            double[] a = inKernelUnits(j, c, s);
            double w1 = (p - c) / s;
            double w2 = (q - c) / s;
            sum += s * (a[0] * (g0(w2) - g0(w1)) + a[1] * (g1(w2) - g1(w1)) + a[2] * (g2(w2) - g2(w1)));
        }
        return Math.min(mass(), Math.max(0, sum));
    }

    /** Index of the panel containing x, clamped to the panels that exist. */
    private int panelIndex(double x) {
        int panels = panels();
        int lo = 0;
        int hi = panels - 1;
        while (lo < hi) {
            int mid = (lo + hi + 1) >>> 1;
            if (z[2 * mid] <= x) {
                lo = mid;
            } else {
                hi = mid - 1;
            }
        }
        return lo;
    }

    /**
     * The quadratic through panel j, A + B·x + C·x² with x = u − midpoint, rewritten in the kernel's
     * standard units w = (u − c)/s: α0 + α1·w + α2·w².
     */
    private double[] inKernelUnits(int j, double c, double s) {
        int i = 2 * j;
        double h = (z[i + 2] - z[i]) / 2;
        double a = f[i + 1];
        double b = (f[i + 2] - f[i]) / (2 * h);
        double cc = (f[i] - 2 * f[i + 1] + f[i + 2]) / (2 * h * h);
        double d = c - z[i + 1];
        return new double[] {a + b * d + cc * d * d, s * (b + 2 * cc * d), cc * s * s};
    }

    /** ∫ from p to q of panel j's quadratic. */
    private double polynomialIntegral(int j, double p, double q) {
        if (q <= p) {
            return 0;
        }
        int i = 2 * j;
        double m = z[i + 1];
        double h = (z[i + 2] - z[i]) / 2;
        double a = f[i + 1];
        double b = (f[i + 2] - f[i]) / (2 * h);
        double cc = (f[i] - 2 * f[i + 1] + f[i + 2]) / (2 * h * h);
        double x1 = p - m;
        double x2 = q - m;
        return a * (x2 - x1) + b * (x2 * x2 - x1 * x1) / 2 + cc * (x2 * x2 * x2 - x1 * x1 * x1) / 3;
    }

    // Antiderivatives of w^j·Φ(w); verified by differentiation in the comments of SubDensityTest.
    private static double g0(double w) {
        return w * StandardNormal.cdf(w) + StandardNormal.pdf(w);
    }

    private static double g1(double w) {
        return ((w * w - 1) * StandardNormal.cdf(w) + w * StandardNormal.pdf(w)) / 2;
    }

    private static double g2(double w) {
        return (w * w * w * StandardNormal.cdf(w) + (w * w + 2) * StandardNormal.pdf(w)) / 3;
    }

    // ---- the grid --------------------------------------------------------------------------------

    /**
     * Jennison & Turnbull (2000), §19.2.1: 6r − 1 points around the mean, spacing 3/(2r) on
     * mean ± 3 and logarithmic beyond to mean ± (3 + 4·ln r); points outside (lower, upper) are
     * replaced by the boundaries themselves; then panel midpoints are added for Simpson's rule.
     * Returns an empty grid when the continuation region misses the grid entirely.
     */
    static double[] grid(double mean, double lower, double upper, int r) {
        int n = 6 * r - 1;
        double[] x = new double[n];
        for (int i = 1; i <= n; i++) {
            double v;
            if (i < r) {
                v = -3 - 4 * Math.log((double) r / i);
            } else if (i <= 5 * r) {
                v = -3 + 3.0 * (i - r) / (2 * r);
            } else {
                v = 3 + 4 * Math.log((double) r / (6 * r - i));
            }
            x[i - 1] = mean + v;
        }
        double from = Math.max(lower, x[0]);
        double to = Math.min(upper, x[n - 1]);
        if (!(to > from)) {
            return new double[0];
        }
        double[] kept = new double[n + 2];
        int count = 0;
        kept[count++] = from;
        for (double v : x) {
            if (v > from && v < to) {
                kept[count++] = v;
            }
        }
        kept[count++] = to;
        double[] out = new double[2 * count - 1];
        for (int i = 0; i < count; i++) {
            out[2 * i] = kept[i];
            if (i + 1 < count) {
                out[2 * i + 1] = (kept[i] + kept[i + 1]) / 2;
            }
        }
        return out;
    }

    private static double[] simpsonWeights(double[] z) {
        double[] w = new double[z.length];
        for (int i = 0; i + 2 < z.length; i += 2) {
            double width = (z[i + 2] - z[i]) / 6;
            w[i] += width;
            w[i + 1] += 4 * width;
            w[i + 2] += width;
        }
        return w;
    }

    @Override
    public String toString() {
        return "SubDensity[t=" + fraction + ", drift=" + drift + ", points=" + z.length
                + ", mass=" + mass() + ", range=" + (z.length == 0 ? "[]" : Arrays.toString(
                        new double[] {z[0], z[z.length - 1]})) + "]";
    }
}
