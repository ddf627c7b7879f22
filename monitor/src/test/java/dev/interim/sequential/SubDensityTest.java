package dev.interim.sequential;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import org.junit.jupiter.api.Test;

/** The numerical building blocks of the recursion. */
class SubDensityTest {

    /** G_j(w) = ∫ w^j Φ(w) dw: the derivative, by central differences, must be w^j·Φ(w). */
    @Test
    void tailAntiderivativesDifferentiateToTheirIntegrands() {
        double h = 1e-5;
        for (int j = 0; j < 4; j++) {
            for (double w = -8; w <= 8; w += 0.37) {
                double numeric = (SubDensity.tailAntiderivative(j, w + h) - SubDensity.tailAntiderivative(j, w - h)) / (2 * h);
                double exact = Math.pow(w, j) * StandardNormal.cdf(w);
                assertThat(numeric).as("j=%d w=%f", j, w).isCloseTo(exact, within(1e-6 * (1 + Math.abs(exact))));
            }
        }
    }

    /**
     * Without boundaries Z stays standard normal at every fraction, whatever the looks (a fact of the
     * model, common practice): after 3,000 looks of every size, from a thousandth of the information
     * down to a billionth, the carried density must still be φ and its mass 1. This is the
     * stability test of the narrow-kernel path: an unstable scheme amplifies its own rounding and
     * diverges (an earlier piecewise-quadratic version reached 1e30 here). The cubic cells are second
     * order overall: each look whose kernel is about a cell wide smooths in the interpolation error
     * (about 2e-8 at spacing 0.05), so this deliberately crowded schedule of ~1,000 such looks
     * drifts by about 1e-6; 5e-6 is the bound, five times under the 1e-5 asked of crossing
     * probabilities.
     */
    @Test
    void densityWithoutBoundariesStaysStandardNormalOverThousandsOfLooks() {
        SubDensity state = SubDensity.origin(0, GroupSequentialDesign.DEFAULT_RESOLUTION);
        double t = 0.01;
        java.util.SplittableRandom random = new java.util.SplittableRandom(5);
        for (int i = 0; i < 3000; i++) {
            t *= 1 + Math.pow(10, -9 + 6 * random.nextDouble());
            state = state.advance(t, Double.NEGATIVE_INFINITY, Double.POSITIVE_INFINITY);
        }
        double next = t * 1.001;
        assertThat(state.mass()).isCloseTo(1.0, within(5e-6));
        for (double z = -5; z <= 5; z += 0.1) {
            assertThat(state.densityAt(next, z)).as("z=%f", z).isCloseTo(StandardNormal.pdf(z), within(5e-6));
        }
        assertThat(state.upperTail(next, 1.96)).isCloseTo(StandardNormal.sf(1.96), within(5e-6));
        assertThat(state.lowerTail(next, -3)).isCloseTo(StandardNormal.cdf(-3), within(5e-6));
    }

    /**
     * Both integration paths against an independent computation. After a first look at t0 cut at
     * ±2, the probability of continuing and then being above c at t1 is
     * ∫_{−2}^{2} φ(u)·Φ̄((c√t1 − u√t0)/√(t1 − t0)) du, here integrated by Gauss–Legendre quadrature
     * (reference library: Apache Commons Math 3.6.1 IterativeLegendreGaussIntegrator). A step of
     * 1e-4 relative information takes the closed-form path (kernel narrower than a cell), a step of
     * 20% the trapezoidal one. 1e-8 bounds the interpolation error of the cubic cells.
     */
    @Test
    void bothIntegrationPathsMatchAnIndependentQuadrature() {
        double t0 = 0.5;
        SubDensity state = SubDensity.origin(0, GroupSequentialDesign.DEFAULT_RESOLUTION).advance(t0, -2, 2);
        org.apache.commons.math3.analysis.integration.IterativeLegendreGaussIntegrator gauss =
                new org.apache.commons.math3.analysis.integration.IterativeLegendreGaussIntegrator(32, 1e-14, 1e-15);
        org.apache.commons.math3.distribution.NormalDistribution normal =
                new org.apache.commons.math3.distribution.NormalDistribution();
        for (double t1 : new double[] {t0 * (1 + 1e-4), t0 * 1.2}) {
            double sd = Math.sqrt(t1 - t0);
            for (double c : new double[] {1.9, 2.0, 2.2}) {
                double upper = gauss.integrate(1_000_000, u -> normal.density(u)
                        * (1 - normal.cumulativeProbability((c * Math.sqrt(t1) - u * Math.sqrt(t0)) / sd)), -2, 2);
                double lower = gauss.integrate(1_000_000, u -> normal.density(u)
                        * normal.cumulativeProbability((-c * Math.sqrt(t1) - u * Math.sqrt(t0)) / sd), -2, 2);
                assertThat(state.upperTail(t1, c)).as("t1=%f c=%f", t1, c).isCloseTo(upper, within(1e-8));
                assertThat(state.lowerTail(t1, -c)).as("t1=%f c=%f", t1, c).isCloseTo(lower, within(1e-8));
            }
        }
    }

    /** The number of nodes does not grow with the number of looks: the cost of a look is flat. */
    @Test
    void nodeCountStaysBoundedOverTenThousandLooks() {
        SubDensity state = SubDensity.origin(0, GroupSequentialDesign.DEFAULT_RESOLUTION);
        int most = 0;
        for (int k = 1; k <= 10_000; k++) {
            double t = k / 10_000.0;
            state = state.advance(t, -2.5 / Math.sqrt(t), 2.5 / Math.sqrt(t));
            if (k > 100) {
                most = Math.max(most, state.nodes());
            }
        }
        assertThat(most).isLessThan(1000);
    }
}
