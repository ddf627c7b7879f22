package dev.interim.config;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

/**
 * The YAML examples of the configuration reference, docs/configuration.md, are valid: the shape
 * example loads, and every {@code counts_if} line of the condition examples is accepted.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class ReferenceExamplesTest {

    private static List<String> yamlBlocks() throws IOException {
        Path reference = null;
        for (Path dir = Path.of("").toAbsolutePath(); dir != null && reference == null; dir = dir.getParent()) {
            Path candidate = dir.resolve("docs/configuration.md");
            if (Files.isRegularFile(candidate)) {
                reference = candidate;
            }
        }
        assertThat(reference).as("docs/configuration.md above the working directory").isNotNull();
        List<String> blocks = new ArrayList<>();
        StringBuilder block = null;
        for (String line : Files.readAllLines(reference)) {
            if (block == null && line.equals("```yaml")) {
                block = new StringBuilder();
            } else if (block != null && line.equals("```")) {
                blocks.add(block.toString());
                block = null;
            } else if (block != null) {
                block.append(line).append('\n');
            }
        }
        return blocks;
    }

    @Test
    void theShapeExampleLoads() throws IOException {
        String shape = yamlBlocks().get(0);

        InterimConfig config = ConfigLoader.parse(shape, Map.of("INTERIM_WEBHOOK_KEY", Configs.HOOK_KEY));

        assertThat(config.experiments()).singleElement()
                .satisfies(e -> assertThat(e.definition().metrics()).hasSize(2));
    }

    @Test
    void theTlsExampleIsAcceptedInPlaceOfTheShapesKafkaSection() throws IOException {
        List<String> blocks = yamlBlocks();
        String shape = blocks.get(0);
        // The TLS block has no input topics of its own: they follow its properties.
        String yaml = blocks.get(1) + "  input_topics: [shop.checkout-events]\n  input_keyed_by_unit: true\n"
                + shape.substring(shape.indexOf("events:"));

        InterimConfig config = ConfigLoader.parse(yaml, Map.of("INTERIM_WEBHOOK_KEY", Configs.HOOK_KEY,
                "KAFKA_PASSWORD", "pw-1", "KAFKA_TRUSTSTORE_PASSWORD", "pw-2"));

        assertThat(config.kafka().bootstrapServers()).hasSize(2);
        assertThat(config.kafka().properties().forClients()).containsEntry("ssl.truststore.password", "pw-2");
    }

    /** The ratio example (numerator, denominator, ranges, cap, relative_effect) loads as the shape's only metric. */
    @Test
    void theRatioExampleLoads() throws IOException {
        List<String> blocks = yamlBlocks();
        String ratio = blocks.stream().filter(b -> b.contains("kind: ratio")).findFirst().orElseThrow();
        String shape = blocks.get(0);
        String yaml = shape.substring(0, shape.indexOf("    metrics:\n")) + "    metrics:\n"
                + ratio.lines().map(l -> "      " + l + "\n").reduce("", String::concat);

        InterimConfig config = ConfigLoader.parse(yaml, Map.of("INTERIM_WEBHOOK_KEY", Configs.HOOK_KEY));

        var definition = config.experiments().get(0).definition();
        assertThat(definition.assignment().label()).as("events.unit is set: per unit by default").isEqualTo("unit");
        var metric = definition.metrics().get(0);
        assertThat(metric.kind().label()).isEqualTo("ratio");
        assertThat(metric.cap()).isEqualTo(500.0);
        assertThat(((dev.interim.experiment.Horizon.Powered) metric.horizon()).scale())
                .isEqualTo(dev.interim.experiment.Horizon.Scale.RELATIVE);
    }

    /** The quantile example (quantile, an open-ended range, max_per_arm) loads as the shape's only metric. */
    @Test
    void theQuantileExampleLoads() throws IOException {
        List<String> blocks = yamlBlocks();
        String quantile = blocks.stream().filter(b -> b.contains("kind: event-quantile")).findFirst().orElseThrow();
        String shape = blocks.get(0);
        String yaml = shape.substring(0, shape.indexOf("    metrics:\n")) + "    metrics:\n"
                + quantile.lines().map(l -> "      " + l + "\n").reduce("", String::concat);

        InterimConfig config = ConfigLoader.parse(yaml, Map.of("INTERIM_WEBHOOK_KEY", Configs.HOOK_KEY));

        var experiment = config.experiments().get(0);
        var metric = experiment.definition().metrics().get(0);
        assertThat(metric.kind().label()).isEqualTo("event-quantile");
        assertThat(metric.quantile()).isEqualTo(0.99);
        assertThat(((dev.interim.events.MetricSource.Value) experiment.source(metric)).range())
                .isEqualTo(new dev.interim.events.ValueRange(0, 60000));
    }

    @Test
    void everyConditionExampleIsAccepted() throws IOException {
        String conditions = yamlBlocks().stream().filter(b -> b.startsWith("counts_if:")).findFirst().orElseThrow();
        List<String> lines = conditions.lines().toList();
        assertThat(lines).hasSizeGreaterThanOrEqualTo(5);
        for (String line : lines) {
            String condition = line.substring("counts_if: ".length(), line.indexOf('#')).strip();
            String yaml = Configs.valid("{at_least: 500}", condition);
            assertThat(ConfigLoader.parse(yaml, Configs.ENV).experiments()).as(line).hasSize(1);
        }
    }
}
