package dev.interim.config;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import java.util.HashMap;
import java.util.Map;
import org.junit.jupiter.api.Test;

/**
 * Secrets come from environment variables and never show: not in toString, not in error messages.
 * Each test uses distinctive secret values and searches every printed text for them.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class SecretsTest {
    private static final String ADMIN_TOKEN = "adm1n-T0KEN-do-not-print-4471";
    private static final String KAFKA_PASSWORD = "kafka-PASSWORD-do-not-print-9120";

    private static final String WITH_SECRETS = Configs.valid(
            "kafka:\n", """
                    kafka:
                      bootstrap_servers: [k1.example:9093]
                      properties:
                        security.protocol: SASL_SSL
                        sasl.mechanism: SCRAM-SHA-512
                        sasl.jaas.config: org.apache.kafka.common.security.scram.ScramLoginModule required username="interim" password="${KAFKA_PASSWORD}";
                        ssl.truststore.password: ${KAFKA_PASSWORD}
                        client.id: interim-$${literal}
                    """) + "http:\n  admin_token_env: ADMIN_TOKEN\n";

    private static Map<String, String> environment() {
        Map<String, String> env = new HashMap<>(Configs.ENV);
        env.put("ADMIN_TOKEN", ADMIN_TOKEN);
        env.put("KAFKA_PASSWORD", KAFKA_PASSWORD);
        return env;
    }

    private static void assertNoSecretIn(String text) {
        assertThat(text).doesNotContain(ADMIN_TOKEN, KAFKA_PASSWORD, Configs.HOOK_KEY,
                Configs.HOOK_KEY.substring("whsec_".length()));
    }

    @Test
    void theClientsGetTheResolvedPropertiesAndNothingElseShowsThem() {
        InterimConfig config = ConfigLoader.parse(WITH_SECRETS, environment());

        Map<String, String> clients = config.kafka().properties().forClients();
        assertThat(clients.get("sasl.jaas.config")).contains("password=\"" + KAFKA_PASSWORD + "\";");
        assertThat(clients.get("ssl.truststore.password")).isEqualTo(KAFKA_PASSWORD);
        assertThat(clients.get("client.id")).isEqualTo("interim-${literal}");
        assertThat(config.http().adminToken().orElseThrow().reveal()).isEqualTo(ADMIN_TOKEN);
        assertThat(config.webhook().orElseThrow().signingKey().reveal()).isEqualTo(Configs.HOOK_KEY);

        assertNoSecretIn(config.toString());
        assertNoSecretIn(config.kafka().toString());
        assertNoSecretIn(config.http().toString());
        assertNoSecretIn(config.webhook().toString());
        assertThat(config.kafka().properties().toString())
                .contains("security.protocol=SASL_SSL", "sasl.jaas.config=(hidden)", "ssl.truststore.password=(hidden)");
        assertThat(config.http().adminToken().orElseThrow().toString()).isEqualTo("Secret[from $ADMIN_TOKEN]");
    }

    @Test
    void errorsElsewhereInAFileWithSecretsDoNotShowThem() {
        String bad = WITH_SECRETS.replace("field: /status", "field: status");
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(bad, environment()));

        assertThat(e.keyPath()).isEqualTo("experiments[0].metrics[0].field");
        assertNoSecretIn(e.getMessage());
    }

    @Test
    void aMissingVariableInAPropertyIsNamedWithoutAnyValue() {
        Map<String, String> env = environment();
        env.remove("KAFKA_PASSWORD");
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(WITH_SECRETS, env));

        assertThat(e.keyPath()).isEqualTo("kafka.properties.sasl.jaas.config");
        assertThat(e.getMessage()).contains("environment variable KAFKA_PASSWORD, which is not set");
        assertNoSecretIn(e.getMessage());
    }

    @Test
    void aWeakAdminTokenIsRefusedWithoutShowingIt() {
        Map<String, String> env = environment();
        env.put("ADMIN_TOKEN", "short-Tok3n");
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(WITH_SECRETS, env));

        assertThat(e.keyPath()).isEqualTo("http.admin_token_env");
        assertThat(e.getMessage()).contains("ADMIN_TOKEN", "at least 16 characters").doesNotContain("short-Tok3n");
    }

    @Test
    void aMalformedSigningKeyIsRefusedWithoutShowingIt() {
        Map<String, String> env = environment();
        env.put("HOOK_KEY", "not base64 at all!");
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(WITH_SECRETS, env));

        assertThat(e.keyPath()).isEqualTo("webhook.signing_key_env");
        assertThat(e.getMessage()).contains("HOOK_KEY", "base64 of 24 to 64").doesNotContain("not base64 at all");
    }

    @Test
    void aCredentialWrittenInTheFileIsRefusedWithoutEchoingIt() {
        String plain = WITH_SECRETS.replace("ssl.truststore.password: ${KAFKA_PASSWORD}",
                "ssl.truststore.password: hunter2-in-the-file");
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(plain, environment()));

        assertThat(e.keyPath()).isEqualTo("kafka.properties.ssl.truststore.password");
        assertThat(e.getMessage()).contains("${NAME}").doesNotContain("hunter2");
    }

    @Test
    void withoutSecretsNothingIsReadAndNothingCanBeRevealed() {
        InterimConfig config = ConfigLoader.parseWithoutSecrets(WITH_SECRETS);

        Secret key = config.webhook().orElseThrow().signingKey();
        assertThat(key.isRead()).isFalse();
        assertThat(key.variable()).isEqualTo("HOOK_KEY");
        assertThatThrownBy(key::reveal).isInstanceOf(IllegalStateException.class).hasMessageContaining("HOOK_KEY");
        assertThatThrownBy(() -> config.kafka().properties().forClients()).isInstanceOf(IllegalStateException.class);
    }

    @Test
    void withoutSecretsTheFormOfReferencesIsStillChecked() {
        String broken = WITH_SECRETS.replace("password=\"${KAFKA_PASSWORD}\"", "password=\"${KAFKA PASSWORD}\"");
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parseWithoutSecrets(broken));

        assertThat(e.keyPath()).isEqualTo("kafka.properties.sasl.jaas.config");
        assertThat(e.getMessage()).contains("not an environment variable name");
    }
}
