package dev.interim.config;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.Horizon;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.StopAction;
import dev.interim.sequential.SpendingFunction;
import java.time.Duration;
import java.util.Map;
import org.junit.jupiter.api.Test;

/** What a key left out means, as the configuration reference (docs/configuration.md) states it. */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class DefaultsTest {
    private final InterimConfig config = ConfigLoader.parse(Configs.VALID, Configs.ENV);

    @Test
    void kafkaDefaults() {
        KafkaSettings k = config.kafka();
        assertThat(k.embedded()).isTrue();
        assertThat(k.decisionsTopic()).isEqualTo("interim.decisions");
        assertThat(k.deadLetterTopic()).isEqualTo("interim.dead-letters");
        assertThat(k.stateTopicPrefix()).isEqualTo("interim.state");
        assertThat(k.consumerGroupPrefix()).isEqualTo("interim");
        assertThat(k.commitInterval()).isEqualTo(Duration.ofMillis(500));
        assertThat(config.events().time()).isEmpty();
    }

    @Test
    void keyedByUnitDefaultsToFalse() {
        String yaml = Configs.valid("  input_keyed_by_unit: true\n", "",
                "kind: unit-rate", "kind: event-rate", "    control: old\n", "    assignment: event\n    control: old\n");
        assertThat(ConfigLoader.parse(yaml, Configs.ENV).kafka().inputKeyedByUnit()).isFalse();
    }

    @Test
    void armsAreAssignedPerUnitWhenEventsCarryAUnitAndPerEventOtherwise() {
        // The rule of the configuration reference: events.unit set means per-unit assignment by default.
        assertThat(config.experiments().get(0).definition().assignment())
                .isEqualTo(dev.interim.experiment.Assignment.UNIT);
        String noUnit = Configs.valid("  unit: /user\n", "", "kind: unit-rate", "kind: event-rate",
                "  input_keyed_by_unit: true\n", "");
        assertThat(ConfigLoader.parse(noUnit, Configs.ENV).experiments().get(0).definition().assignment())
                .isEqualTo(dev.interim.experiment.Assignment.EVENT);
    }

    @Test
    void httpAndWebhookDefaults() {
        assertThat(config.http().bindAddress()).isEqualTo("127.0.0.1");
        assertThat(config.http().port()).isEqualTo(8080);
        assertThat(config.http().adminToken()).isEmpty();
        assertThat(config.http().allowedHosts()).as("only IP addresses, localhost and the bind address").isEmpty();
        WebhookSettings w = config.webhook().orElseThrow();
        assertThat(w.timeout()).isEqualTo(Duration.ofSeconds(5));
        assertThat(w.maxAttempts()).isEqualTo(5);
        assertThat(w.initialBackoff()).isEqualTo(Duration.ofSeconds(1));
    }

    @Test
    void experimentDefaultsAreTheSaferOnes() {
        ExperimentDefinition e = config.experiments().get(0).definition();
        assertThat(e.dryRun()).isTrue();
        assertThat(e.sampleRatioThreshold()).isEqualTo(0.001);
        assertThat(e.lookEvery()).isEqualTo(Duration.ofMinutes(1));
        assertThat(e.minPerArm()).isEqualTo(100);
        assertThat(e.split()).isEqualTo(Map.of("old", 1.0, "new-a", 1.0, "new-b", 1.0));
    }

    @Test
    void metricDefaultsDependOnTheRole() {
        MetricDefinition guardrail = config.experiments().get(0).definition().metrics().get(0);
        MetricDefinition primary = config.experiments().get(0).definition().metrics().get(1);
        assertThat(guardrail.alpha()).isEqualTo(0.05);
        assertThat(guardrail.sides().count()).isEqualTo(1);
        assertThat(primary.sides().count()).isEqualTo(2);
        assertThat(primary.spending()).isInstanceOf(SpendingFunction.OBrienFlemingType.class);
        assertThat(primary.horizon()).isEqualTo(new Horizon.Powered(0.8, 0.01, 10));
        assertThat(primary.action()).isEqualTo(StopAction.NONE);
        assertThat(primary.futility()).isNull();
    }

    @Test
    void theOptionalSettingsAreReadWhenGiven() {
        String yaml = Configs.valid(
                "kafka:\n", "kafka:\n  bootstrap_servers: k1.example:9092, [::1]:9093\n  commit_interval: 2s\n  tally_threads: 3\n",
                "  unit: /user\n", "  unit: /user\n  time: /at\n",
                "power: 0.8", "power: 0.9\n        sides: 1\n        futility: hsd:-2\n        spending: power:3\n"
                        + "        planned_looks: 4\n        alpha: 0.025\n        baseline: 0.2",
                "    metrics:\n", "    look_every: 90s\n    min_per_arm: 20\n    dry_run: false\n"
                        + "    sample_ratio_threshold: 0.0001\n    split: {old: 2, new-a: 1, new-b: 1}\n    metrics:\n");
        InterimConfig c = ConfigLoader.parse(yaml, Configs.ENV);

        assertThat(c.kafka().bootstrapServers()).containsExactly("k1.example:9092", "[::1]:9093");
        assertThat(c.kafka().embedded()).isFalse();
        assertThat(c.kafka().commitInterval()).isEqualTo(Duration.ofSeconds(2));
        assertThat(c.kafka().tallyThreads()).isEqualTo(3);
        assertThat(c.events().time()).isPresent();
        ExperimentDefinition e = c.experiments().get(0).definition();
        assertThat(e.lookEvery()).isEqualTo(Duration.ofSeconds(90));
        assertThat(e.minPerArm()).isEqualTo(20);
        assertThat(e.dryRun()).isFalse();
        assertThat(e.sampleRatioThreshold()).isEqualTo(0.0001);
        assertThat(e.split()).containsEntry("old", 2.0);
        MetricDefinition primary = e.metrics().get(1);
        assertThat(primary.sides().count()).isEqualTo(1);
        assertThat(primary.alpha()).isEqualTo(0.025);
        assertThat(primary.futility()).isEqualTo(new SpendingFunction.HwangShihDeCani(-2));
        assertThat(primary.spending()).isEqualTo(new SpendingFunction.Power(3));
        assertThat(primary.horizon()).isEqualTo(new Horizon.Powered(0.9, 0.01, 4));
        assertThat(primary.baseline()).isEqualTo(0.2);
    }
}
