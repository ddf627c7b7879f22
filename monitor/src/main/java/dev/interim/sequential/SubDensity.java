package dev.interim.sequential;

/**
 * The sub-density of the standardized statistic Z_k on the continuation region after look k: the
 * density of Z_k restricted to the sample paths that have not stopped at looks 1..k. Its integral is
 * the probability of continuing past look k.
 *
 * <p>Method: the recursion of Jennison & Turnbull (2000), ch. 19. The score S_k = Z_k·√t_k
 * (information in units of the planned maximum) has independent normal increments with mean η·Δt
 * and variance Δt, η being the drift (θ·√I_max; 0 under the null). The density is carried from one
 * look to the next by integrating the Gaussian transition kernel against it.
 *
 * <p>Representation. The book holds the density on a fixed grid and integrates by Simpson's rule,
 * which is exact enough when the kernel is wide compared with the grid (a few planned looks) but
 * aliases it when the kernel is narrow — the case of continuous monitoring, where thousands of looks
 * each add a sliver of information, and the sharp layer that each cut leaves near a boundary. Here
 * the density is a C¹ piecewise-cubic Hermite interpolant whose node values and slopes are computed
 * exactly from the previous look (cubic interpolated propagation): narrow kernels are integrated in
 * closed form against the cubic of each cell (moments of φ and antiderivatives of w^j·Φ(w)),
 * wide ones by the trapezoidal rule with end corrections, exact for cubics. Cells are bisected until
 * the interpolant reproduces the exact density at their midpoints, so the layers left by the cuts are
 * resolved at their own scale, however small the increments. The node count does not grow with the
 * number of looks: one more look costs the same at look 10 and at look 10,000.
 *
 * <p>Immutable. Package-private: {@link SequentialMonitor} and {@link CrossingProbabilities} drive it.
 */
final class SubDensity {
    /** Kernel reach in standard deviations; the mass beyond (< 2e-19) is ignored. */
    private static final double REACH = 9.0;
    /** The grid spans the mean ± this many units of Z (φ(9) ≈ 1e-18). */
    private static final double SPAN = 9.0;
    /** Uniform spacing on the mean ± CORE; beyond, the cells grow geometrically. */
    private static final double CORE = 4.0;
    private static final double GROWTH = 1.15;
    /** A cell is bisected while its midpoint error times its width exceeds this. */
    private static final double CELL_TOLERANCE = 1e-10;
    private static final double SMALLEST_CELL = 1e-7;
    /** A cell missing by at most this many tolerances is halved once, its halves taken unchecked. */
    private static final double HALVES_TRUSTED = 10.0;
    /** The trapezoidal path needs the kernel to span at least this many central cells. */
    private static final double WIDE_KERNEL_CELLS = 1.5;
    /** A kernel at least this many central cells wide smooths the density enough to skip bisection. */
    private static final double SMOOTHING_CELLS = 10.0;

    final double fraction;
    final double drift;
    private final int resolution;
    private final double spacing;
    private final double[] x;
    private final double[] f;
    private final double[] d;
    /** prefix[i]: mass of the cells left of node i; suffix[i]: right of it (each summed from its own end, so small tails keep their digits). */
    private final double[] prefix;
    private final double[] suffix;
    /**
     * The node terms of the wide-kernel density, fixed for this sub-density. The corrected
     * trapezoidal rule is ∫g ≈ Σ weight[i]·g(x_i) + slopeWeight[i]·g'(x_i); with g = f·K it needs
     * weight·f·K + slopeWeight·(f'·K + f·K'), that is valueWeight·K + fSlopeWeight·K'.
     */
    private final double[] valueWeight;
    private final double[] fSlopeWeight;
    /**
     * The steps between nodes, by class: stepClass[i] indexes, in {@link #steps}, the step from node i
     * to node i + 1 (equal steps share a class). Along a run of equal steps φ is carried
     * geometrically; only where the step changes does an exponential have to be computed.
     */
    private final int[] stepClass;
    private final double[] steps;
    /** Power-basis coefficients of cell i's cubic about x_i beyond f and d: f + d·y + quad·y² + cube·y³. */
    private final double[] quad;
    private final double[] cube;

