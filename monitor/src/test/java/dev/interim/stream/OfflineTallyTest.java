package dev.interim.stream;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.Tally;
import dev.interim.stats.ProportionCounts;
import java.nio.charset.StandardCharsets;
import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * The tally stage's counting without Kafka, fed by the real event reader. Expected values are
 * counted by hand from the few invented events below, by the rules of docs/configuration.md (metric
 * kinds): event-level metrics per event, unit-level ones per unit in the arm of its first event.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class OfflineTallyTest {
    private static final String YAML = """
            kafka:
              input_topics: [varrow.events]
              input_keyed_by_unit: true
            events:
              experiment: /exp
              arm: /arm
              unit: /user
            experiments:
              - id: varrow-search
                assignment: event
                control: old
                treatments: [new]
                metrics:
                  - {name: errors, kind: event-rate, role: guardrail, worse: higher, field: /status,
                     counts_if: {equals: error}, max_per_arm: 1000}
                  - {name: ms, kind: event-mean, role: guardrail, worse: higher, field: /ms, max_per_arm: 1000}
                  - {name: booked, kind: unit-rate, role: primary, worse: lower, field: /step,
                     counts_if: {equals: booked}, max_per_arm: 1000}
                  - {name: spend, kind: unit-total, role: guardrail, worse: lower, field: /spend, max_per_arm: 1000}
              - id: varrow-maps
                assignment: event
                control: a
                treatments: [b]
                metrics:
                  - {name: errors, kind: event-rate, role: guardrail, worse: higher, field: /status,
                     counts_if: {equals: error}, max_per_arm: 1000}
            """;

    private static final InterimConfig CONFIG = ConfigLoader.parseWithoutSecrets(YAML);

    private static OfflineTally tally() {
        return new OfflineTally(CONFIG.experiments().stream().map(e -> e.definition()).toList());
    }

    private static void feed(OfflineTally tally, String... events) throws BadEventException {
        JsonEventReader reader = new JsonEventReader(CONFIG.catalog());
        for (String e : events) {
            reader.read(e.getBytes(StandardCharsets.UTF_8), tally);
        }
    }

    private static ProportionCounts rate(Tally t) {
        return ((Tally.Rate) t).counts();
    }

    @Test
    void countsEventsAndUnitsAsTheDaemonDoes() throws BadEventException {
        OfflineTally tally = tally();
        feed(tally,
                "{\"exp\":\"varrow-search\",\"arm\":\"old\",\"user\":\"ana\",\"status\":\"ok\",\"ms\":100}",
                "{\"exp\":\"varrow-search\",\"arm\":\"old\",\"user\":\"ana\",\"status\":\"error\",\"ms\":300}",
                "{\"exp\":\"varrow-search\",\"arm\":\"old\",\"user\":\"ben\",\"step\":\"booked\",\"spend\":40}",
                "{\"exp\":\"varrow-search\",\"arm\":\"old\",\"user\":\"ben\",\"step\":\"booked\",\"spend\":2.5}",
                "{\"exp\":\"varrow-search\",\"arm\":\"new\",\"user\":\"cem\",\"status\":\"ok\",\"ms\":200}",
                "{\"exp\":\"varrow-maps\",\"arm\":\"b\",\"user\":\"dia\",\"status\":\"error\"}");

        OfflineTally.Snapshot s = tally.snapshot("varrow-search");
        assertThat(s.exposures()).containsOnly(java.util.Map.entry("old", 2L), java.util.Map.entry("new", 1L));
        assertThat(rate(s.tallies().get("errors").get("old"))).isEqualTo(new ProportionCounts(1, 2));
        assertThat(rate(s.tallies().get("errors").get("new"))).isEqualTo(new ProportionCounts(0, 1));
        Tally.Mean ms = (Tally.Mean) s.tallies().get("ms").get("old");
        assertThat(ms.moments().count()).isEqualTo(2);
        assertThat(ms.moments().mean()).isEqualTo(200.0);
        assertThat(ms.moments().sumSquaredDeviations()).isEqualTo(20_000.0);   // (100-200)² + (300-200)²
        assertThat(rate(s.tallies().get("booked").get("old"))).as("ben booked twice: one unit").isEqualTo(new ProportionCounts(1, 2));
        assertThat(rate(s.tallies().get("booked").get("new"))).isEqualTo(new ProportionCounts(0, 1));
        Tally.Mean spend = (Tally.Mean) s.tallies().get("spend").get("old");
        assertThat(spend.moments().count()).as("one total per unit: ana 0, ben 42.5").isEqualTo(2);
        assertThat(spend.moments().mean()).isCloseTo(21.25, within(1e-12));

        OfflineTally.Snapshot maps = tally.snapshot("varrow-maps");
        assertThat(maps.exposures()).containsOnly(java.util.Map.entry("a", 0L), java.util.Map.entry("b", 1L));
        assertThat(maps.tallies().get("errors")).containsOnlyKeys("b");
        assertThat(tally.units()).isEqualTo(4);
    }

    @Test
    void snapshotsAreCumulativeAndStayAsTheyWere() throws BadEventException {
        OfflineTally tally = tally();
        feed(tally, "{\"exp\":\"varrow-search\",\"arm\":\"new\",\"user\":\"eda\",\"status\":\"error\"}");
        OfflineTally.Snapshot first = tally.snapshot("varrow-search");
        feed(tally,
                "{\"exp\":\"varrow-search\",\"arm\":\"new\",\"user\":\"eda\",\"status\":\"ok\"}",
                "{\"exp\":\"varrow-search\",\"arm\":\"old\",\"user\":\"fay\",\"status\":\"ok\"}");
        OfflineTally.Snapshot second = tally.snapshot("varrow-search");
        OfflineTally.Snapshot third = tally.snapshot("varrow-search");

        assertThat(rate(first.tallies().get("errors").get("new"))).isEqualTo(new ProportionCounts(1, 1));
        assertThat(first.tallies().get("errors")).doesNotContainKey("old");
        assertThat(rate(second.tallies().get("errors").get("new"))).isEqualTo(new ProportionCounts(1, 2));
        assertThat(rate(second.tallies().get("errors").get("old"))).isEqualTo(new ProportionCounts(0, 1));
        assertThat(third).as("nothing new: the same snapshot").isEqualTo(second);
        assertThatThrownBy(() -> second.tallies().get("errors").put("x", null)).isInstanceOf(UnsupportedOperationException.class);
    }

    @Test
    void anUnknownExperimentIsRefused() {
        assertThatThrownBy(() -> tally().snapshot("varrow-nothing")).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("varrow-nothing");
    }

    @Test
    void theDefinitionsGivenAreTheOnesCounted() {
        List<ExperimentDefinition> one = List.of(CONFIG.experiments().get(1).definition());
        assertThatThrownBy(() -> new OfflineTally(one).snapshot("varrow-search")).isInstanceOf(IllegalArgumentException.class);
    }
}
