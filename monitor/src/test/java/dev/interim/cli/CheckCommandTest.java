package dev.interim.cli;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.IOException;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;
import picocli.CommandLine;

/**
 * {@code interim check}: exit 0 and a summary for a valid file; exit 2 and a line per problem naming
 * the file, the key and the rule for an invalid one (every problem of the file, values first, then
 * the secrets). Expected values are read off config/interim.example.yaml; the exit-code convention is
 * the command line's (see {@link Interim}).
 */
// Source: expected values come from config/interim.example.yaml and from what this test itself writes;
// the exit codes are the command line's documented convention (README). No statistical values here.
class CheckCommandTest {
    /** base64 of 32 bytes, in the Standard Webhooks form. */
    private static final String HOOK_KEY = "whsec_c2VjcmV0LWtleS1mb3ItdGVzdHMtb25seS0xMjM0NTY=";
    private static final String ADMIN_TOKEN = "admin-token-never-printed-5521";
    private static final Map<String, String> ENV = Map.of("INTERIM_WEBHOOK_KEY", HOOK_KEY, "INTERIM_ADMIN_TOKEN", ADMIN_TOKEN);

    @TempDir
    Path dir;

    /** The real command line, with {@code check} reading secrets from {@code env} instead of the process. */
    private static Cli.Result check(Map<String, String> env, String... options) {
        StringWriter out = new StringWriter();
        StringWriter err = new StringWriter();
        CommandLine.IFactory factory = new CommandLine.IFactory() {
            @Override
            public <K> K create(Class<K> type) throws Exception {
                return type == CheckCommand.class ? type.cast(new CheckCommand(env)) : CommandLine.defaultFactory().create(type);
            }
        };
        CommandLine cli = new CommandLine(new Interim(), factory);
        UserErrorHandler errors = new UserErrorHandler();
        cli.setParameterExceptionHandler(errors);
        cli.setExecutionExceptionHandler(errors);
        cli.setOut(new PrintWriter(out, true));
        cli.setErr(new PrintWriter(err, true));
        String[] args = new String[options.length + 1];
        args[0] = "check";
        System.arraycopy(options, 0, args, 1, options.length);
        int exit = cli.execute(args);
        return new Cli.Result(exit, out.toString(), err.toString());
    }

    private static Path example() {
        for (Path d = Path.of("").toAbsolutePath(); d != null; d = d.getParent()) {
            Path candidate = d.resolve("config/interim.example.yaml");
            if (Files.isRegularFile(candidate)) {
                return candidate;
            }
        }
        throw new AssertionError("config/interim.example.yaml not found");
    }

    private Path file(String yaml) throws IOException {
        return Files.writeString(dir.resolve("interim.yaml"), yaml);
    }

    @Test
    void theExampleIsValidAndSummarised() {
        Path example = example();
        Cli.Result r = check(ENV, "--config", example.toString());

        assertThat(r.err()).isEmpty();
        assertThat(r.exit()).isZero();
        assertThat(r.out()).startsWith(example + ": valid\n")
                .contains("embedded broker", "input courier.quote-events (keyed by unit)", "decisions interim.decisions")
                .contains("127.0.0.1:8080, admin token from $INTERIM_ADMIN_TOKEN")
                .contains("https://flags.courier.example/hooks/interim-kill, signed with the key in $INTERIM_WEBHOOK_KEY")
                .contains("experiment rate-card-engine-v2 [dry run: no kill webhook calls]")
                .contains("arms: table-rates (control, 50%), solver-rates (25%), solver-rates-cached (25%)")
                .contains("looks every 1m once every arm has 500");
        assertThat(line(r.out(), "quote-errors")).contains("event-rate", "guardrail", "higher", "0.005 (0.01/2)", " 1 ",
                "O'Brien-Fleming-type", "at most 40000 per arm", "kill", "/quote/http_status at_least: 500");
        assertThat(line(r.out(), "quote-latency-ms")).contains("event-mean", "Pocock-type", "page", "/quote/elapsed_ms");
        assertThat(line(r.out(), "label-purchase")).contains("unit-rate", "primary", "lower", "0.025 (0.05/2)", " 2 ",
                "power 0.8 for effect 0.02, 12 planned looks", "/step equals: label_bought");
        assertThat(r.out()).doesNotContain(HOOK_KEY, ADMIN_TOKEN);
    }

    private static String line(String out, String containing) {
        return out.lines().filter(l -> l.contains(containing)).findFirst()
                .orElseThrow(() -> new AssertionError("no line with " + containing + " in\n" + out));
    }

    /** Per-unit and per-event experiments, a ratio metric, caps and a relative planned effect (an invented file). */
    private static final String UNITS = """
            kafka:
              input_topics: [ember.events]
              input_keyed_by_unit: true
            events:
              experiment: /exp
              arm: /arm
              unit: /shopper
            experiments:
              - id: ember-basket
                control: plain
                treatments: [bundle-hint]
                metrics:
                  - name: value-per-session
                    kind: ratio
                    role: primary
                    worse: lower
                    numerator: /basket/value
                    denominator: /basket/sessions
                    cap: 500
                    denominator_cap: 40
                    power: 0.8
                    relative_effect: 0.05
                  - name: page-ms
                    kind: event-mean
                    role: guardrail
                    worse: higher
                    field: /page/ms
                    cap: 12000
                    max_per_arm: 50000
              - id: ember-canary
                control: stable
                treatments: [canary]
                assignment: event
                metrics:
                  - name: returned
                    kind: unit-rate
                    role: guardrail
                    worse: lower
                    field: /returned
                    counts_if: {equals: true}
                    max_per_arm: 50000
            """;

