package dev.interim.cli;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

class PlanCommandTest {
    private static final ObjectMapper JSON = new ObjectMapper();

    /**
     * Lan-DeMets O'Brien-Fleming-type spending, one-sided alpha = 0.025, five equally spaced looks.
     * Source: Lan & DeMets (1983); Jennison & Turnbull (2000); from memory. Published to 3 decimals.
     */
    private static final double[] OBF_ONE_SIDED_025_K5 = {4.877, 3.357, 2.680, 2.290, 2.031};
    /** ±0.001: the published values are rounded to 3 decimals. */
    private static final double PUBLISHED_3_DECIMALS = 0.001;

    @Test
    void acceptanceCsvReproducesThePublishedObrienFlemingTypeBoundaries() {
        Cli.Result r = Cli.plan("--alpha", "0.025", "--sides", "1", "--spending", "obf", "--looks", "5", "--format", "csv");

        assertThat(r.exit()).isZero();
        assertThat(r.err()).isEmpty();
        assertThat(r.out().lines().findFirst().orElseThrow())
                .isEqualTo("look,fraction,upper,lower,alpha_spent,alpha_increment");
        assertThat(r.csvNumbers("upper")).containsExactly(OBF_ONE_SIDED_025_K5, within(PUBLISHED_3_DECIMALS));
        assertThat(r.csvNumbers("fraction")).containsExactly(0.2, 0.4, 0.6, 0.8, 1.0);
        // one-sided without futility: no lower boundary, an empty cell
        assertThat(r.csvColumns().get("lower")).containsOnly("");
        // the whole alpha is spent at the last look (the spending function's value at t = 1)
        double[] spent = r.csvNumbers("alpha_spent");
        assertThat(spent[spent.length - 1]).isCloseTo(0.025, within(1e-9));
        assertThat(spent).isSorted();
    }

    @Test
    void tableOfTheAcceptanceDesignIsTitledAlignedAndExplained() {
        Cli.Result r = Cli.plan("--alpha", "0.025", "--sides", "1", "--spending", "obf", "--looks", "5");

        assertThat(r.exit()).isZero();
        List<String> lines = r.out().lines().toList();
        assertThat(lines.get(0)).contains("one-sided (greater)", "alpha 0.025", "O'Brien-Fleming", "5 looks");
        List<String> rows = lines.stream().filter(l -> l.matches("\\s+\\d+\\s+\\d\\.\\d{4}\\s.*")).toList();
        assertThat(rows).hasSize(5);
        // boundaries to 4 decimals, published values to 3 (same source as the CSV test)
        for (int k = 0; k < rows.size(); k++) {
            double upper = Double.parseDouble(rows.get(k).trim().split("\\s+")[2]);
            assertThat(upper).isCloseTo(OBF_ONE_SIDED_025_K5[k], within(PUBLISHED_3_DECIMALS));
        }
        // aligned: every row of the table has the header's width
        String header = lines.stream().filter(l -> l.contains("fraction")).findFirst().orElseThrow();
        assertThat(rows).allSatisfy(row -> assertThat(row).hasSameSizeAs(header));
        assertThat(r.out()).contains("Z >= upper").doesNotContain("Z <= lower");
    }

    @Test
    void jsonCarriesTheDesignAndTheSameFieldsAsTheCsv() throws Exception {
        Cli.Result r = Cli.plan("--alpha", "0.025", "--sides", "1", "--looks", "5", "--format", "json");

        assertThat(r.exit()).isZero();
        JsonNode root = JSON.readTree(r.out());
        JsonNode design = root.get("design");
        assertThat(design.get("alpha").asDouble()).isEqualTo(0.025);
        assertThat(design.get("sides").asInt()).isEqualTo(1);
        assertThat(design.get("direction").asText()).isEqualTo("greater");
        assertThat(design.get("spending").asText()).isEqualTo("obf");
        assertThat(design.get("fractions")).hasSize(5);
        assertThat(root.has("sample_size")).isFalse();

        JsonNode looks = root.get("looks");
        assertThat(looks).hasSize(5);
        List<String> csvHeader = List.of(Cli.plan("--alpha", "0.025", "--sides", "1", "--format", "csv")
                .out().lines().findFirst().orElseThrow().split(","));
        for (int k = 0; k < 5; k++) {
            JsonNode look = looks.get(k);
            assertThat(look.fieldNames()).toIterable().containsExactlyElementsOf(csvHeader);
            assertThat(look.get("look").asInt()).isEqualTo(k + 1);
            // absent lower boundary: null, not a number (same source as the CSV test)
            assertThat(look.get("lower").isNull()).isTrue();
            assertThat(look.get("upper").asDouble()).isCloseTo(OBF_ONE_SIDED_025_K5[k], within(PUBLISHED_3_DECIMALS));
        }
    }

