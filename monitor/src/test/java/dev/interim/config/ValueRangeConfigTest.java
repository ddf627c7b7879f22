package dev.interim.config;

import dev.interim.events.MappedExperiment;
import dev.interim.events.ValueRange;

import dev.interim.events.MetricSource;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import com.fasterxml.jackson.core.JsonPointer;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.stream.Collectors;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * The optional {@code range} of a mean or a total ({@code range: {min: X, max: Y}}, either end
 * optional): how it is read, what it allows, and every way of writing it wrong, each refused at its
 * key path. The rules are those of docs/configuration.md; no statistical values here.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class ValueRangeConfigTest {

    /** {@link Configs#VALID} with an event-mean first among the metrics, written with {@code extra}. */
    private static String withLatency(String extra) {
        return Configs.valid("    metrics:\n", "    metrics:\n      - {name: latency, kind: event-mean, role: guardrail, "
                + "worse: higher, field: /ms, max_per_arm: 1000" + extra + "}\n");
    }

    private static MetricSource.Value latencySource(String extra) {
        MappedExperiment e = ConfigLoader.parse(withLatency(extra), Configs.ENV).experiments().get(0);
        return (MetricSource.Value) e.source(e.definition().metrics().get(0));
    }

    @Test
    void aRangeIsReadWithEitherEndOptional() {
        assertThat(latencySource(", range: {min: 0, max: 60000}").range()).isEqualTo(new ValueRange(0, 60000));
        assertThat(latencySource(", range: {min: 0}").range()).isEqualTo(new ValueRange(0, Double.POSITIVE_INFINITY));
        assertThat(latencySource(", range: {max: -1.5}").range()).isEqualTo(new ValueRange(Double.NEGATIVE_INFINITY, -1.5));
        assertThat(latencySource(", range: {min: 7, max: 7}").range()).isEqualTo(new ValueRange(7, 7));
    }

    @Test
    void theReferencesRangeExampleLoads() throws IOException {
        Path reference = null;
        for (Path dir = Path.of("").toAbsolutePath(); dir != null && reference == null; dir = dir.getParent()) {
            reference = Files.isRegularFile(dir.resolve("docs/configuration.md")) ? dir.resolve("docs/configuration.md") : null;
        }
        assertThat(reference).as("docs/configuration.md above the working directory").isNotNull();
        String doc = Files.readString(reference);
        int start = doc.indexOf("```yaml\n- {name: latency");
        assertThat(start).as("the range example in docs/configuration.md").isNotNegative();
        String example = doc.substring(start + "```yaml\n".length(), doc.indexOf("```", start + 7));
        String metrics = example.lines().map(l -> "      " + l + "\n").collect(Collectors.joining());
        MappedExperiment e = ConfigLoader.parse(Configs.valid("    metrics:\n", "    metrics:\n" + metrics), Configs.ENV)
                .experiments().get(0);
        assertThat(((MetricSource.Value) e.source(e.definition().metrics().get(0))).range()).isEqualTo(new ValueRange(0, 60000));
        assertThat(((MetricSource.Value) e.source(e.definition().metrics().get(1))).range())
                .isEqualTo(new ValueRange(0, Double.POSITIVE_INFINITY));
    }

    @Test
    void withoutARangeEveryValueIsAllowedAndTheSourceIsAsBefore() {
        MetricSource.Value source = latencySource("");
        assertThat(source.range()).isEqualTo(ValueRange.ANY);
        assertThat(source).isEqualTo(new MetricSource.Value(JsonPointer.compile("/ms")));
    }

    @Test
    void bothEndsAreIncludedAndNaNIsNever() {
        ValueRange r = new ValueRange(0, 60000);
        assertThat(r.contains(0)).isTrue();
        assertThat(r.contains(-0.0)).isTrue();
        assertThat(r.contains(60000)).isTrue();
        assertThat(r.contains(Math.nextUp(60000.0))).isFalse();
        assertThat(r.contains(-Double.MIN_VALUE)).isFalse();
        assertThat(r.contains(Double.NaN)).isFalse();
        assertThat(ValueRange.ANY.contains(Double.MAX_VALUE)).isTrue();
        assertThat(ValueRange.ANY.contains(Double.NaN)).isFalse();
    }

    @Test
    void aRangeIsShownAsTheConfigurationWritesIt() {
        assertThat(new ValueRange(0, 60000)).hasToString("{min: 0, max: 60000}");
        assertThat(new ValueRange(0.5, Double.POSITIVE_INFINITY)).hasToString("{min: 0.5}");
        assertThat(new ValueRange(Double.NEGATIVE_INFINITY, -2)).hasToString("{max: -2}");
        assertThat(ValueRange.ANY).hasToString("{}");
    }

    @Test
    void theDomainValueRefusesAnEmptyOrUndefinedRange() {
        assertThatThrownBy(() -> new ValueRange(2, 1)).hasMessageContaining("min 2.0 is above max 1.0");
        assertThatThrownBy(() -> new ValueRange(Double.NaN, 1)).hasMessageContaining("must be numbers");
        assertThatThrownBy(() -> new MetricSource.Value(JsonPointer.compile("/ms"), null)).hasMessageContaining("ValueRange.ANY");
    }

    static Stream<Arguments> invalid() {
        String at = "experiments[0].metrics[0].range";
        return Stream.of(
                Arguments.of(at, "min 10 is above max 5", withLatency(", range: {min: 10, max: 5}")),
                Arguments.of(at + ".min", "must be a number; got text 'zero'", withLatency(", range: {min: zero}")),
                Arguments.of(at + ".max", "must be a number; got true", withLatency(", range: {max: true}")),
                Arguments.of(at + ".max", "must be a finite number", withLatency(", range: {max: 1e400}")),
                Arguments.of(at + ".min", "must be a finite number", withLatency(", range: {min: -1e400}")),
                Arguments.of(at, "must give min, max or both", withLatency(", range: {}")),
                Arguments.of(at, "must be a mapping of min, max; got a list", withLatency(", range: [0, 100]")),
                Arguments.of(at + ".minimum", "unknown key; accepted here: min, max", withLatency(", range: {minimum: 0}")),
                Arguments.of(at + ".mni", "did you mean 'min'", withLatency(", range: {mni: 0}")),
                Arguments.of("experiments[0].metrics[0].range", "applies to means and totals only",
                        Configs.valid("counts_if: {at_least: 500}", "counts_if: {at_least: 500}\n        range: {min: 0}")));
    }

    @ParameterizedTest(name = "{0}: {1}")
    @MethodSource("invalid")
    void aBadRangeIsRefusedAtItsKeyPath(String keyPath, String fragment, String yaml) {
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(yaml, Configs.ENV));

        assertThat(e).as("refused").isNotNull();
        assertThat(e.keyPath()).isEqualTo(keyPath);
        assertThat(e.getMessage()).startsWith(keyPath + ": ").contains(fragment);
    }
}
