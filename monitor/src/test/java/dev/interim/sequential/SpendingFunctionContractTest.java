package dev.interim.sequential;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import java.util.stream.Stream;
import org.apache.commons.math3.distribution.NormalDistribution;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;
import org.junit.jupiter.params.provider.ValueSource;

/** One contract for every spending function, and the published formulas. */
class SpendingFunctionContractTest {

    static Stream<String> functions() {
        return Stream.of("obf", "pocock", "power:0.5", "power:1", "power:3", "hsd:-4", "hsd:0", "hsd:1", "hsd:4");
    }

    @ParameterizedTest
    @MethodSource("functions")
    void spendsNothingAtTheStartAllAtTheEndAndNeverDecreases(String label) {
        SpendingFunction f = SpendingFunction.parse(label);
        for (double total : new double[] {0.001, 0.025, 0.05, 0.2}) {
            assertThat(f.spent(0, total)).isZero();
            assertThat(f.spent(1, total)).isEqualTo(total);
            assertThat(f.spent(1.7, total)).as("overrun spends all").isEqualTo(total);
            double previous = 0;
            for (int i = 1; i <= 1000; i++) {
                double t = i / 1000.0;
                double s = f.spent(t, total);
                assertThat(s).isBetween(previous, total);
                previous = s;
            }
        }
        assertThat(SpendingFunction.parse(f.label())).isEqualTo(f);
    }

    /**
     * The formulas as published, evaluated with an independent library (reference library: Apache
     * Commons Math 3.6.1 NormalDistribution). Lan & DeMets (1983): 2 − 2Φ(z_{1−α/2}/√t) and
     * α·ln(1 + (e − 1)t); Kim & DeMets (1987): α·t^ρ; Hwang, Shih & DeCani (1990):
     * α(1 − e^{−γt})/(1 − e^{−γ}).
     */
    @Test
    void valuesFollowThePublishedFormulas() {
        NormalDistribution n = new NormalDistribution();
        double a = 0.025;
        for (double t : new double[] {0.01, 0.2, 0.5, 0.9}) {
            assertThat(SpendingFunction.parse("obf").spent(t, a))
                    .isCloseTo(2 - 2 * n.cumulativeProbability(n.inverseCumulativeProbability(1 - a / 2) / Math.sqrt(t)),
                            within(1e-12));
            assertThat(SpendingFunction.parse("pocock").spent(t, a)).isCloseTo(a * Math.log(1 + (Math.E - 1) * t), within(1e-15));
            assertThat(SpendingFunction.parse("power:3").spent(t, a)).isCloseTo(a * t * t * t, within(1e-15));
            assertThat(SpendingFunction.parse("hsd:-4").spent(t, a))
                    .isCloseTo(a * (1 - Math.exp(4 * t)) / (1 - Math.exp(4)), within(1e-15));
            assertThat(SpendingFunction.parse("hsd:0").spent(t, a)).isCloseTo(a * t, within(1e-15));
        }
    }

    @ParameterizedTest
    @ValueSource(strings = {"", "obrien", "power", "power:", "power:-1", "power:x", "hsd", "hsd:abc", "obf:2", "pocock:1"})
    void unknownOrMalformedNamesAreRefusedWithTheAcceptedForms(String text) {
        assertThatThrownBy(() -> SpendingFunction.parse(text))
                .isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("spending");
    }

    @Test
    void aTotalOutsideZeroOneIsRefused() {
        assertThatThrownBy(() -> SpendingFunction.parse("obf").spent(0.5, 1.5))
                .hasMessageContaining("strictly between 0 and 1");
    }
}