    @Test
    void twoSidedClassicPocockHasTheSameConstantAtEveryLook() {
        // C_P(K = 5, two-sided alpha = 0.05) = 2.413: Pocock (1977); Jennison & Turnbull (2000),
        // Table 2.1; from memory. ±0.001: the table rounds to 3 decimals.
        Cli.Result r = Cli.plan("--sides", "2", "--alpha", "0.05", "--spending", "fixed-pocock", "--looks", "5",
                "--format", "csv");

        assertThat(r.exit()).isZero();
        for (double upper : r.csvNumbers("upper")) {
            assertThat(upper).isCloseTo(2.413, within(0.001));
        }
        for (double lower : r.csvNumbers("lower")) {
            assertThat(lower).isCloseTo(-2.413, within(0.001));
        }
    }

    @Test
    void twoSidedTableSaysEachSideSpendsHalf() {
        Cli.Result r = Cli.plan();

        assertThat(r.exit()).isZero();
        assertThat(r.out().lines().findFirst().orElseThrow()).contains("two-sided", "alpha 0.05", "5 looks");
        assertThat(r.out()).contains("Z >= upper or Z <= lower", "each side spends half of alpha");
    }

    @Test
    void sizedClassicObrienFlemingInflatesTheSampleByThePublishedFactor() throws Exception {
        Cli.Result r = Cli.plan("--spending", "fixed-obf", "--looks", "5", "--power", "0.9",
                "--effect", "0.5", "--sd", "1", "--format", "json");

        assertThat(r.exit()).isZero();
        JsonNode size = JSON.readTree(r.out()).get("sample_size");
        // R(K = 5, power 0.9, two-sided alpha 0.05) = 1.026 for O'Brien-Fleming:
        // Jennison & Turnbull (2000), Table 2.3; from memory. ±0.003 as recalled.
        assertThat(size.get("inflation").asDouble()).isCloseTo(1.026, within(0.003));
        // Single-look size n = 2 sd^2 (z_0.975 + z_0.9)^2 / delta^2 = 2 (1.95996 + 1.28155)^2 / 0.25
        // = 84.06, rounded up to 85 (normal-approximation formula, worked by hand).
        assertThat(size.get("fixed_per_arm").asLong()).isEqualTo(85);
        long maximum = size.get("maximum_per_arm").asLong();
        // maximum = unrounded single-look size x inflation, rounded up: 84.06 x (1.026 ± 0.003) is 86.0 to 86.5
        assertThat(maximum).isEqualTo(87);
        assertThat(size.get("expected_per_arm_no_effect").asDouble()).isBetween(80.0, (double) maximum);
        assertThat(size.get("expected_per_arm_at_effect").asDouble())
                .isLessThan(size.get("expected_per_arm_no_effect").asDouble());

        JsonNode looks = JSON.readTree(r.out()).get("looks");
        for (JsonNode look : looks) {
            long expected = (long) Math.ceil(maximum * look.get("fraction").asDouble() - 1e-9);
            assertThat(look.get("n_per_arm").asLong()).isEqualTo(expected);
        }
        assertThat(looks.get(4).get("n_per_arm").asLong()).isEqualTo(maximum);
    }

    @Test
    void sizedTableShowsSamplesPerLookAndTheSummary() {
        Cli.Result r = Cli.plan("--spending", "fixed-obf", "--power", "0.9", "--effect", "0.5", "--sd", "1");

        assertThat(r.exit()).isZero();
        assertThat(r.out()).contains("n per arm", "single-look test", "inflation factor", "maximum (last look)",
                "expected if no effect", "expected at the effect");
        assertThat(r.out().lines().filter(l -> l.startsWith("  inflation factor")).findFirst().orElseThrow())
                .endsWith("1.0265");
    }

