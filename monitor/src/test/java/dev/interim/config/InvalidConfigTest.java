package dev.interim.config;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatCode;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import java.util.Map;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * Every invalid configuration is one {@link ConfigException} whose message starts with the key path
 * of the offending setting and says what is wrong. Each case changes one thing in a valid
 * configuration ({@link Configs#VALID}); the rules come from the configuration reference
 * (docs/configuration.md) and the domain classes, no statistical values here.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class InvalidConfigTest {

    @Test
    void theBaseConfigurationIsValid() {
        assertThatCode(() -> ConfigLoader.parse(Configs.VALID, Configs.ENV)).doesNotThrowAnyException();
    }

    static Stream<Arguments> invalid() {
        return Stream.of(
                // the statistics of a metric
                bad("experiments[0].metrics[0].alpha", "strictly between 0 and 1",
                        Configs.valid("max_per_arm: 10000", "max_per_arm: 10000\n        alpha: 2")),
                bad("experiments[0].metrics[0].alpha", "must be a number; got text '0.05'",
                        Configs.valid("max_per_arm: 10000", "max_per_arm: 10000\n        alpha: '0.05'")),
                bad("experiments[0].metrics[0].sides", "sides must be 1 for a guardrail",
                        Configs.valid("max_per_arm: 10000", "max_per_arm: 10000\n        sides: 2")),
                bad("experiments[0].metrics[0].futility", "futility needs a one-sided primary metric",
                        Configs.valid("max_per_arm: 10000", "max_per_arm: 10000\n        futility: obf")),
                bad("experiments[0].metrics[0].spending", "unknown spending function 'wobbly'",
                        Configs.valid("max_per_arm: 10000", "max_per_arm: 10000\n        spending: wobbly")),
                bad("experiments[0].metrics[0].kind", "use event-rate, unit-rate, event-mean, unit-total, ratio or event-quantile",
                        Configs.valid("kind: event-rate", "kind: event-ratio")),
                bad("experiments[0].metrics[0].max_per_arm", "either max_per_arm or power with effect, not both",
                        Configs.valid("max_per_arm: 10000", "max_per_arm: 10000\n        power: 0.9")),
                bad("experiments[0].metrics[0]", "needs a horizon",
                        Configs.valid("        max_per_arm: 10000\n", "")),
                bad("experiments[0].metrics[0].effect", "must point the harmful way",
                        Configs.valid("max_per_arm: 10000", "power: 0.9\n        effect: -0.01")),
                bad("experiments[0].metrics[1].power", "power must lie strictly between 0 and 1, got 1.5",
                        Configs.valid("power: 0.8", "power: 1.5")),
                // the source of a metric and the condition
                bad("experiments[0].metrics[0].counts_if", "is required",
                        Configs.valid("        counts_if: {at_least: 500}\n", "")),
                bad("experiments[0].metrics[0].counts_if", "exactly one comparison",
                        Configs.valid("{at_least: 500}", "{at_least: 500, below: 600}")),
                bad("experiments[0].metrics[0].counts_if.gte", "unknown comparison",
                        Configs.valid("{at_least: 500}", "{gte: 500}")),
                bad("experiments[0].metrics[0].counts_if.at_least", "at_least compares numbers",
                        Configs.valid("{at_least: 500}", "{at_least: five hundred}")),
                bad("experiments[0].metrics[1].counts_if.in", "at least one value",
                        Configs.valid("{equals: paid}", "{in: []}")),
                bad("experiments[0].metrics[0].counts_if", "applies to rates only",
                        Configs.valid("kind: event-rate", "kind: event-mean")),
                bad("experiments[0].metrics[0].field", "not a JSON Pointer (RFC 6901)",
                        Configs.valid("field: /status", "field: status")),
                // events
                bad("events.experiment", "as in /exp", Configs.valid("experiment: /exp", "experiment: exp")),
                bad("events.arm", "'~' must be followed by 0", Configs.valid("arm: /arm", "arm: /arm~2x")),
                bad("events.arm", "is required", Configs.valid("  arm: /arm\n", "")),
                // arms and split
                bad("experiments[0].control", "is required", Configs.valid("    control: old\n", "")),
                bad("experiments[0].treatments[1]", "arm 'new-a' is listed twice",
                        Configs.valid("[new-a, new-b]", "[new-a, new-a]")),
                bad("experiments[0].treatments[0]", "already the control",
                        Configs.valid("[new-a, new-b]", "[old, new-b]")),
                bad("experiments[0].split", "no share for new-b",
                        Configs.valid("    metrics:\n", "    split: {old: 50, new-a: 50}\n    metrics:\n")),
                bad("experiments[0].split.newest", "not an arm of this experiment",
                        Configs.valid("    metrics:\n", "    split: {old: 1, new-a: 1, new-b: 1, newest: 1}\n    metrics:\n")),
                bad("experiments[0].split.new-b", "positive number",
                        Configs.valid("    metrics:\n", "    split: {old: 1, new-a: 1, new-b: 0}\n    metrics:\n")),
                bad("experiments[0].min_per_arm", "min_per_arm must be at least 2",
                        Configs.valid("    metrics:\n", "    min_per_arm: 1\n    metrics:\n")),
                bad("experiments[0].dry_run", "must be true or false",
                        Configs.valid("    metrics:\n", "    dry_run: maybe\n    metrics:\n")),
                bad("experiments[0].id", "id must be 1 to 128 letters",
                        Configs.valid("id: basket-v3", "id: basket v3")),
                // durations
                bad("experiments[0].look_every", "not a duration",
                        Configs.valid("    metrics:\n", "    look_every: 5 minutes\n    metrics:\n")),
                bad("experiments[0].look_every", "between 1s and 24h; got 500ms",
                        Configs.valid("    metrics:\n", "    look_every: 500ms\n    metrics:\n")),
                bad("kafka.commit_interval", "must be a duration with its unit",
                        Configs.valid("input_keyed_by_unit: true", "input_keyed_by_unit: true\n  commit_interval: 500")),
                bad("kafka.tally_threads", "must lie between 1 and 64; got 0",
                        Configs.valid("input_keyed_by_unit: true", "input_keyed_by_unit: true\n  tally_threads: 0")),
                // names and keys
                bad("experiments[0].metrics[0].alpah", "did you mean 'alpha'",
                        Configs.valid("max_per_arm: 10000", "max_per_arm: 10000\n        alpah: 0.01")),
                bad("kafak", "accepted here: kafka, events, http, webhook, experiments",
                        Configs.valid("kafka:", "kafak:")),
                bad("experiments[0].metrics[1].name", "already defined in this experiment",
                        Configs.valid("name: bought", "name: errors")),
                bad("experiments[1].id", "already the id of experiments[0]",
                        Configs.VALID + "  - id: basket-v3\n    control: a\n    treatments: [b]\n    metrics:\n"
                                + "      - {name: m, kind: event-mean, role: guardrail, worse: higher, field: /ms, max_per_arm: 50}\n"),
                // the per-unit rule and the kill webhook
                bad("experiments[0].metrics[1].kind", "per-unit state needs input keyed by unit",
                        Configs.valid("input_keyed_by_unit: true", "input_keyed_by_unit: false",
                                "    control: old\n", "    assignment: event\n    control: old\n")),
                bad("experiments[0].assignment", "set kafka.input_keyed_by_unit: true; or, if each event is assigned",
                        Configs.valid("input_keyed_by_unit: true", "input_keyed_by_unit: false")),
                bad("experiments[0].assignment", "unknown assignment 'user': use unit",
                        Configs.valid("    control: old\n", "    assignment: user\n    control: old\n")),
                bad("experiments[0].metrics[0].cap", "applies to event-mean, unit-total and ratio metrics",
                        Configs.valid("    max_per_arm: 10000\n", "    max_per_arm: 10000\n        cap: 5\n")),
                bad("experiments[0].metrics[1].relative_effect", "not both",
                        Configs.valid("    effect: 0.01\n", "    effect: 0.01\n        relative_effect: 0.05\n")),
                bad("experiments[0].metrics[1].kind", "set events.unit",
                        Configs.valid("  unit: /user\n", "")),
                bad("experiments[0].metrics[0].action", "there is no webhook section",
                        Configs.valid("webhook:\n  url: https://hooks.example/kill\n  signing_key_env: HOOK_KEY\n", "")),
                // kafka
                bad("kafka.input_topics", "is required", Configs.valid("  input_topics: [shop.events]\n", "")),
                bad("kafka.input_topics[0]", "is also the decisions_topic",
                        Configs.valid("[shop.events]", "[interim.decisions]")),
                bad("kafka.input_topics[0]", "not a Kafka topic name", Configs.valid("[shop.events]", "[shop events]")),
                bad("kafka.bootstrap_servers[1]", "not a broker address",
                        Configs.valid("kafka:\n", "kafka:\n  bootstrap_servers: [k1.example:9092, k2.example]\n")),
                bad("kafka.properties.group.id", "set by interim itself",
                        Configs.valid("kafka:\n", "kafka:\n  properties: {group.id: mine}\n")),
                bad("kafka.properties.ssl.truststore", "must be a single value",
                        Configs.valid("kafka:\n", "kafka:\n  properties:\n    ssl.truststore: {type: PKCS12}\n")),
                // http and webhook
                bad("http.port", "between 0 and 65535; got 70000", Configs.VALID + "http: {port: 70000}\n"),
                bad("http.allowed_hosts[0]", "without scheme, port or path",
                        Configs.VALID + "http: {allowed_hosts: ['monitor.courier.example:8080']}\n"),
                bad("http.allowed_hosts", "must be a list of host names",
                        Configs.VALID + "http: {allowed_hosts: monitor.courier.example}\n"),
                bad("webhook.url", "absolute http or https URL",
                        Configs.valid("https://hooks.example/kill", "ftp://hooks.example/kill")),
                bad("webhook.timeout", "between 100ms and 5m",
                        Configs.valid("signing_key_env: HOOK_KEY", "signing_key_env: HOOK_KEY\n  timeout: 10m")),
                bad("webhook.signing_key_env", "is not a variable name (not shown: it may be the secret itself)",
                        Configs.valid("signing_key_env: HOOK_KEY", "signing_key_env: whsec_abc+def=")),
                // the file as a whole
                bad("", "is not valid YAML at line", "kafka: [unclosed\nevents: {}\n"),
                bad("", "Duplicate field 'events'", Configs.VALID + "events: {experiment: /e, arm: /a}\n"),
                bad("", "is empty", "# nothing but a comment\n"),
                bad("", "more than one YAML document", Configs.VALID + "---\nkafka: {}\n"),
                bad("experiments[0].treatments[1]", "write the value in quotes",
                        Configs.valid("[new-a, new-b]", "[new-a, off]")),
                bad("", "must be a mapping", "- just\n- a list\n"),
                // YAML's non-finite numbers (YAML 1.1, "Floating-Point Language-Independent Type": .nan, .inf, -.inf)
                bad("experiments[0].metrics[0].alpha", "must be a finite number; got .nan",
                        Configs.valid("max_per_arm: 10000", "max_per_arm: 10000\n        alpha: .nan")),
                bad("experiments[0].metrics[1].power", "must be a finite number; got .inf",
                        Configs.valid("power: 0.8", "power: .inf")),
                bad("experiments[0].metrics[1].effect", "must be a finite number; got -.inf",
                        Configs.valid("effect: 0.01", "effect: -.Inf")),
                bad("experiments[0].metrics[0].max_per_arm", "must be a whole number; got .inf",
                        Configs.valid("max_per_arm: 10000", "max_per_arm: .inf")),
                bad("experiments[0].metrics[1].counts_if.equals", "must be a finite number; got .nan",
                        Configs.valid("{equals: paid}", "{equals: .NaN}")),
                bad("experiments[0].split.old", "must be a finite number; got .inf",
                        Configs.valid("    metrics:\n", "    split: {old: .inf, new-a: 1, new-b: 1}\n    metrics:\n")),
                bad("experiments[0].sample_ratio_threshold", "must be a finite number; got .nan",
                        Configs.valid("    metrics:\n", "    sample_ratio_threshold: .nan\n    metrics:\n")));
    }

    private static Arguments bad(String keyPath, String fragment, String yaml) {
        return Arguments.of(keyPath.isEmpty() ? "(file)" : keyPath, fragment, yaml);
    }

    @ParameterizedTest(name = "{0}: {1}")
    @MethodSource("invalid")
    void isRefusedWithTheKeyPathAndTheRule(String keyPath, String fragment, String yaml) {
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(yaml, Configs.ENV));

        assertThat(e).as("refused").isNotNull();
        assertThat(e.problems()).as("one change, one problem reported").containsExactly(e);
        String expectedPath = keyPath.equals("(file)") ? "" : keyPath;
        assertThat(e.keyPath()).isEqualTo(expectedPath);
        assertThat(e.getMessage()).startsWith(expectedPath.isEmpty() ? "" : expectedPath + ": ").contains(fragment);
        assertThat(e.getMessage()).doesNotContain("\n").doesNotContain(Configs.HOOK_KEY);
        assertThat(e).isInstanceOf(IllegalArgumentException.class);
    }

    @Test
    void aMissingEnvironmentVariableIsNamed() {
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(Configs.VALID, Map.of()));

        assertThat(e.keyPath()).isEqualTo("webhook.signing_key_env");
        assertThat(e.getMessage()).contains("environment variable HOOK_KEY is not set");
    }

    @Test
    void unknownKeysListTheAcceptedOnes() {
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(
                Configs.valid("  arm: /arm\n", "  arm: /arm\n  variant: /v\n"), Configs.ENV));

        assertThat(e.getMessage()).isEqualTo("events.variant: unknown key; accepted here: experiment, arm, unit, time");
    }

    // ---- what messages show of the file ----

    /** A tab where indentation belongs is reported at its own line, and no other line is named. */
    @Test
    void aTabIsReportedAtItsLine() {
        String yaml = Configs.valid("  arm: /arm\n", "  arm: /arm\n\tunit2: /u\n");
        int tabLine = (int) yaml.substring(0, yaml.indexOf('\t')).lines().count() + 1;
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(yaml, Configs.ENV));

        assertThat(e.getMessage()).isEqualTo("is not valid YAML at line " + tabLine + ", column 1: found a tab, which "
                + "YAML does not allow for indentation: indent with spaces");
    }

    /** A problem inside a construct begun on an earlier line names the problem's line first, the other as context. */
    @Test
    void aProblemInsideABlockNamesItsLineAndWhereTheBlockBegan() {
        String yaml = Configs.valid("  input_topics: [shop.events]\n", "  input_topics:\n    - shop.events\n    x: 1\n");
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(yaml, Configs.ENV));

        assertThat(e.getMessage()).startsWith("is not valid YAML at line 4, column 5: ").endsWith("begun at line 3)");
    }

    /** A value of a megabyte is quoted by its first 80 characters and its length: the message stays a line. */
    @Test
    void aHugeValueIsCutInTheMessage() {
        String id = "q".repeat(1_000_000);
        ConfigException e = catchThrowableOfType(ConfigException.class,
                () -> ConfigLoader.parse(Configs.valid("id: basket-v3", "id: " + id), Configs.ENV));

        assertThat(e.keyPath()).isEqualTo("experiments[0].id");
        assertThat(e.getMessage()).endsWith("got '" + "q".repeat(80) + "…' (1000000 characters)").hasSizeLessThan(300);
    }

    /** Bidirectional controls and zero-width characters are shown escaped, never raw (they would reorder or hide text). */
    @Test
    void invisibleCharactersAreEscapedInTheMessage() {
        String yaml = Configs.valid("id: basket-v3", "id: \"basket\\u202Eev\\u200Bil\\u0007\"");
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(yaml, Configs.ENV));

        assertThat(e.getMessage()).endsWith("got 'basket\\u202Eev\\u200Bil\\u0007'")
                .doesNotContain("\u202E", "\u200B", "\u0007");
    }

    /**
     * Keys are user input too: a long or invisible key is shown cut and escaped in the key path (1000
     * characters: YAML 1.1 allows implicit keys of at most 1024).
     */
    @Test
    void aLongUnknownKeyIsCutInTheKeyPath() {
        String key = "k".repeat(999) + "\u2066";
        ConfigException e = catchThrowableOfType(ConfigException.class,
                () -> ConfigLoader.parse(Configs.valid("  arm: /arm\n", "  arm: /arm\n  " + key + ": 1\n"), Configs.ENV));

        assertThat(e.keyPath()).isEqualTo("events." + "k".repeat(80) + "… (1000 characters)");
        assertThat(e.getMessage()).hasSizeLessThan(300).doesNotContain("\u2066");
    }
}
