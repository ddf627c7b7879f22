package dev.interim.config;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatCode;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import dev.interim.stream.StreamSettings;
import java.time.Duration;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

/**
 * The guard that keeps the daemon from reading its own state topics: it refuses exactly the input
 * topics that start with the names the state topics really have ({@link StreamSettings}:
 * {@code <prefix>-tallies}, {@code -units}, {@code -looks}, {@code -deliveries}), and the message
 * says so. Regression: the guard used to check {@code <prefix>.}, which no state topic starts with.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth)
// and from the topic names StreamSettings gives the state topics.
class StateTopicGuardTest {
    private static final String PREFIX = "shop.state";

    private static String withInput(String topic) {
        return Configs.VALID.replace("  input_topics: [shop.events]\n",
                "  input_topics: [" + topic + "]\n  state_topic_prefix: " + PREFIX + "\n");
    }

    @Test
    void everyStateTopicIsRefusedAsAnInputTopic() {
        StreamSettings names = new StreamSettings("x:1", Map.of(), List.of("in"), "d", "dl", PREFIX, "g",
                Duration.ofSeconds(1), 1);
        for (String state : List.of(names.talliesTopic(), names.unitsTopic(), names.looksTopic(), names.deliveriesTopic())) {
            ConfigException e = catchThrowableOfType(ConfigException.class,
                    () -> ConfigLoader.parse(withInput(state), Configs.ENV));
            assertThat(e).as(state).isNotNull();
            assertThat(e.getMessage()).startsWith("kafka.input_topics[0]")
                    .contains("'" + state + "' starts with '" + PREFIX + "-'")
                    .contains(PREFIX + "-tallies, -units, -looks, -deliveries")
                    .contains("choose another state_topic_prefix");
        }
    }

    @Test
    void aTopicThatOnlySharesThePrefixWithADotIsAccepted() {
        // No state topic is named <prefix>.<anything>: such an input topic cannot collide.
        assertThatCode(() -> ConfigLoader.parse(withInput(PREFIX + ".events"), Configs.ENV)).doesNotThrowAnyException();
    }
}