    private SubDensity(double fraction, double drift, int resolution, double[] x, double[] f, double[] d) {
        this.fraction = fraction;
        this.drift = drift;
        this.resolution = resolution;
        this.spacing = spacing(resolution);
        this.x = x;
        this.f = f;
        this.d = d;
        int n = x.length;
        this.prefix = new double[n];
        this.suffix = new double[n];
        double[] weight = new double[n];
        double[] slopeWeight = new double[n];
        for (int i = 0; i + 1 < n; i++) {
            double h = x[i + 1] - x[i];
            prefix[i + 1] = prefix[i] + cellMass(i);
            weight[i] += h / 2;
            weight[i + 1] += h / 2;
            slopeWeight[i] += h * h / 12;
            slopeWeight[i + 1] -= h * h / 12;
        }
        for (int i = n - 2; i >= 0; i--) {
            suffix[i] = suffix[i + 1] + cellMass(i);
        }
        this.valueWeight = new double[n];
        this.fSlopeWeight = new double[n];
        this.stepClass = new int[n];
        double[] distinct = new double[16];
        int classes = 0;
        for (int i = 0; i < n; i++) {
            valueWeight[i] = weight[i] * f[i] + slopeWeight[i] * d[i];
            fSlopeWeight[i] = slopeWeight[i] * f[i];
            if (i + 1 < n) {
                double step = x[i + 1] - x[i];
                int k = classes - 1;
                // Steps repeat in runs, and bisected cells come back to a few earlier sizes.
                while (k >= 0 && Math.abs(distinct[k] - step) > 1e-13 * step) {
                    k--;
                }
                if (k < 0) {
                    if (classes == distinct.length) {
                        distinct = java.util.Arrays.copyOf(distinct, 2 * classes);
                    }
                    distinct[classes] = step;
                    k = classes++;
                }
                stepClass[i] = k;
            }
        }
        this.steps = java.util.Arrays.copyOf(distinct, classes);
        this.quad = new double[n];
        this.cube = new double[n];
        for (int i = 0; i + 1 < n; i++) {
            double h = x[i + 1] - x[i];
            double secant = (f[i + 1] - f[i]) / h;
            quad[i] = (3 * secant - 2 * d[i] - d[i + 1]) / h;
            cube[i] = (d[i] + d[i + 1] - 2 * secant) / (h * h);
        }
    }

    /** Central grid spacing for grid parameter r: 0.8/r (r = 16 gives 0.05). */
    static double spacing(int resolution) {
        return 0.8 / resolution;
    }

    /** Everything that defines this sub-density: what a restarted monitor needs to go on exactly. */
    record State(double fraction, double drift, int resolution, double[] x, double[] f, double[] d) {
        public State {
            if (x.length != f.length || x.length != d.length) {
                throw new IllegalArgumentException("a sub-density state needs as many values and slopes as nodes");
            }
            x = x.clone();
            f = f.clone();
            d = d.clone();
        }
    }

    State state() {
        return new State(fraction, drift, resolution, x, f, d);
    }

    static SubDensity of(State s) {
        return new SubDensity(s.fraction(), s.drift(), s.resolution(), s.x().clone(), s.f().clone(), s.d().clone());
    }

    /** The state before the first look: no information, the score is 0 with certainty. */
    static SubDensity origin(double drift, int resolution) {
        return new SubDensity(0, drift, resolution, new double[0], new double[0], new double[0]);
    }

    boolean isOrigin() {
        return fraction == 0;
    }

    /** Probability of having continued past every look so far. */
    double mass() {
        if (isOrigin()) {
            return 1;
        }
        return x.length == 0 ? 0 : prefix[x.length - 1];
    }

    int nodes() {
        return x.length;
    }

    // ---- the three questions a look asks -----------------------------------------------------

    /** P(continued so far and Z ≥ b at fraction t1 > fraction). */
    double upperTail(double t1, double b) {
        return b == Double.POSITIVE_INFINITY ? 0 : tail(t1, b, true);
    }

    /** P(continued so far and Z ≤ a at fraction t1 > fraction). */
    double lowerTail(double t1, double a) {
        return a == Double.NEGATIVE_INFINITY ? 0 : tail(t1, a, false);
    }

