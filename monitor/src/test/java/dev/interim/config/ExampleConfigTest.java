package dev.interim.config;

import dev.interim.events.MappedExperiment;
import dev.interim.events.MetricSource;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.Horizon;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.MetricKind;
import dev.interim.experiment.Role;
import dev.interim.experiment.StopAction;
import dev.interim.experiment.Worse;
import dev.interim.sequential.SpendingFunction;
import java.time.Duration;
import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * The shipped example, config/interim.example.yaml, loads and means what its comments say. Expected
 * values are read off the example file itself.
 */
class ExampleConfigTest {
    private final InterimConfig config = ConfigLoader.load(Configs.example(), Configs.exampleEnvironment());

    @Test
    void kafkaStartsTheEmbeddedBrokerAndReadsInputKeyedByUnit() {
        KafkaSettings k = config.kafka();
        assertThat(k.embedded()).isTrue();
        assertThat(k.properties().isEmpty()).isTrue();
        assertThat(k.inputTopics()).containsExactly("courier.quote-events");
        assertThat(k.decisionsTopic()).isEqualTo("interim.decisions");
        assertThat(k.deadLetterTopic()).isEqualTo("interim.dead-letters");
        assertThat(k.stateTopicPrefix()).isEqualTo("interim.state");
        assertThat(k.consumerGroupPrefix()).isEqualTo("interim");
        assertThat(k.commitInterval()).isEqualTo(Duration.ofMillis(500));
        assertThat(k.inputKeyedByUnit()).isTrue();
    }

    @Test
    void eventsAreMappedByJsonPointer() {
        assertThat(config.events().experiment().toString()).isEqualTo("/rollout/id");
        assertThat(config.events().arm().toString()).isEqualTo("/rollout/variant");
        assertThat(config.events().unit()).hasValueSatisfying(p -> assertThat(p.toString()).isEqualTo("/shipper/account"));
        assertThat(config.events().time()).hasValueSatisfying(p -> assertThat(p.toString()).isEqualTo("/sent_at"));
    }

    @Test
    void httpAndWebhookReadTheirSecretsFromTheEnvironment() {
        assertThat(config.http().bindAddress()).isEqualTo("127.0.0.1");
        assertThat(config.http().port()).isEqualTo(8080);
        assertThat(config.http().allowedHosts()).containsExactly("interim.courier.example");
        assertThat(config.http().adminToken()).hasValueSatisfying(t -> assertThat(t.reveal())
                .isEqualTo(Configs.exampleEnvironment().get("INTERIM_ADMIN_TOKEN")));
        WebhookSettings w = config.webhook().orElseThrow();
        assertThat(w.url().toString()).isEqualTo("https://flags.courier.example/hooks/interim-kill");
        assertThat(w.signingKey().variable()).isEqualTo("INTERIM_WEBHOOK_KEY");
        assertThat(w.signingKey().reveal()).isEqualTo(Configs.HOOK_KEY);
        assertThat(w.timeout()).isEqualTo(Duration.ofSeconds(5));
        assertThat(w.maxAttempts()).isEqualTo(5);
        assertThat(w.initialBackoff()).isEqualTo(Duration.ofSeconds(1));
    }

    @Test
    void theExperimentHasAControlTwoCandidatesAndItsSplit() {
        assertThat(config.experiments()).hasSize(1);
        ExperimentDefinition e = config.experiments().get(0).definition();
        assertThat(e.id()).isEqualTo("rate-card-engine-v2");
        assertThat(e.arms()).containsExactly("table-rates", "solver-rates", "solver-rates-cached");
        assertThat(e.split()).containsEntry("table-rates", 50.0).containsEntry("solver-rates", 25.0)
                .containsEntry("solver-rates-cached", 25.0);
        assertThat(e.lookEvery()).isEqualTo(Duration.ofMinutes(1));
        assertThat(e.minPerArm()).isEqualTo(500);
        assertThat(e.dryRun()).isTrue();
        assertThat(e.sampleRatioThreshold()).isEqualTo(0.001);
    }

