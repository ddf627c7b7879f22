package dev.interim.cli;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.json.JsonMapper;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.stream.Stream;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * {@code interim simulate} end to end, in-process, on an invented configuration: the three formats,
 * the chart file, reproducibility across thread counts, and bad input (exit 2, one line naming the
 * problem). The statistics are checked in {@code dev.interim.simulate}; no statistical values here.
 */
// Source: expected values come from what this test itself configures; the statistics are checked against
// published values in dev.interim.simulate. No published statistical values here.
class SimulateCommandTest {
    /** An invented ferry-booking site: a guardrail with a maximum per arm, a powered primary metric. */
    static final String CONFIG = """
            kafka:
              input_topics: [harbour.bookings]
              input_keyed_by_unit: true
            events:
              experiment: /experiment
              arm: /variant
              unit: /traveller
            experiments:
              - id: seat-picker-2031
                control: classic
                treatments: [map-picker, list-picker]
                metrics:
                  - name: booking-errors
                    kind: event-rate
                    role: guardrail
                    worse: higher
                    field: /status
                    counts_if: {at_least: 500}
                    alpha: 0.02
                    spending: pocock
                    max_per_arm: 30000
                  - name: booked
                    kind: unit-rate
                    role: primary
                    worse: lower
                    field: /step
                    counts_if: {equals: paid}
                    power: 0.8
                    effect: 0.015
                    planned_looks: 8
            """;

    @TempDir
    static Path dir;
    static Path config;

    @BeforeAll
    static void writeConfig() throws IOException {
        config = dir.resolve("ferry.yaml");
        Files.writeString(config, CONFIG);
    }

    private static Cli.Result simulate(String... options) {
        List<String> args = new ArrayList<>(List.of("simulate", "--config", config.toString()));
        args.addAll(Arrays.asList(options));
        return Cli.run(args.toArray(String[]::new));
    }

    @Test
    void theTableHasBothTablesForEachMetricAndTheNotes() {
        Cli.Result r = simulate("--runs", "2000", "--looks", "6");
        assertThat(r.exit()).as(r.err()).isZero();
        assertThat(r.out()).startsWith("Simulated 2000 runs per effect (stream 1) at 6 equally spaced looks")
                .contains("seat-picker-2031 / booking-errors (guardrail, worse: higher): map-picker against control")
                .contains("seat-picker-2031 / booked (primary, worse: lower)")
                .contains("alpha 0.01 (0.02 over 2 treatments)")
                .contains("power 0.8 for effect 0.015 (8 planned looks)")
                .contains("P(reject)", "stop-futility", "median (95% MC)", "stopping look 1..6")
                .contains("benefit +0.015", "E[t]: expected information fraction at stopping");
        assertThat(r.errLines()).hasSize(1);
        assertThat(r.errLines().get(0)).startsWith("simulate: 8 metric-effect pairs x 2,000 runs");
    }

    @Test
    void csvHasARowPerMetricAndEffectWithTheNullFirst() {
        Cli.Result r = simulate("--runs", "1000", "--format", "csv", "--metric", "booked", "--effects", "0.01,0.02",
                "--effect-unit", "metric");
        assertThat(r.exit()).as(r.err()).isZero();
        Map<String, List<String>> columns = r.csvColumns();
        assertThat(columns.get("metric")).containsExactly("booked", "booked", "booked");
        assertThat(columns.get("effect")).containsExactly("0", "0.01", "0.02");
        assertThat(columns.get("direction")).containsExactly("none", "benefit", "benefit");
        assertThat(columns.get("runs")).containsOnly("1000");
        assertThat(columns.get("looks")).containsOnly("20");
        for (String stopped : columns.get("stopped_by_look")) {
            long total = Arrays.stream(stopped.split(";")).mapToLong(Long::parseLong).sum();
            assertThat(total).isEqualTo(1000);
            assertThat(stopped.split(";")).hasSize(20);
        }
        double[] reject = r.csvNumbers("reject");
        assertThat(reject[2]).isGreaterThan(reject[1]).isGreaterThan(reject[0]);
    }

    @Test
    void jsonHasTheSettingsTheDesignsAndEveryEstimateWithItsError() throws IOException {
        Cli.Result r = simulate("--runs", "500", "--format", "json", "--look-fractions", "0.2,0.5,1", "--stream", "12");
        assertThat(r.exit()).as(r.err()).isZero();
        JsonNode root = JsonMapper.builder().build().readTree(r.out());
        assertThat(root.at("/settings/runs").asLong()).isEqualTo(500);
        assertThat(root.at("/settings/stream").asLong()).isEqualTo(12);
        assertThat(root.at("/settings/fractions").size()).isEqualTo(3);
        JsonNode comparisons = root.get("comparisons");
        assertThat(comparisons.size()).isEqualTo(2);
        JsonNode guardrail = comparisons.get(0);
        assertThat(guardrail.get("metric").asText()).isEqualTo("booking-errors");
        assertThat(guardrail.at("/design/alternative").asText()).isEqualTo("greater");
        assertThat(guardrail.at("/design/alpha").asDouble()).isEqualTo(0.01);
        assertThat(guardrail.get("looks").size()).isEqualTo(3);
        assertThat(guardrail.at("/looks/0/lower").isNull()).isTrue(); // a guardrail has no lower boundary
        JsonNode effect = guardrail.at("/effects/1");
        assertThat(effect.at("/reject/se").isNumber()).isTrue();
        assertThat(effect.at("/reject/recursion").isNumber()).isTrue();
        assertThat(effect.get("decisions").fieldNames()).toIterable()
                .containsExactly("stop-harm", "stop-benefit", "stop-futility", "complete");
        assertThat(effect.get("stopping_look_quantiles").size()).isEqualTo(5);
        assertThat(effect.get("stopped_by_look").size()).isEqualTo(3);
        assertThat(comparisons.get(1).at("/horizon/drift_per_unit").isNumber()).isTrue();
    }