    /** The upper (Z ≥ bound) or lower (Z ≤ bound) tail at t1 on the paths still running. */
    private double tail(double t1, double bound, boolean upper) {
        if (isOrigin()) {
            double w = bound - drift * Math.sqrt(t1);
            return upper ? StandardNormal.sf(w) : StandardNormal.cdf(w);
        }
        if (x.length == 0) {
            return 0;
        }
        Kernel k = kernel(t1);
        double c = k.centre(bound);
        if (!k.wide) {
            return clamp(exactTail(c, k.s, upper));
        }
        // ∫ f(u)·Φ(±w) du by the corrected trapezoid, cell by cell: g = f·Φ(±w),
        // g' = f'·Φ(±w) ± f·φ(w)/s. Where Φ(±w) is 1 to double precision the cell term is the
        // cell's mass (the rule is exact for cubics), and where it is 0 the term vanishes, so only
        // the cells of the transition, about 2·(REACH + 3)·s wide, are evaluated.
        double sign = upper ? 1 : -1;
        int n = x.length;
        double edge = REACH + 3;
        int from = cellIndex(c - edge * k.s);
        int to = cellIndex(c + edge * k.s);   // cells from..to inclusive are evaluated
        double sum = upper ? suffix[Math.min(to + 1, n - 1)] : prefix[from];
        double gLeft = Double.NaN;
        double gSlopeLeft = Double.NaN;
        for (int i = from; i <= to && i + 1 < n; i++) {
            if (i == from) {
                double w = sign * (x[i] - c) / k.s;
                double p = StandardNormal.cdf(w);
                gLeft = f[i] * p;
                gSlopeLeft = d[i] * p + sign * f[i] * StandardNormal.pdf(w) / k.s;
            }
            double w = sign * (x[i + 1] - c) / k.s;
            double p = StandardNormal.cdf(w);
            double gRight = f[i + 1] * p;
            double gSlopeRight = d[i + 1] * p + sign * f[i + 1] * StandardNormal.pdf(w) / k.s;
            double h = x[i + 1] - x[i];
            sum += h * (gLeft + gRight) / 2 + h * h * (gSlopeLeft - gSlopeRight) / 12;
            gLeft = gRight;
            gSlopeLeft = gSlopeRight;
        }
        return clamp(sum);
    }

    /** Density at z of Z at fraction t1 on the paths that continued so far (before any cut at t1). */
    double densityAt(double t1, double z) {
        double[] out = new double[2];
        evaluator(t1).evaluate(z, out);
        return out[0];
    }

    /** The sub-density at fraction t1 > fraction on the continuation region (lower, upper). */
    SubDensity advance(double t1, double lower, double upper) {
        Evaluator evaluator = evaluator(t1);
        double mean = drift * Math.sqrt(t1);
        // A kernel ten cells wide leaves nothing the cubic cells cannot follow (midpoint error below
        // (0.1)^4/384 of the density); nor does the first look, a plain normal density.
        boolean smooth = isOrigin() || x.length == 0 || kernel(t1).s >= SMOOTHING_CELLS * spacing;
        Grid grid = Grid.build(mean, lower, upper, spacing, evaluator, !smooth);
        return new SubDensity(t1, drift, resolution, grid.x, grid.f, grid.d);
    }

    private double clamp(double p) {
        return Math.min(mass(), Math.max(0, p));
    }

    // ---- the transition kernel ---------------------------------------------------------------

    /**
     * From u = Z_k to z at t1: z·√t1 = u·√t_k + N(η·Δ, Δ). As a function of u the kernel is normal
     * with centre ρ·z − η·Δ/√t_k and standard deviation s = √(Δ/t_k), where ρ = √(t1/t_k) is also
     * the Jacobian of the change of variable.
     */
    private Kernel kernel(double t1) {
        double delta = t1 - fraction;
        if (!(delta > 0)) {
            throw new IllegalArgumentException("a look must add information: " + t1 + " after " + fraction);
        }
        double s = Math.sqrt(delta / fraction);
        return new Kernel(Math.sqrt(t1 / fraction), drift * delta / Math.sqrt(fraction), s,
                s >= WIDE_KERNEL_CELLS * spacing);
    }

    private record Kernel(double rho, double shift, double s, boolean wide) {
        double centre(double z) {
            return rho * z - shift;
        }
    }

    /** Computes the density at t1 and its slope at any point. */
    interface Evaluator {
        void evaluate(double z, double[] valueAndSlope);
    }

    private Evaluator evaluator(double t1) {
        if (isOrigin()) {
            double mean = drift * Math.sqrt(t1);
            return (z, out) -> {
                double p = StandardNormal.pdf(z - mean);
                out[0] = p;
                out[1] = -(z - mean) * p;
            };
        }
        if (x.length == 0) {
            return (z, out) -> {
                out[0] = 0;
                out[1] = 0;
            };
        }
        Kernel k = kernel(t1);
        if (!k.wide) {
            return (z, out) -> exactDensity(k, z, out);
        }
        double[] factors = new double[steps.length];   // e^{−(step/s)²} per step class, when first needed
        java.util.Arrays.fill(factors, Double.NaN);
        return (z, out) -> trapezoidDensity(k, factors, z, out);
    }

