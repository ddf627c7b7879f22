package dev.interim.config;

import dev.interim.events.MappedExperiment;
import dev.interim.events.MetricSource;

import dev.interim.events.Condition;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.interim.experiment.MetricDefinition;
import org.junit.jupiter.api.Test;

/**
 * The {@code counts_if} conditions, read from YAML and tested against JSON values as events carry
 * them. The semantics are the configuration reference's: types must match, numbers compare by value.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class ConditionTest {
    private static final ObjectMapper JSON = new ObjectMapper();

    private static Condition condition(String countsIf) {
        String yaml = Configs.valid("{at_least: 500}", countsIf);
        MappedExperiment e = ConfigLoader.parse(yaml, Configs.ENV).experiments().get(0);
        MetricDefinition errors = e.definition().metrics().get(0);
        return ((MetricSource.Counted) e.source(errors)).countsIf();
    }

    private static JsonNode json(String text) {
        try {
            return JSON.readTree(text);
        } catch (Exception e) {
            throw new AssertionError(e);
        }
    }

    @Test
    void orderingComparisonsCompareNumbersByValue() {
        Condition atLeast = condition("{at_least: 500}");
        assertThat(atLeast.test(json("500"))).isTrue();
        assertThat(atLeast.test(json("500.0"))).isTrue();
        assertThat(atLeast.test(json("503"))).isTrue();
        assertThat(atLeast.test(json("499.99"))).isFalse();
        assertThat(atLeast.needsNumber()).isTrue();

        assertThat(condition("{above: 500}").test(json("500"))).isFalse();
        assertThat(condition("{below: 0.25}").test(json("0.2"))).isTrue();
        assertThat(condition("{at_most: 0.25}").test(json("0.25"))).isTrue();
        assertThat(condition("{at_most: 0.25}").test(json("0.2501"))).isFalse();
    }

    @Test
    void orderingComparisonsNeverMatchANonNumber() {
        Condition atLeast = condition("{at_least: 500}");
        assertThat(atLeast.test(json("\"503\""))).isFalse();
        assertThat(atLeast.test(json("true"))).isFalse();
        assertThat(atLeast.test(json("null"))).isFalse();
        assertThat(atLeast.test(null)).isFalse();
    }

    @Test
    void equalityNeedsTheSameType() {
        Condition paid = condition("{equals: paid}");
        assertThat(paid.test(json("\"paid\""))).isTrue();
        assertThat(paid.test(json("\"Paid\""))).isFalse();
        assertThat(paid.needsNumber()).isFalse();

        Condition code = condition("{equals: 404}");
        assertThat(code.test(json("404"))).isTrue();
        assertThat(code.test(json("404.0"))).isTrue();
        assertThat(code.test(json("\"404\""))).isFalse();

        Condition flag = condition("{equals: true}");
        assertThat(flag.test(json("true"))).isTrue();
        assertThat(flag.test(json("\"true\""))).isFalse();

        Condition quoted = condition("{equals: 'true'}");
        assertThat(quoted.test(json("\"true\""))).isTrue();
        assertThat(quoted.test(json("true"))).isFalse();
    }

    @Test
    void notEqualsIsTheNegationForPresentValues() {
        Condition ok = condition("{not_equals: ok}");
        assertThat(ok.test(json("\"ok\""))).isFalse();
        assertThat(ok.test(json("\"timeout\""))).isTrue();
        assertThat(ok.test(json("null"))).as("an absent value is not an observation").isFalse();
    }

    @Test
    void inAndNotInTestMembership() {
        Condition failed = condition("{in: [declined, timed_out, 502]}");
        assertThat(failed.test(json("\"declined\""))).isTrue();
        assertThat(failed.test(json("502"))).isTrue();
        assertThat(failed.test(json("\"accepted\""))).isFalse();
        assertThat(failed.toString()).isEqualTo("in: [declined, timed_out, 502]");

        Condition unusual = condition("{not_in: [GET, HEAD]}");
        assertThat(unusual.test(json("\"POST\""))).isTrue();
        assertThat(unusual.test(json("\"GET\""))).isFalse();
    }
}
