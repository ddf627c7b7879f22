package dev.interim.config;

import dev.interim.text.Durations;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import java.time.Duration;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/** The duration form of the configuration reference: a whole number and one unit. */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class DurationsTest {

    @Test
    void readsEachUnit() {
        assertThat(Durations.parse("500ms")).isEqualTo(Duration.ofMillis(500));
        assertThat(Durations.parse("30s")).isEqualTo(Duration.ofSeconds(30));
        assertThat(Durations.parse("5m")).isEqualTo(Duration.ofMinutes(5));
        assertThat(Durations.parse("1h")).isEqualTo(Duration.ofHours(1));
        assertThat(Durations.parse(" 0s ")).isEqualTo(Duration.ZERO);
    }

    @ParameterizedTest
    @ValueSource(strings = {"5", "5 m", "1.5s", "-1s", "1m30s", "PT5M", "5min", "ms", ""})
    void refusesAnythingElseNamingTheForms(String text) {
        assertThatThrownBy(() -> Durations.parse(text)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("500ms, 30s, 5m or 1h");
    }

    @Test
    void formatsTheShortestTextThatReadsBack() {
        assertThat(Durations.format(Duration.ofMillis(250))).isEqualTo("250ms");
        assertThat(Durations.format(Duration.ofSeconds(90))).isEqualTo("90s");
        assertThat(Durations.format(Duration.ofMinutes(5))).isEqualTo("5m");
        assertThat(Durations.format(Duration.ofMinutes(120))).isEqualTo("2h");
        assertThat(Durations.format(Duration.ZERO)).isEqualTo("0s");
        for (String text : new String[] {"1500ms", "45s", "7m", "3h"}) {
            assertThat(Durations.format(Durations.parse(text))).isEqualTo(text);
        }
    }
}
