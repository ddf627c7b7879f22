package dev.interim.config;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import java.time.Duration;
import org.junit.jupiter.api.Test;

/**
 * kafka.instance_id and kafka.startup_timeout: their defaults and what they refuse. The characters and
 * length allowed for an instance id keep the stage ids built from it within what Kafka accepts as a
 * group.instance.id (at most 249 of letters, digits, '.', '_', '-': Kafka's JoinGroupRequest
 * validation, from memory).
 */
// Source: the rules of docs/configuration.md; Kafka's limits on group.instance.id as stated above.
class InstanceSettingsTest {
    private static String kafka(String lines) {
        return Configs.VALID.replace("  input_topics: [shop.events]\n", "  input_topics: [shop.events]\n" + lines);
    }

    @Test
    void defaultsAreDerivedIdAndFiveMinutes() {
        KafkaSettings k = ConfigLoader.parse(Configs.VALID, Configs.ENV).kafka();
        assertThat(k.instanceId()).isEmpty();
        assertThat(k.startupTimeout()).isEqualTo(Duration.ofMinutes(5));
    }

    @Test
    void anInstanceIdAndATimeoutAreRead() {
        KafkaSettings k = ConfigLoader.parse(kafka("  instance_id: quotes-eu_1.a\n  startup_timeout: 90s\n"), Configs.ENV).kafka();
        assertThat(k.instanceId()).contains("quotes-eu_1.a");
        assertThat(k.startupTimeout()).isEqualTo(Duration.ofSeconds(90));
    }

    @Test
    void anInstanceIdOutsideKafkasCharactersOrTooLongIsRefused() {
        for (String bad : new String[] {"'quotes eu'", "'quotes/1'", "x".repeat(201)}) {
            ConfigException e = catchThrowableOfType(ConfigException.class,
                    () -> ConfigLoader.parse(kafka("  instance_id: " + bad + "\n"), Configs.ENV));
            assertThat(e).as(bad).isNotNull();
            assertThat(e.getMessage()).startsWith("kafka.instance_id").contains("1 to 200 letters, digits, '.', '_' or '-'");
        }
    }

    @Test
    void aStartupTimeoutOutOfRangeIsRefused() {
        ConfigException e = catchThrowableOfType(ConfigException.class,
                () -> ConfigLoader.parse(kafka("  startup_timeout: 2h\n"), Configs.ENV));
        assertThat(e).isNotNull();
        assertThat(e.getMessage()).startsWith("kafka.startup_timeout");
    }
}