    @Test
    void theMetricsCarryTheirDesignsAndSources() {
        MappedExperiment experiment = config.experiments().get(0);
        List<MetricDefinition> metrics = experiment.definition().metrics();
        assertThat(metrics).extracting(MetricDefinition::name)
                .containsExactly("quote-errors", "quote-latency-ms", "quoted-value-per-quote", "label-purchase");
        assertThat(experiment.definition().assignment()).isEqualTo(dev.interim.experiment.Assignment.UNIT);

        MetricDefinition errors = metrics.get(0);
        assertThat(errors.kind()).isEqualTo(MetricKind.EVENT_RATE);
        assertThat(errors.role()).isEqualTo(Role.GUARDRAIL);
        assertThat(errors.worse()).isEqualTo(Worse.HIGHER);
        assertThat(errors.alpha()).isEqualTo(0.01);
        assertThat(experiment.definition().comparisonAlpha(errors)).isEqualTo(0.005);
        assertThat(errors.sides().count()).isEqualTo(1);
        assertThat(errors.spending()).isInstanceOf(SpendingFunction.OBrienFlemingType.class);
        assertThat(errors.horizon()).isEqualTo(new Horizon.MaxPerArm(40_000));
        assertThat(errors.action()).isEqualTo(StopAction.KILL);
        MetricSource.Counted errorSource = (MetricSource.Counted) experiment.source(errors);
        assertThat(errorSource.field().toString()).isEqualTo("/quote/http_status");
        assertThat(errorSource.countsIf().toString()).isEqualTo("at_least: 500");

        MetricDefinition latency = metrics.get(1);
        assertThat(latency.kind()).isEqualTo(MetricKind.EVENT_MEAN);
        assertThat(latency.spending()).isInstanceOf(SpendingFunction.PocockType.class);
        assertThat(latency.action()).isEqualTo(StopAction.PAGE);
        assertThat(latency.cap()).isEqualTo(10_000.0);
        assertThat(experiment.source(latency)).isEqualTo(new MetricSource.Value(
                com.fasterxml.jackson.core.JsonPointer.compile("/quote/elapsed_ms")));

        MetricDefinition value = metrics.get(2);
        assertThat(value.kind()).isEqualTo(MetricKind.RATIO);
        assertThat(value.cap()).isEqualTo(5_000_000.0);
        assertThat(value.horizon()).isEqualTo(new Horizon.Powered(0.8, -0.03, 10, Horizon.Scale.RELATIVE));
        MetricSource.Ratio valueSource = (MetricSource.Ratio) experiment.source(value);
        assertThat(valueSource.field().toString()).isEqualTo("/quote/total_cents");
        assertThat(valueSource.denominator().toString()).isEqualTo("/quote/parcels");

        MetricDefinition purchase = metrics.get(3);
        assertThat(purchase.kind()).isEqualTo(MetricKind.UNIT_RATE);
        assertThat(purchase.role()).isEqualTo(Role.PRIMARY);
        assertThat(purchase.sides().count()).isEqualTo(2);
        assertThat(purchase.horizon()).isEqualTo(new Horizon.Powered(0.8, 0.02, 12));
        assertThat(purchase.futility()).isNull();
        assertThat(purchase.baseline()).isNull();
        assertThat(purchase.action()).isEqualTo(StopAction.NONE);
        assertThat(((MetricSource.Counted) experiment.source(purchase)).countsIf().toString())
                .isEqualTo("equals: label_bought");
    }

    @Test
    void theExampleAlsoChecksWithoutItsSecrets() {
        InterimConfig unread = ConfigLoader.loadWithoutSecrets(Configs.example());

        assertThat(unread.webhook().orElseThrow().signingKey().isRead()).isFalse();
        assertThat(unread.experiments()).hasSize(1);
    }
}