    /**
     * Value ρ∫f(u)φ(w)/s du and slope ρ²∫f(u)·w·φ(w)/s² du, w = (u − c)/s, by the corrected
     * trapezoidal rule (the kernel is resolved by the grid).
     */
    private void trapezoidDensity(Kernel k, double[] factors, double z, double[] out) {
        double c = k.centre(z);
        double s = k.s;
        double inv = 1 / s;
        double inv2 = inv * inv;
        // Nodes beyond REACH kernel widths add below φ(9)/s ≈ 1e-18/s of the density's largest
        // value, far below the accuracy the cells are refined to (CELL_TOLERANCE).
        double limit = c + REACH * s;
        int first = cellIndex(c - REACH * s);
        // This loop is the hot path of a look. With w = (x_i − c)/s, u = w/s, K = φ(w)/s and
        // K' = −u·K, K'' = (1/s² − u²)·K, the node term of the value is (valueWeight − fSlopeWeight·u)·φ
        // and of the slope (u·valueWeight + fSlopeWeight·(1/s² − u²))·φ, both over s. φ is carried
        // from node to node: φ(w + δ) = φ(w)·R with R = e^{−wδ−δ²/2}, and along equal steps R itself
        // gains e^{−δ²} a step (a factor per step class, computed once per look). So an exponential
        // is needed only at the first node and where the step changes. Steps of one class differ by
        // rounding (1e-13 relative at most), so the carried φ drifts by at most |w|·δ·1e-13 a node:
        // below 1e-10 relative over any kernel's reach, and the nodes where it would matter carry
        // a kernel weight below φ(5).
        double value = 0;
        double slope = 0;
        int n = x.length;
        double w = (x[first] - c) * inv;
        double phi = StandardNormal.pdf(w);
        double ratio = 0;
        int previousClass = -1;
        for (int i = first; ; ) {
            double u = w * inv;
            double a = valueWeight[i];
            double b = fSlopeWeight[i];
            value += (a - b * u) * phi;
            slope += (u * a + b * (inv2 - u * u)) * phi;
            if (i + 1 >= n || x[i + 1] > limit) {
                break;
            }
            int cls = stepClass[i];
            if (cls == previousClass) {
                ratio *= factors[cls];
            } else {
                double delta = steps[cls] * inv;
                ratio = Math.exp(-w * delta - delta * delta / 2);
                if (Double.isNaN(factors[cls])) {
                    factors[cls] = Math.exp(-delta * delta);
                }
                previousClass = cls;
            }
            phi *= ratio;
            i++;
            w = (x[i] - c) * inv;
        }
        out[0] = Math.max(0, k.rho * inv * value);
        out[1] = k.rho * k.rho * inv * slope;
    }

    /** The same value and slope, integrating each cell's cubic exactly against the narrow kernel. */
    private void exactDensity(Kernel k, double z, double[] out) {
        double c = k.centre(z);
        double s = k.s;
        double lo = c - REACH * s;
        double hi = c + REACH * s;
        double value = 0;
        double slope = 0;
        double[] a = new double[4];
        int first = cellIndex(lo);
        double w1 = (Math.max(x[first], lo) - c) / s;
        double cdf1 = StandardNormal.cdf(w1);
        double phi1 = StandardNormal.pdf(w1);
        for (int i = first; i + 1 < x.length && x[i] < hi; i++) {
            double q = Math.min(x[i + 1], hi);
            double w2 = (q - c) / s;
            double cdf2 = StandardNormal.cdf(w2);
            double phi2 = StandardNormal.pdf(w2);
            if (w2 > w1) {
                inKernelUnits(i, c, s, a);
                double m0 = cdf2 - cdf1;
                double m1 = phi1 - phi2;
                double m2 = m0 + w1 * phi1 - w2 * phi2;
                double m3 = (w1 * w1 + 2) * phi1 - (w2 * w2 + 2) * phi2;
                double m4 = 3 * m2 + w1 * w1 * w1 * phi1 - w2 * w2 * w2 * phi2;
                value += a[0] * m0 + a[1] * m1 + a[2] * m2 + a[3] * m3;
                slope += a[0] * m1 + a[1] * m2 + a[2] * m3 + a[3] * m4;
            }
            w1 = w2;
            cdf1 = cdf2;
            phi1 = phi2;
        }
        out[0] = Math.max(0, k.rho * value);
        out[1] = k.rho * k.rho * slope / s;
    }