    @Test
    void csvGainsNPerArmWhenSized() {
        Cli.Result r = Cli.plan("--power", "0.8", "--baseline-rate", "0.1", "--effect", "0.02", "--looks", "3",
                "--format", "csv");

        assertThat(r.exit()).isZero();
        assertThat(r.csvColumns().keySet()).containsExactly(
                "look", "fraction", "upper", "lower", "alpha_spent", "alpha_increment", "n_per_arm");
        assertThat(r.csvNumbers("n_per_arm")).isSorted();
    }

    @Test
    void powerWithoutAnEffectGivesInflationAndDriftOnly() throws Exception {
        Cli.Result table = Cli.plan("--spending", "fixed-obf", "--power", "0.9");
        assertThat(table.exit()).isZero();
        assertThat(table.out()).contains("1.0265 times", "drift").doesNotContain("n per arm", "maximum (last look)");

        JsonNode root = JSON.readTree(Cli.plan("--spending", "fixed-obf", "--power", "0.9", "--format", "json").out());
        assertThat(root.has("sample_size")).isFalse();
        // same published factor as above: Jennison & Turnbull (2000), Table 2.3; from memory
        assertThat(root.get("power").get("inflation").asDouble()).isCloseTo(1.026, within(0.003));
        assertThat(root.get("looks").get(0).has("n_per_arm")).isFalse();
    }

    @Test
    void futilityAddsBetaSpentAndMeetsTheEfficacyBoundaryAtTheEnd() {
        Cli.Result r = Cli.plan("--sides", "1", "--power", "0.9", "--futility", "pocock", "--format", "csv");

        assertThat(r.exit()).isZero();
        Map<String, List<String>> columns = r.csvColumns();
        assertThat(columns).containsKey("beta_spent");
        double[] upper = r.csvNumbers("upper");
        double[] lower = r.csvNumbers("lower");
        double[] beta = r.csvNumbers("beta_spent");
        for (int k = 0; k < upper.length; k++) {
            assertThat(lower[k]).isLessThanOrEqualTo(upper[k]);
        }
        assertThat(lower[4]).isEqualTo(upper[4]);
        assertThat(beta[4]).isCloseTo(0.1, within(1e-9));   // beta = 1 - power, all spent by t = 1
    }

    @Test
    void aLessDesignIsTheMirrorOfAGreaterOne() {
        double[] greater = Cli.plan("--sides", "1", "--format", "csv").csvNumbers("upper");
        Cli.Result less = Cli.plan("--sides", "1", "--direction", "less", "--format", "csv");

        assertThat(less.exit()).isZero();
        double[] lower = less.csvNumbers("lower");
        for (int k = 0; k < greater.length; k++) {
            assertThat(lower[k]).isEqualTo(-greater[k]);
        }
        assertThat(less.csvColumns().get("upper")).containsOnly("");
        assertThat(Cli.plan("--sides", "1", "--direction", "less").out()).contains("Z <= lower");
    }

    @Test
    void givenFractionsAreUsedAsTheLooks() {
        Cli.Result r = Cli.plan("--fractions", "0.25,0.5,1", "--format", "csv");

        assertThat(r.exit()).isZero();
        assertThat(r.csvNumbers("fraction")).containsExactly(0.25, 0.5, 1.0);
        assertThat(r.csvNumbers("look")).containsExactly(1, 2, 3);
    }

    @Test
    void firstLookOfObrienFlemingSpendingKeepsItsTinyAlphaInMachineFormats() {
        Cli.Result r = Cli.plan("--alpha", "0.025", "--sides", "1", "--format", "csv");

        // about 5e-7 at t = 0.2: must not print as 0 (6 significant digits)
        assertThat(r.csvNumbers("alpha_spent")[0]).isGreaterThan(0).isLessThan(1e-5);
        assertThat(r.csvColumns().get("alpha_spent").get(0)).doesNotContain("E");
    }
}
