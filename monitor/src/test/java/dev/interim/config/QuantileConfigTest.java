package dev.interim.config;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import dev.interim.events.MetricSource;
import dev.interim.events.ValueRange;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.MetricKind;
import dev.interim.stats.HistogramCounts;
import java.util.Map;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * The event-quantile kind in a configuration: a valid metric reads with its probability and its
 * default range, and each slip is one problem at the key it is about, saying what to do. The rules
 * come from the configuration reference (docs/configuration.md, `metrics`) and MetricDefinition.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class QuantileConfigTest {
    /** An invented image service whose resize latency p99 is a guardrail, arms assigned per event. */
    private static final String VALID = """
            kafka:
              input_topics: [plumtree.events]
            events:
              experiment: /exp
              arm: /arm
            experiments:
              - id: plumtree-resize
                control: v1
                treatments: [v2]
                metrics:
                  - name: resize-ms
                    kind: event-quantile
                    quantile: 0.99
                    role: guardrail
                    worse: higher
                    field: /resize_ms
                    max_per_arm: 20000
                  - name: failures
                    kind: event-rate
                    role: guardrail
                    worse: higher
                    field: /failed
                    counts_if: {equals: true}
                    max_per_arm: 20000
            """;

    private static String valid(String old, String replacement) {
        assertThat(VALID.indexOf(old)).as("'%s' occurs once", old).isNotNegative().isEqualTo(VALID.lastIndexOf(old));
        return VALID.replace(old, replacement);
    }

    @Test
    void aQuantileMetricReadsWithItsProbabilityAndTheDefaultRange() {
        InterimConfig config = ConfigLoader.parse(VALID, Map.of());
        var experiment = config.experiment("plumtree-resize").orElseThrow();
        MetricDefinition m = experiment.definition().metrics().get(0);

        assertThat(m.kind()).isEqualTo(MetricKind.EVENT_QUANTILE);
        assertThat(m.quantile()).isEqualTo(0.99);
        assertThat(m.label()).isEqualTo("p99 resize-ms");
        assertThat(experiment.definition().metrics().get(1).quantile()).isNull();
        MetricSource.Value source = (MetricSource.Value) experiment.source(m);
        assertThat(source.range()).isEqualTo(new ValueRange(0, HistogramCounts.HIGHEST));
    }

    @Test
    void aRangeWithinTheHistogramsIsKept() {
        InterimConfig config = ConfigLoader.parse(valid("field: /resize_ms", "field: /resize_ms\n        range: {min: 1, max: 60000}"),
                Map.of());
        var experiment = config.experiment("plumtree-resize").orElseThrow();
        MetricSource.Value source = (MetricSource.Value) experiment.source(experiment.definition().metrics().get(0));
        assertThat(source.range()).isEqualTo(new ValueRange(1, 60000));
    }

    /** An end left open is the histograms' end, so {min: 0} (the default written out) and {max: X} are accepted. */
    @Test
    void anOpenEndOfTheRangeIsTheHistogramsEnd() {
        for (String[] c : new String[][] {{"range: {min: 0}", "0", "1e12"}, {"range: {max: 60000}", "0", "60000"},
            {"range: {min: 5}", "5", "1e12"}}) {
            InterimConfig config = ConfigLoader.parse(valid("field: /resize_ms", "field: /resize_ms\n        " + c[0]), Map.of());
            var experiment = config.experiment("plumtree-resize").orElseThrow();
            MetricSource.Value source = (MetricSource.Value) experiment.source(experiment.definition().metrics().get(0));
            assertThat(source.range()).as(c[0]).isEqualTo(new ValueRange(Double.parseDouble(c[1]), Double.parseDouble(c[2])));
        }
    }

    static Stream<Arguments> invalid() {
        return Stream.of(
                Arguments.of("missing quantile", "experiments[0].metrics[0]", "needs quantile: the probability",
                        valid("        quantile: 0.99\n", "")),
                Arguments.of("quantile on another kind", "experiments[0].metrics[1].quantile",
                        "applies to event-quantile metrics only",
                        valid("counts_if: {equals: true}", "counts_if: {equals: true}\n        quantile: 0.99")),
                Arguments.of("probability above 0.999", "experiments[0].metrics[0].quantile", "must lie in [0.01, 0.999]",
                        valid("quantile: 0.99", "quantile: 0.9999")),
                Arguments.of("probability below 0.01", "experiments[0].metrics[0].quantile", "must lie in [0.01, 0.999]",
                        valid("quantile: 0.99", "quantile: 0.001")),
                Arguments.of("a percentage instead of a probability", "experiments[0].metrics[0].quantile",
                        "must lie in [0.01, 0.999]", valid("quantile: 0.99", "quantile: 99")),
                Arguments.of("quantile not a number", "experiments[0].metrics[0].quantile", "must be a number",
                        valid("quantile: 0.99", "quantile: p99")),
                Arguments.of("cap on a quantile", "experiments[0].metrics[0].cap", "does not apply to an event-quantile metric",
                        valid("field: /resize_ms", "field: /resize_ms\n        cap: 5000")),
                Arguments.of("a range below 0", "experiments[0].metrics[0].range", "must lie within [0, 1000000000000]",
                        valid("field: /resize_ms", "field: /resize_ms\n        range: {min: -1}")),
                Arguments.of("a range wholly below 0", "experiments[0].metrics[0].range", "must lie within [0, 1000000000000]",
                        valid("field: /resize_ms", "field: /resize_ms\n        range: {max: -5}")),
                Arguments.of("a range above the histograms", "experiments[0].metrics[0].range",
                        "must lie within [0, 1000000000000]",
                        valid("field: /resize_ms", "field: /resize_ms\n        range: {max: 2e12}")),
                Arguments.of("counts_if on a quantile", "experiments[0].metrics[0].counts_if", "applies to rates only",
                        valid("field: /resize_ms", "field: /resize_ms\n        counts_if: {above: 500}")));
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("invalid")
    void isRefusedAtTheKeyWithWhatToDo(String what, String keyPath, String fragment, String yaml) {
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(yaml, Map.of()));

        assertThat(e).as("refused").isNotNull();
        assertThat(e.problems()).as("one change, one problem reported").hasSize(1);
        ConfigException problem = e.problems().get(0);
        assertThat(problem.keyPath()).isEqualTo(keyPath);
        assertThat(problem.getMessage()).startsWith(keyPath + ": ").contains(fragment);
        assertThat(problem.getMessage()).doesNotContain("\n");
        assertThat(problem).isInstanceOf(IllegalArgumentException.class);
    }
}