    /**
     * ∫ f(u)·Φ(±(u − c)/s) du: the upper tail (+) or the lower tail (−) of the next statistic. Cells
     * beyond the kernel's reach count fully or not at all; cells within it in closed form, using
     * ∫w^j·Φ(w)dw and, for the lower tail, Φ(−w) directly so that tiny tails keep their accuracy.
     */
    private double exactTail(double c, double s, boolean upper) {
        double lo = c - REACH * s;
        double hi = c + REACH * s;
        int n = x.length;
        double sum = 0;
        if (upper) {
            if (hi < x[n - 1]) {
                int j = cellIndex(hi);
                double from = Math.max(hi, x[0]);
                sum += suffix[j + 1] + polynomialIntegral(j, from, x[j + 1]);
            }
        } else if (lo > x[0]) {
            int j = cellIndex(lo);
            double to = Math.min(lo, x[n - 1]);
            sum += prefix[j] + polynomialIntegral(j, x[j], to);
        }
        double[] a = new double[4];
        for (int i = cellIndex(lo); i + 1 < n && x[i] < hi; i++) {
            double p = Math.max(x[i], lo);
            double q = Math.min(x[i + 1], hi);
            if (!(q > p)) {
                continue;
            }
            inKernelUnits(i, c, s, a);
            double w1 = (p - c) / s;
            double w2 = (q - c) / s;
            double part = 0;
            if (upper) {
                for (int j = 0; j < 4; j++) {
                    part += a[j] * (tailAntiderivative(j, w2) - tailAntiderivative(j, w1));
                }
            } else {
                // ∫ w^j Φ(−w) dw from w1 to w2 = (−1)^j [G_j(−w1) − G_j(−w2)]
                for (int j = 0; j < 4; j++) {
                    double g = tailAntiderivative(j, -w1) - tailAntiderivative(j, -w2);
                    part += a[j] * ((j & 1) == 0 ? g : -g);
                }
            }
            sum += s * part;
        }
        return sum;
    }

    /** G_j(w) = ∫ w^j Φ(w) dw, j = 0..3 (each checked by differentiation in SubDensityTest). */
    static double tailAntiderivative(int j, double w) {
        double cdf = StandardNormal.cdf(w);
        double phi = StandardNormal.pdf(w);
        double w2 = w * w;
        switch (j) {
            case 0: return w * cdf + phi;
            case 1: return ((w2 - 1) * cdf + w * phi) / 2;
            case 2: return (w2 * w * cdf + (w2 + 2) * phi) / 3;
            default: return ((w2 * w2 - 3) * cdf + (w2 * w + 3 * w) * phi) / 4;
        }
    }

    /** Index of the cell [x_i, x_{i+1}] containing v, clamped to the cells that exist. */
    private int cellIndex(double v) {
        int lo = 0;
        int hi = x.length - 2;
        while (lo < hi) {
            int mid = (lo + hi + 1) >>> 1;
            if (x[mid] <= v) {
                lo = mid;
            } else {
                hi = mid - 1;
            }
        }
        return Math.max(0, lo);
    }

    /** Cell i's cubic rewritten in the kernel's standard units w = (u − c)/s: Σ a_j·w^j. */
    private void inKernelUnits(int i, double c, double s, double[] a) {
        double b1 = d[i];
        double b2 = quad[i];
        double b3 = cube[i];
        double e = c - x[i];          // y = e + s·w
        a[0] = f[i] + e * (b1 + e * (b2 + e * b3));
        a[1] = s * (b1 + e * (2 * b2 + 3 * e * b3));
        a[2] = s * s * (b2 + 3 * e * b3);
        a[3] = s * s * s * b3;
    }

    private double cellMass(int i) {
        double h = x[i + 1] - x[i];
        return h * (f[i] + f[i + 1]) / 2 + h * h * (d[i] - d[i + 1]) / 12;
    }

    /** ∫ from p to q (inside cell i) of the cell's cubic. */
    private double polynomialIntegral(int i, double p, double q) {
        if (!(q > p)) {
            return 0;
        }
        double[] b = {f[i], d[i], quad[i], cube[i]};
        double y1 = p - x[i];
        double y2 = q - x[i];
        double sum = 0;
        double p1 = y1;
        double p2 = y2;
        for (int j = 0; j < 4; j++) {
            sum += b[j] * (p2 - p1) / (j + 1);
            p1 *= y1;
            p2 *= y2;
        }
        return sum;
    }