    @Test
    void theAssignmentCapsRatiosAndRelativeEffectsAreShown() throws IOException {
        Path f = file(UNITS);
        Cli.Result r = check(ENV, "--config", f.toString());

        assertThat(r.exit()).as(r.err()).isZero();
        assertThat(r.out()).contains("experiment ember-basket", "  assignment: per unit (each unit keeps its arm",
                "experiment ember-canary", "  assignment: per event (each event is assigned on its own");
        // relative_effect 0.05 is 5% of control's level, written as a percent.
        assertThat(line(r.out(), "value-per-session")).contains("ratio", "power 0.8 for relative effect +5%, 10 planned looks",
                "numerator /basket/value capped at 500, denominator /basket/sessions capped at 40");
        assertThat(line(r.out(), "page-ms")).contains("event-mean", "/page/ms capped at 12000", "at most 50000 per arm");
        assertThat(line(r.out(), "returned")).doesNotContain("capped");
    }

    /** Valid, so exit 0; but a per-event experiment where events carry a unit gets a warning under it, and only it. */
    @Test
    void perEventAssignmentWithUnitsIsWarnedAboutButValid() throws IOException {
        Cli.Result r = check(ENV, "--config", file(UNITS).toString());

        assertThat(r.exit()).isZero();
        String out = r.out();
        String warning = "  WARN: events carry a unit but arms are assigned per event: if units keep their arm, set assignment: unit";
        assertThat(out).containsOnlyOnce(warning);
        assertThat(out.indexOf(warning)).isGreaterThan(out.indexOf("experiment ember-canary"));
        Cli.Result example = check(ENV, "--config", example().toString());
        assertThat(example.out()).doesNotContain("WARN");
    }

    /** Valid, so exit 0; a min_per_arm below 30 gets a warning (the README's figures use 100). */
    @Test
    void aMinimumBelowThirtyPerArmIsWarnedAbout() throws IOException {
        String yaml = Files.readString(example()).replace("min_per_arm: 500", "min_per_arm: 5");
        Path f = Files.writeString(Files.createTempFile("interim-few", ".yaml"), yaml);
        Cli.Result r = check(ENV, "--config", f.toString());
        assertThat(r.exit()).as(r.err()).isZero();
        assertThat(r.out()).contains("  WARN: min_per_arm 5 lets looks run on fewer than 30 observations per arm");
    }

    @Test
    void withoutSecretsTheExampleChecksInAnEmptyEnvironment() {
        Cli.Result r = check(Map.of(), "--config", example().toString(), "--without-secrets");

        assertThat(r.exit()).as(r.err()).isZero();
        assertThat(r.out()).contains(": valid (secrets not read)");
    }

