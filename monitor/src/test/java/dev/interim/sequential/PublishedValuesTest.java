package dev.interim.sequential;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.interim.reference.ReferenceData;
import dev.interim.stats.Alternative;
import java.util.Map;
import java.util.stream.Stream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * Boundaries, constants and inflation factors against published tables. Each table is a resource
 * under /reference whose header names the source and the tolerance; one test runs over every row.
 */
class PublishedValuesTest {

    static Stream<Map<String, String>> classicConstants() {
        return ReferenceData.rows("classic-constants.csv").stream();
    }

    /** Source: Jennison & Turnbull (2000) Tables 2.1 and 2.3; Pocock (1977); O'Brien & Fleming (1979); from memory. ±0.001. */
    @ParameterizedTest(name = "{0}")
    @MethodSource("classicConstants")
    void classicConstantMatchesTheTable(Map<String, String> row) {
        int looks = Integer.parseInt(row.get("looks"));
        GroupSequentialDesign design = GroupSequentialDesign.classic(Double.parseDouble(row.get("alpha")),
                Alternative.TWO_SIDED, ClassicBoundary.Shape.valueOf(row.get("shape")), Fractions.equallySpaced(looks));
        assertThat(design.classic().constant()).isCloseTo(Double.parseDouble(row.get("constant")), within(0.001));
    }

    static Stream<Map<String, String>> spendingBoundaries() {
        return ReferenceData.rows("spending-boundaries.csv").stream();
    }

    /** Source: Lan & DeMets (1983); DeMets & Lan (1994); from memory. ±0.001. */
    @ParameterizedTest(name = "{0}")
    @MethodSource("spendingBoundaries")
    void spendingBoundaryMatchesThePublishedValue(Map<String, String> row) {
        GroupSequentialDesign design = GroupSequentialDesign.spending(0.025, Alternative.GREATER,
                SpendingFunction.parse(row.get("spending")));
        Look[] looks = design.looksAt(Fractions.equallySpaced(5));
        int k = Integer.parseInt(row.get("look"));
        assertThat(looks[k - 1].upper()).isCloseTo(Double.parseDouble(row.get("upper")), within(0.001));
        assertThat(looks[k - 1].lower()).isEqualTo(Double.NEGATIVE_INFINITY);
    }

    /**
     * The two-sided design at 0.05 has the one-sided 0.025 boundaries on each side (equal split; the
     * probability of crossing both is below 1e-6). Source: Lan & DeMets (1983); from memory. ±0.001.
     */
    @ParameterizedTest(name = "{0}")
    @MethodSource("spendingBoundaries")
    void twoSidedDesignSplitsAlphaEquallyBetweenTheSides(Map<String, String> row) {
        GroupSequentialDesign design = GroupSequentialDesign.spending(0.05, Alternative.TWO_SIDED,
                SpendingFunction.parse(row.get("spending")));
        Look look = design.looksAt(Fractions.equallySpaced(5))[Integer.parseInt(row.get("look")) - 1];
        assertThat(look.upper()).isCloseTo(Double.parseDouble(row.get("upper")), within(0.001));
        assertThat(look.lower()).isEqualTo(-look.upper());
    }

    static Stream<Map<String, String>> inflationFactors() {
        return ReferenceData.rows("inflation-factors.csv").stream();
    }

    /** Source: Jennison & Turnbull (2000) ch. 2; from memory. ±0.003. */
    @ParameterizedTest(name = "{0}")
    @MethodSource("inflationFactors")
    void inflationFactorMatchesTheTable(Map<String, String> row) {
        double[] fractions = Fractions.equallySpaced(Integer.parseInt(row.get("looks")));
        GroupSequentialDesign design = GroupSequentialDesign.classic(0.05, Alternative.TWO_SIDED,
                ClassicBoundary.Shape.valueOf(row.get("shape")), fractions);
        double inflation = Planning.inflationFactor(design, fractions, Double.parseDouble(row.get("power")));
        assertThat(inflation).isCloseTo(Double.parseDouble(row.get("inflation")), within(0.003));
    }

    static Stream<Map<String, String>> repeatedTesting() {
        return ReferenceData.rows("repeated-testing.csv").stream();
    }

    /**
     * Testing at nominal two-sided 0.05 (|Z| ≥ 1.95996) at each of K looks: the error grows as
     * Armitage, McPherson & Rowe (1969) tabulated (also Jennison & Turnbull 2000, Table 1.1); from
     * memory, ±0.001.
     */
    @ParameterizedTest(name = "{0}")
    @MethodSource("repeatedTesting")
    void naiveRepeatedTestingInflatesTheError(Map<String, String> row) {
        int looks = Integer.parseInt(row.get("looks"));
        double z = StandardNormal.upperQuantile(0.025);
        double[] up = new double[looks];
        double[] low = new double[looks];
        java.util.Arrays.fill(up, z);
        java.util.Arrays.fill(low, -z);
        CrossingProbabilities p = CrossingProbabilities.of(Fractions.equallySpaced(looks), up, low, 0,
                GroupSequentialDesign.DEFAULT_RESOLUTION);
        assertThat(p.totalUpper() + p.totalLower()).isCloseTo(Double.parseDouble(row.get("error")), within(0.001));
    }
}
