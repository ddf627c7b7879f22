package dev.interim.config;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import java.util.HashMap;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

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

    // ---- secrets written where a variable's name belongs ----

    /** The output of {@code openssl rand -hex 24} (invented here), starting with a letter, so of a name's form. */
    private static final String HEX_TOKEN = "c3f9a1e2b7d4a8f0c6e1b9d2a7f3c8e4b1d6a9f2c7e0b5d8";
    /** A base62 token: letters of both cases and digits, nothing a name could not hold. */
    private static final String BASE62_TOKEN = "Zk3mQ9vT2xLp8RwNa4Hs7YbC";

    private static void assertNotShown(ConfigException e, String secret) {
        for (ConfigException p : e.problems()) {
            assertThat(p.getMessage()).doesNotContain(secret);
        }
        assertThat(e.getMessage()).doesNotContain(secret);
        assertThat(e.toString()).doesNotContain(secret);
    }

    @Test
    void aSigningKeyWrittenAsItsVariableNameIsRefusedWithoutShowingIt() {
        String yaml = Configs.valid("signing_key_env: HOOK_KEY", "signing_key_env: " + Configs.HOOK_KEY);
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(yaml, Configs.ENV));

        assertThat(e.keyPath()).isEqualTo("webhook.signing_key_env");
        assertThat(e.getMessage()).isEqualTo("webhook.signing_key_env: expects the name of the environment variable "
                + "holding the signing key, and the value given is not a variable name (not shown: it may be the secret "
                + "itself); put the secret in a variable such as INTERIM_WEBHOOK_KEY and write that name here");
        assertNotShown(e, Configs.HOOK_KEY.substring("whsec_".length(), 20));
    }

    /** Tokens of a name's form (letters, digits, '_') still do not read as names: they are refused too. */
    @ParameterizedTest
    @ValueSource(strings = {HEX_TOKEN, BASE62_TOKEN, "S3cr3tPassw0rd_2024", "tok_" + BASE62_TOKEN})
    void aTokenWrittenAsTheAdminTokensVariableNameIsRefusedWithoutShowingIt(String token) {
        String yaml = WITH_SECRETS.replace("admin_token_env: ADMIN_TOKEN", "admin_token_env: " + token);
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(yaml, environment()));

        assertThat(e.keyPath()).isEqualTo("http.admin_token_env");
        assertThat(e.getMessage()).contains("holding the admin token", "not a variable name (not shown: it may be the "
                + "secret itself)", "such as INTERIM_ADMIN_TOKEN");
        assertNotShown(e, token);
        // The same without the environment: the name's form is checked all the same, and nothing shown.
        ConfigException unread = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parseWithoutSecrets(yaml));
        assertThat(unread.keyPath()).isEqualTo("http.admin_token_env");
        assertNotShown(unread, token);
    }

    @Test
    void aNumberWrittenAsAVariableNameIsNotShownEither() {
        String yaml = WITH_SECRETS.replace("admin_token_env: ADMIN_TOKEN", "admin_token_env: 90817263544536271809");
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(yaml, environment()));

        assertThat(e.getMessage()).contains("not a variable name (not shown");
        assertNotShown(e, "90817263544536271809");
    }

    @ParameterizedTest
    @ValueSource(strings = {"S3cr3tPassw0rd", "hunter2 in the file!", "kafka-PASSWORD-do-not-print-9120"})
    void aPasswordWrittenInsideAReferenceIsRefusedWithoutShowingIt(String password) {
        String yaml = WITH_SECRETS.replace("ssl.truststore.password: ${KAFKA_PASSWORD}",
                "ssl.truststore.password: ${" + password + "}");
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(yaml, environment()));

        assertThat(e.keyPath()).isEqualTo("kafka.properties.ssl.truststore.password");
        assertThat(e.getMessage()).contains("not an environment variable name (not shown: it may be a credential",
                "write ${KAFKA_PASSWORD}");
        assertNotShown(e, password);
    }

    @Test
    void aNameWrittenAsAReferenceIsShownBareWithTheFix() {
        String yaml = WITH_SECRETS.replace("admin_token_env: ADMIN_TOKEN", "admin_token_env: ${ADMIN_TOKEN}");
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(yaml, environment()));

        assertThat(e.getMessage()).isEqualTo("http.admin_token_env: expects the bare name of the environment variable "
                + "holding the admin token: write ADMIN_TOKEN, without '$' or braces");
    }

    /**
     * What is and is not a plausible name. Names: the portable form of IEEE Std 1003.1 (8.1,
     * "Environment Variable Definition": letters, digits and '_', not starting with a digit), in the
     * spellings seen in practice (capitals with underscores, camel case, digits in a word). Not names:
     * generated keys and tokens, whose case and digits alternate every character or two.
     */
    @ParameterizedTest
    @ValueSource(strings = {"INTERIM_WEBHOOK_KEY", "HOOK_KEY", "PGPASSWORD", "webhookSigningKey", "X509_CERT_PATH",
        "OAUTH2_CLIENT_SECRET", "KEY_20240101", "MyServiceApiKey2024", "_private", "a",
        "INTERIMWEBHOOKSIGNINGKEY", "A_NAME_OF_SIXTY_FOUR_CHARACTERS_IS_STILL_ACCEPTED_AS_A_NAME_1234"})
    void plausibleNames(String name) {
        assertThat(Environment.isName(name)).isTrue();
    }

    @ParameterizedTest
    @ValueSource(strings = {HEX_TOKEN, BASE62_TOKEN, "S3cr3tPassw0rd", "whsec_c2VjcmV0LWtleS1mb3ItdGVzdHMtb25seS0xMjM0NTY=",
        "1STARTS_WITH_A_DIGIT", "HAS-A-DASH", "has space", "", "A_NAME_OF_SIXTY_FIVE_CHARACTERS_IS_NOT_ACCEPTED_AS_A_NAME_1234567"})
    void notNames(String text) {
        assertThat(Environment.isName(text)).isFalse();
    }

    @Test
    void everyProblemOfTheEnvironmentComesAfterThoseOfTheValuesAndAVariableIsNamedOnce() {
        Map<String, String> env = environment();
        env.remove("KAFKA_PASSWORD"); // referred to twice: in sasl.jaas.config and ssl.truststore.password
        env.put("ADMIN_TOKEN", "short-Tok3n");
        env.remove("HOOK_KEY");
        String yaml = WITH_SECRETS.replace("field: /status", "field: status");
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(yaml, env));

        assertThat(e.problems()).extracting(ConfigException::keyPath).containsExactly(
                "experiments[0].metrics[0].field",
                "kafka.properties.sasl.jaas.config", "http.admin_token_env", "webhook.signing_key_env");
        assertThat(e.problems().get(1).problem()).contains("KAFKA_PASSWORD, which is not set");
        assertThat(e.problems().get(2).problem()).contains("ADMIN_TOKEN must be at least 16 characters");
        assertThat(e.problems().get(3).problem()).contains("HOOK_KEY is not set");
        assertNotShown(e, "short-Tok3n");
    }
}