    @Test
    void aMissingSecretIsBadInputNamingTheVariable() {
        Cli.Result r = check(Map.of("INTERIM_ADMIN_TOKEN", ADMIN_TOKEN), "--config", example().toString());

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.out()).isEmpty();
        assertThat(r.errLines()).singleElement().asString()
                .startsWith("interim: " + example() + ": webhook.signing_key_env: ")
                .contains("INTERIM_WEBHOOK_KEY is not set")
                .doesNotContain(ADMIN_TOKEN);
    }

    @Test
    void anInvalidFileGivesOneLineWithTheFileTheKeyAndTheRule() throws IOException {
        String yaml = Files.readString(example()).replace("alpha: 0.01              # per metric", "alpha: 2 # per metric");
        assertThat(yaml).contains("alpha: 2");
        Path f = file(yaml);

        Cli.Result r = check(ENV, "--config", f.toString());

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.out()).isEmpty();
        assertThat(r.errLines()).singleElement().asString()
                .startsWith("interim: " + f + ": experiments[0].metrics[0].alpha: alpha must lie strictly between 0 and 1")
                .doesNotContain("Exception", HOOK_KEY, ADMIN_TOKEN);
    }

    @Test
    void invalidYamlIsBadInputWithItsLine() throws IOException {
        Path f = file("kafka:\n  input_topics: [a\nevents: {}\n");

        Cli.Result r = check(ENV, "--config", f.toString());

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines()).singleElement().asString().startsWith("interim: " + f + ": is not valid YAML at line");
    }

    @Test
    void aMissingFileIsBadInput() {
        Path missing = dir.resolve("nowhere.yaml");

        Cli.Result r = check(ENV, "--config", missing.toString());

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.out()).isEmpty();
        assertThat(r.errLines()).singleElement().asString().startsWith("interim: " + missing + ": no such file");
    }

    @Test
    void aDirectoryIsBadInput() {
        Cli.Result r = check(ENV, "--config", dir.toString());

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines()).singleElement().asString().contains("is a directory");
    }

    @Test
    void theConfigOptionIsRequired() {
        Cli.Result r = check(ENV);

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines()).singleElement().asString().startsWith("interim: ").contains("--config");
    }

    @Test
    void checkIsRegisteredOnTheRealCommandLine() {
        Cli.Result r = Cli.run("check", "--config", dir.resolve("absent.yaml").toString());

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines()).singleElement().asString().contains("no such file");
    }

    // ---- every problem at once, and secrets never shown ----

    private String exampleWith(String old, String replacement) throws IOException {
        String yaml = Files.readString(example());
        assertThat(yaml).contains(old);
        return yaml.replace(old, replacement);
    }

    @Test
    void aBadAlphaAndAMissingSecretAreBothNamedValuesFirst() throws IOException {
        Path f = file(exampleWith("alpha: 0.01              # per metric", "alpha: 1.5 # per metric"));

        Cli.Result r = check(Map.of("INTERIM_ADMIN_TOKEN", ADMIN_TOKEN), "--config", f.toString());

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.out()).isEmpty();
        assertThat(r.errLines()).containsExactly(
                "interim: " + f + ": experiments[0].metrics[0].alpha: alpha must lie strictly between 0 and 1, got 1.5",
                "interim: " + f + ": webhook.signing_key_env: environment variable INTERIM_WEBHOOK_KEY is not set; "
                        + "export it (it holds the signing key) before starting interim",
                "interim: 2 problems in " + f + ", each on a line above; see 'interim check --help'");
        assertThat(r.err()).doesNotContain(ADMIN_TOKEN);
    }

    @Test
    void aSigningKeyWrittenAsTheVariableNameIsRefusedAndNeverPrinted() throws IOException {
        Path f = file(exampleWith("signing_key_env: INTERIM_WEBHOOK_KEY", "signing_key_env: " + HOOK_KEY));

        for (String[] options : new String[][] {{"--config", f.toString()}, {"--config", f.toString(), "--without-secrets"}}) {
            Cli.Result r = check(ENV, options);

            assertThat(r.exit()).isEqualTo(2);
            assertThat(r.errLines()).singleElement().asString().startsWith("interim: " + f + ": webhook.signing_key_env: "
                    + "expects the name of the environment variable holding the signing key, and the value given is "
                    + "not a variable name (not shown: it may be the secret itself)");
            assertThat(r.out() + r.err()).doesNotContain(HOOK_KEY, HOOK_KEY.substring("whsec_".length(), 24), ADMIN_TOKEN);
        }
    }

    /**
     * {@code run} refuses the same file before it starts anything, with the same lines: a token in
     * admin_token_env and a bad value, both named, the token nowhere. (The environment of this process
     * is not consulted for a name that is refused; the timeout only guards against a daemon started
     * by mistake.)
     */
    @Test
    @Timeout(60)
    void runRefusesTheSameFileWithEveryProblemAndNoSecret() throws IOException {
        String token = "c3f9a1e2b7d4a8f0c6e1b9d2a7f3c8e4b1d6a9f2c7e0b5d8";
        Path f = file(exampleWith("admin_token_env: INTERIM_ADMIN_TOKEN", "admin_token_env: " + token)
                .replace("alpha: 0.01              # per metric", "alpha: 1.5 # per metric"));

        Cli.Result r = Cli.run("run", "--config", f.toString(), "--data-dir", dir.resolve("data").toString());

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines()).hasSizeGreaterThanOrEqualTo(3);
        assertThat(r.errLines().get(0)).startsWith("interim: " + f + ": http.admin_token_env: expects the name of the "
                + "environment variable holding the admin token");
        assertThat(r.errLines()).anySatisfy(l -> assertThat(l).contains("experiments[0].metrics[0].alpha: alpha must lie "
                + "strictly between 0 and 1, got 1.5"));
        assertThat(r.errLines().get(r.errLines().size() - 1)).contains("problems in " + f).endsWith("see 'interim run --help'");
        assertThat(r.out() + r.err()).doesNotContain(token);
        assertThat(dir.resolve("data")).doesNotExist();
    }

    @Test
    void aFileOverTheLimitIsRefusedWithTheLimit() throws IOException {
        Path f = file(Files.readString(example()) + "# " + "x".repeat(2 * 1024 * 1024) + "\n");

        Cli.Result r = check(ENV, "--config", f.toString());

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines()).singleElement().asString().startsWith("interim: " + f + ": is ")
                .contains("a configuration file may hold at most 1 MiB (1048576 bytes)");
    }

    @Test
    void invisibleCharactersNeverReachTheTerminal() throws IOException {
        Path f = file(exampleWith("id: rate-card-engine-v2", "id: \"rate-card\\u202Eengine\\u200B\\u001B[2J\""));

        Cli.Result r = check(ENV, "--config", f.toString());

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.err()).contains("'rate-card\\u202Eengine\\u200B\\u001B[2J'").doesNotContain("\u202E", "\u200B", "\u001B");
    }
}
