package dev.interim.cli;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.json.JsonMapper;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@code interim check} and {@code interim simulate} on a configuration holding event-quantile
 * metrics: check lists each with its percentile and says when it can first look; simulate runs a
 * quantile's design on the Z scale, with effects in the metric's units from a powered horizon, and
 * refuses a max_per_arm that ends the design before the quantile can be estimated.
 */
// Source: the events a quantile waits for are its rule (50 beyond it: 5,000 per arm for p99, 50,000 for
// p99.9; docs/configuration.md); the power of 0.8 at the planned effect is what the configuration asks
// for, which the simulation of the same design must give back within its Monte Carlo error.
class QuantileCommandsTest {
    /** An invented map-tile service: a p99 guardrail with max_per_arm, a p99.9 guardrail planned by power. */
    static final String CONFIG = """
            kafka:
              input_topics: [sorrel.tiles]
            events:
              experiment: /exp
              arm: /arm
            experiments:
              - id: sorrel-tiles
                control: raster
                treatments: [vector]
                metrics:
                  - name: tile-ms
                    kind: event-quantile
                    quantile: 0.99
                    role: guardrail
                    worse: higher
                    field: /tile_ms
                    range: {max: 120000}
                    max_per_arm: 20000
                  - name: tail-ms
                    kind: event-quantile
                    quantile: 0.999
                    role: guardrail
                    worse: higher
                    field: /tile_ms
                    power: 0.8
                    effect: 40
                    planned_looks: 10
            """;

    @TempDir
    static Path dir;
    static Path config;

    @BeforeAll
    static void writeConfig() throws IOException {
        config = Files.writeString(dir.resolve("sorrel.yaml"), CONFIG);
    }

    @Test
    void checkListsEachQuantileWithItsPercentileAndItsFirstLook() {
        Cli.Result r = Cli.run("check", "--config", config.toString(), "--without-secrets");
        assertThat(r.exit()).as(r.err()).isZero();
        List<String> lines = r.out().lines().toList();
        assertThat(lines).anyMatch(l -> l.startsWith("  tile-ms ") && l.contains(" event-quantile p99 (0.99) ")
                && l.contains(" at most 20000 events per arm ") && l.endsWith(" /tile_ms"));
        assertThat(lines).anyMatch(l -> l.startsWith("  tail-ms ") && l.contains(" event-quantile p99.9 (0.999) "));
        assertThat(lines).contains("  p99 tile-ms: no look before each arm has 5,000 events (50 values beyond the quantile)",
                "  p99.9 tail-ms: no look before each arm has 50,000 events (50 values beyond the quantile)");
        assertThat(r.out()).doesNotContain("WARN");
    }

    @Test
    void checkWarnsWhenMaxPerArmEndsTheDesignBeforeTheQuantileCanLook() throws IOException {
        Path small = Files.writeString(dir.resolve("small.yaml"), CONFIG.replace("max_per_arm: 20000", "max_per_arm: 2000"));
        Cli.Result r = Cli.run("check", "--config", small.toString(), "--without-secrets");
        assertThat(r.exit()).as(r.err()).isZero();
        assertThat(r.out()).contains("  WARN: p99 tile-ms: max_per_arm 2000 events is below the 5,000 each arm needs");
    }

    @Test
    void checkPerUnitNamesTheGroupsOfUnits() throws IOException {
        Path units = Files.writeString(dir.resolve("units.yaml"), CONFIG
                .replace("  input_topics: [sorrel.tiles]\n", "  input_topics: [sorrel.tiles]\n  input_keyed_by_unit: true\n")
                .replace("  arm: /arm\n", "  arm: /arm\n  unit: /device\n"));
        Cli.Result r = Cli.run("check", "--config", units.toString(), "--without-secrets");
        assertThat(r.exit()).as(r.err()).isZero();
        assertThat(r.out()).contains("  p99 tile-ms: no look before each arm has 5,000 events (50 values beyond the quantile)"
                + " and events of 8 of its 32 groups of units");
    }

    @Test
    void simulateRunsAQuantileDesignAndNamesItsPercentile() {
        Cli.Result r = Cli.run("simulate", "--config", config.toString(), "--runs", "1000", "--looks", "5");
        assertThat(r.exit()).as(r.err()).isZero();
        assertThat(r.out()).contains("sorrel-tiles / p99 tile-ms (guardrail, worse: higher): vector against control")
                .contains("horizon: at most 20000 events per arm; no look before 5000 events per arm (fraction 0.250)")
                .contains("sorrel-tiles / p99.9 tail-ms (guardrail, worse: higher)")
                .contains("power 0.8 for effect 40 (10 planned looks)");
    }

    @Test
    void simulateTakesEffectsInTheQuantilesUnitsAndGivesThePlannedPower() throws IOException {
        Cli.Result r = Cli.run("simulate", "--config", config.toString(), "--metric", "tail-ms", "--runs", "20000",
                "--looks", "10", "--effects", "20,40", "--effect-unit", "metric", "--format", "json");
        assertThat(r.exit()).as(r.err()).isZero();
        JsonNode c = JsonMapper.builder().build().readTree(r.out()).get("comparisons").get(0);
        assertThat(c.get("metric").asText()).isEqualTo("tail-ms");
        assertThat(c.get("quantile").asDouble()).isEqualTo(0.999);
        JsonNode planned = c.get("effects").get(2);
        assertThat(planned.at("/effect").asDouble()).isEqualTo(40);
        // The configured power at the configured effect, 10 equally spaced looks as planned: 0.8 within
        // four Monte Carlo standard errors (√(0.8·0.2/20000) ≈ 0.0028).
        assertThat(planned.at("/reject/estimate").asDouble()).isCloseTo(0.8, within(0.012));
    }

    @Test
    void simulateRefusesAQuantileThatCouldNeverLook() throws IOException {
        Path small = Files.writeString(dir.resolve("never.yaml"), CONFIG.replace("max_per_arm: 20000", "max_per_arm: 2000"));
        Cli.Result r = Cli.run("simulate", "--config", small.toString(), "--runs", "500");
        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines()).hasSize(1);
        assertThat(r.errLines().get(0)).contains("metric 'tile-ms' of experiment 'sorrel-tiles': its p99 needs 5000 events"
                + " per arm before its first look, more than its max_per_arm 2000");
        // Leaving it out is the way round.
        assertThat(Cli.run("simulate", "--config", small.toString(), "--runs", "500", "--metric", "tail-ms").exit()).isZero();
    }

    @Test
    void simulateHasNoMetricUnitsForAQuantileWithMaxPerArm() {
        Cli.Result r = Cli.run("simulate", "--config", config.toString(), "--metric", "tile-ms", "--effects", "10",
                "--effect-unit", "metric");
        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines().get(0)).contains("metric 'tile-ms' of experiment 'sorrel-tiles' has max_per_arm");
        Map<String, List<String>> csv = Cli.run("simulate", "--config", config.toString(), "--metric", "tile-ms",
                "--runs", "500", "--format", "csv").csvColumns();
        assertThat(csv.get("metric")).containsOnly("tile-ms");
    }
}