    @Test
    void theSameStreamGivesTheSameOutputOnOneAndFourThreads() {
        Cli.Result one = simulate("--runs", "20000", "--format", "csv", "--threads", "1", "--stream", "4");
        Cli.Result four = simulate("--runs", "20000", "--format", "csv", "--threads", "4", "--stream", "4");
        assertThat(one.exit()).isZero();
        assertThat(four.out()).isEqualTo(one.out());
        assertThat(simulate("--runs", "20000", "--format", "csv", "--threads", "4", "--stream", "5").out())
                .isNotEqualTo(one.out());
    }

    @Test
    void theChartIsWrittenWhereAsked() throws IOException {
        Path chart = dir.resolve("oc.svg");
        Cli.Result r = simulate("--runs", "500", "--looks", "4", "--chart", chart.toString());
        assertThat(r.exit()).as(r.err()).isZero();
        assertThat(r.errLines().get(0)).endsWith("chart written to " + chart);
        String svg = Files.readString(chart);
        assertThat(svg).startsWith("<?xml").contains("<svg xmlns=\"http://www.w3.org/2000/svg\"")
                .contains("data-metric=\"booked\"").endsWith("</svg>\n");
    }

    @Test
    void theDemoScenarioSimulatesWithoutAConfigurationFile() {
        Cli.Result r = Cli.run("simulate", "--demo", "--runs", "500", "--looks", "5", "--format", "csv");
        assertThat(r.exit()).as(r.err()).isZero();
        assertThat(r.csvColumns().get("experiment")).containsOnly("quorvel-payments-2026-12");
        assertThat(r.csvColumns().get("metric")).contains("payment-errors", "checkout-completed");
    }

    static Stream<Arguments> badInputs() {
        return Stream.of(
                bad("give --config FILE", "simulate"),
                bad("either --config or --demo", "simulate", "--demo", "--config", "x.yaml"),
                bad("no such file", "simulate", "--config", "/nonexistent/interim.yaml"),
                bad("--looks must lie between 1 and 10000", "--looks", "0"),
                bad("either --looks or --look-fractions", "--looks", "3", "--look-fractions", "0.5,1"),
                bad("--look-fractions: the last look must be at the planned maximum, fraction 1", "--look-fractions", "0.5,0.9"),
                bad("--look-fractions: information fractions must increase", "--look-fractions", "0.5,0.3,1"),
                bad("--look-fractions must be numbers", "--look-fractions", "0.5,half,1"),
                bad("--runs must lie between 100", "--runs", "5"),
                bad("--runs", "--runs", "many"),
                bad("--threads must lie between 1", "--threads", "0"),
                bad("--effects must be numbers separated by commas", "--effects", "1,big"),
                bad("--effects must be numbers", "--effects", "NaN"),
                bad("--effect-unit needs --effects", "--effect-unit", "metric"),
                bad("unknown effect unit 'percent'", "--effects", "1", "--effect-unit", "percent"),
                bad("metric 'booking-errors' of experiment 'seat-picker-2031' has max_per_arm", "--effects", "0.01",
                        "--effect-unit", "metric"),
                bad("unknown --format 'xml'", "--format", "xml"),
                bad("--chart writes an SVG image", "--chart", "oc.png"),
                bad("does not exist", "--chart", "/nonexistent/dir/oc.svg"),
                bad("--metric: 'checkout' is not in the configuration; it has booking-errors, booked", "--metric", "checkout"),
                bad("--experiment: 'other' is not in the configuration", "--experiment", "other"),
                bad("--stream", "--stream", "1.5"),
                bad("'--bogus'", "--bogus", "4"));
    }

    private static Arguments bad(String named, String... options) {
        return Arguments.of(String.join(" ", options), named, options);
    }

    @ParameterizedTest(name = "simulate {0}")
    @MethodSource("badInputs")
    void badInputExitsWithTwoAndOneLineNamingTheProblem(String shown, String named, String[] options) {
        Cli.Result r = options.length > 0 && options[0].equals("simulate") ? Cli.run(options) : simulate(options);
        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.out()).isEmpty();
        assertThat(r.errLines()).hasSize(1);
        assertThat(r.errLines().get(0)).startsWith("interim: ").contains(named)
                .endsWith("see 'interim simulate --help'").doesNotContain("Exception");
    }

    @Test
    void anInvalidConfigurationIsBadInputNamingTheKey() throws IOException {
        Path broken = dir.resolve("broken.yaml");
        Files.writeString(broken, CONFIG.replace("alpha: 0.02", "alpha: 2"));
        Cli.Result r = Cli.run("simulate", "--config", broken.toString());
        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines()).hasSize(1);
        assertThat(r.errLines().get(0)).contains("broken.yaml").contains("alpha");
    }
}