    // ---- the adaptive grid -------------------------------------------------------------------

    /** Nodes, values and slopes of a new sub-density. */
    private static final class Grid {
        double[] x = new double[256];
        double[] f = new double[256];
        double[] d = new double[256];
        int n;
        boolean bisect;

        /**
         * Uniform spacing on the mean ± CORE, geometric growth to the mean ± SPAN, cut at (lower,
         * upper) with the cuts themselves as nodes; then every cell is bisected until the Hermite
         * cubic predicts the exact density at its midpoint.
         */
        static Grid build(double mean, double lower, double upper, double spacing, Evaluator evaluator,
                          boolean bisect) {
            Grid g = new Grid();
            g.bisect = bisect;
            double from = Math.max(lower, mean - SPAN);
            double to = Math.min(upper, mean + SPAN);
            if (!(to > from)) {
                g.trim();
                return g;
            }
            double[] base = baseNodes(mean, spacing);
            double gap = spacing * 1e-3;
            double[] vs = new double[2];
            g.add(from, evaluator, vs);
            for (double v : base) {
                if (v > from + gap && v < to - gap) {
                    g.refineTo(v, evaluator, vs);
                }
            }
            g.refineTo(to, evaluator, vs);
            g.trim();
            return g;
        }

        private static double[] baseNodes(double mean, double spacing) {
            int core = (int) Math.ceil(CORE / spacing);
            java.util.ArrayList<Double> right = new java.util.ArrayList<>();
            double step = spacing;
            double v = core * spacing;
            while (v < SPAN) {
                step *= GROWTH;
                v += step;
                right.add(v);
            }
            double[] out = new double[2 * core + 1 + 2 * right.size()];
            int k = 0;
            for (int i = right.size() - 1; i >= 0; i--) {
                out[k++] = mean - right.get(i);
            }
            for (int i = -core; i <= core; i++) {
                out[k++] = mean + i * spacing;
            }
            for (double r : right) {
                out[k++] = mean + r;
            }
            return out;
        }

        /** Appends node v after the last one, bisecting the new cell while the interpolant misses. */
        private void refineTo(double v, Evaluator evaluator, double[] vs) {
            evaluator.evaluate(v, vs);
            double fv = vs[0];
            double dv = vs[1];
            refine(v, fv, dv, evaluator, vs);
        }

        private void refine(double v, double fv, double dv, Evaluator evaluator, double[] vs) {
            double u = x[n - 1];
            double h = v - u;
            double mid = u + h / 2;
            if (bisect && h > SMALLEST_CELL) {
                evaluator.evaluate(mid, vs);
                double fm = vs[0];
                double dm = vs[1];
                double predicted = (f[n - 1] + fv) / 2 + h * (d[n - 1] - dv) / 8;
                double miss = Math.abs(predicted - fm) * h;
                if (miss > CELL_TOLERANCE) {
                    if (miss <= HALVES_TRUSTED * CELL_TOLERANCE) {
                        // A near miss: the cubic's error falls as h⁴, so each half misses by about
                        // miss/32 (a sixteenth of the error over half the width), a third of the
                        // tolerance at most. Halved once without checking the halves (their checks
                        // were two evaluations per cell across the whole core, every look).
                        push(mid, fm, dm);
                        push(v, fv, dv);
                        return;
                    }
                    refine(mid, fm, dm, evaluator, vs);
                    refine(v, fv, dv, evaluator, vs);
                    return;
                }
            }
            push(v, fv, dv);
        }

        private void add(double v, Evaluator evaluator, double[] vs) {
            evaluator.evaluate(v, vs);
            push(v, vs[0], vs[1]);
        }

        private void push(double v, double fv, double dv) {
            if (n == x.length) {
                x = java.util.Arrays.copyOf(x, 2 * n);
                f = java.util.Arrays.copyOf(f, 2 * n);
                d = java.util.Arrays.copyOf(d, 2 * n);
            }
            x[n] = v;
            f[n] = fv;
            d[n] = dv;
            n++;
        }

        private void trim() {
            x = java.util.Arrays.copyOf(x, n);
            f = java.util.Arrays.copyOf(f, n);
            d = java.util.Arrays.copyOf(d, n);
        }
    }

    @Override
    public String toString() {
        return "SubDensity[t=" + fraction + ", drift=" + drift + ", nodes=" + x.length + ", mass=" + mass() + "]";
    }
}
