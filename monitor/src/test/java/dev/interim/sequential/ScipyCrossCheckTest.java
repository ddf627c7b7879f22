package dev.interim.sequential;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.interim.stats.Alternative;
import java.io.IOException;
import java.io.InputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Random designs checked against an independent, general-purpose routine: SciPy's multivariate
 * normal CDF (Genz's algorithm) through the machine's python3, which computes the probability of
 * staying inside the boundaries from the joint normal law of (Z_1, …, Z_k) with
 * Corr(Z_i, Z_j) = √(t_i/t_j). Reference library: SciPy (version printed by the test).
 *
 * <p>{@code scripts/test} installs SciPy where it is missing; elsewhere this test is skipped with a
 * message saying so.
 */
class ScipyCrossCheckTest {
    private static final ObjectMapper JSON = new ObjectMapper();

    @Test
    void crossingProbabilitiesAgreeWithScipy(@TempDir Path dir) throws Exception {
        Assumptions.assumeTrue(dev.interim.reference.PythonReference.imports("scipy.stats"),
                "SKIPPED: python3 with SciPy is not available here; scripts/test installs it (Debian python3-scipy)");

        SplittableRandom random = new SplittableRandom(314159);
        String[] spendings = {"obf", "pocock", "power:2", "hsd:-3", "hsd:1", "power:0.7"};
        Alternative[] alternatives = {Alternative.TWO_SIDED, Alternative.GREATER, Alternative.LESS};
        List<GroupSequentialDesign> designs = new ArrayList<>();
        List<double[]> schedules = new ArrayList<>();
        ArrayNode input = JSON.createArrayNode();
        for (int i = 0; i < spendings.length; i++) {
            double alpha = i % 2 == 0 ? 0.05 : 0.025;
            GroupSequentialDesign design = GroupSequentialDesign.spending(alpha, alternatives[i % 3],
                    SpendingFunction.parse(spendings[i]));
            double[] fractions = separatedFractions(random, 2 + i % 3);
            Look[] looks = design.looksAt(fractions);
            ObjectNode d = input.addObject();
            ArrayNode t = d.putArray("fractions");
            ArrayNode up = d.putArray("upper");
            ArrayNode low = d.putArray("lower");
            for (Look look : looks) {
                t.add(look.fraction());
                if (Double.isInfinite(look.upper())) {
                    up.addNull();
                } else {
                    up.add(look.upper());
                }
                if (Double.isInfinite(look.lower())) {
                    low.addNull();
                } else {
                    low.add(look.lower());
                }
            }
            designs.add(design);
            schedules.add(fractions);
        }

        JsonNode output = dev.interim.reference.PythonReference.run("mvn_crossing.py", dir, JSON.writeValueAsString(input), 300);
        System.out.println("SciPy " + output.get("scipy").asText() + " cross-checked " + designs.size() + " designs");
        for (int i = 0; i < designs.size(); i++) {
            JsonNode crossed = output.get("crossed").get(i);
            for (int k = 0; k < schedules.get(i).length; k++) {
                // Tolerance 1e-5: the requirement on crossing probabilities; SciPy is asked for 1e-8.
                assertThat(crossed.get(k).asDouble())
                        .as("design %d (%s), look %d", i, designs.get(i).efficacyLabel(), k + 1)
                        .isCloseTo(designs.get(i).alphaAllowed(schedules.get(i)[k]), within(1e-5));
            }
        }
    }

    /**
     * Increasing fractions ending at 1 with no two closer than about 0.06: Genz's algorithm loses
     * accuracy as the correlation of neighbouring looks nears 1 (nearly singular covariance), so the
     * very close looks are left to {@link CrossingAccuracyTest}.
     */
    private static double[] separatedFractions(SplittableRandom random, int looks) {
        double[] t = new double[looks];
        double sum = 0;
        for (int i = 0; i < looks; i++) {
            sum += 0.3 + 0.7 * random.nextDouble();
            t[i] = sum;
        }
        for (int i = 0; i < looks; i++) {
            t[i] = i == looks - 1 ? 1 : t[i] / sum;
        }
        return t;
    }
}
