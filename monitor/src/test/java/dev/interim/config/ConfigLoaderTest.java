package dev.interim.config;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatCode;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The loader as a whole: a file is refused with every one of its problems (values first, then the
 * environment), each at its key path; what cannot be checked because something it depends on is
 * wrong is not reported as well; files over the size limit are refused before they are parsed.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// the limit of 1 MiB is the one docs/configuration.md states.
class ConfigLoaderTest {
    @TempDir
    Path dir;

    private static ConfigException refused(String yaml, Map<String, String> env) {
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.parse(yaml, env));
        assertThat(e).as("refused").isNotNull();
        return e;
    }

    @Test
    void aBadValueAndAMissingSecretAreBothReportedTheValueFirst() {
        String yaml = Configs.valid("max_per_arm: 10000", "max_per_arm: 10000\n        alpha: 1.5");
        ConfigException e = refused(yaml, Map.of());

        assertThat(e.problems()).extracting(ConfigException::getMessage).containsExactly(
                "experiments[0].metrics[0].alpha: alpha must lie strictly between 0 and 1, got 1.5",
                "webhook.signing_key_env: environment variable HOOK_KEY is not set; export it (it holds the signing key) "
                        + "before starting interim");
        assertThat(e.getMessage()).isEqualTo("2 problems: (1) " + e.problems().get(0).getMessage() + "; (2) "
                + e.problems().get(1).getMessage());
        assertThat(e.keyPath()).isEmpty();
    }

    @Test
    void everyProblemOfOneSectionIsReported() {
        String yaml = Configs.valid("  input_topics: [shop.events]\n", """
                  input_topics: [shop.events, 'shop events', shop.events]
                  commit_interval: 5 minutes
                  tally_threads: 0
                  decisions_topic: 'a/b'
                """);
        ConfigException e = refused(yaml, Configs.ENV);

        assertThat(e.problems()).extracting(ConfigException::keyPath).containsExactly(
                "kafka.decisions_topic", "kafka.input_topics[1]", "kafka.input_topics[2]", "kafka.commit_interval",
                "kafka.tally_threads");
        assertThat(e.problems().get(2).problem()).isEqualTo("topic 'shop.events' is listed twice");
    }

    @Test
    void everyExperimentAndMetricIsCheckedAfterOneFails() {
        String yaml = Configs.valid(
                "max_per_arm: 10000", "max_per_arm: 10000\n        alpha: 2",
                "kind: unit-rate", "kind: unit-rates",
                "treatments: [new-a, new-b]", "treatments: [new-a, old]")
                + "  - id: second\n    control: a\n    treatments: [b]\n    look_every: 1 day\n    metrics:\n"
                + "      - {name: m, kind: event-mean, role: guardian, worse: higher, field: ms, max_per_arm: 50}\n";
        ConfigException e = refused(yaml, Configs.ENV);

        assertThat(e.problems()).extracting(ConfigException::keyPath).containsExactly(
                "experiments[0].treatments[1]", "experiments[0].metrics[0].alpha", "experiments[0].metrics[1].kind",
                "experiments[1].look_every", "experiments[1].metrics[0].role", "experiments[1].metrics[0].field");
    }

    /** An unknown key that is probably a misspelt required one is reported once, not also as "required". */
    @Test
    void aMisspeltRequiredKeyIsReportedOnce() {
        ConfigException e = refused(Configs.valid("    control: old\n", "    contorl: old\n"), Configs.ENV);

        assertThat(e.problems()).singleElement().extracting(ConfigException::getMessage)
                .isEqualTo("experiments[0].contorl: unknown key (did you mean 'control'?); accepted here: id, control, "
                        + "treatments, split, look_every, min_per_arm, dry_run, sample_ratio_threshold, metrics, assignment");
    }

    /** A rule that needs two sections is not checked when one of them is wrong: no second-hand problem. */
    @Test
    void rulesAcrossSectionsWaitForTheSectionsTheyNeed() {
        String yaml = Configs.valid("input_keyed_by_unit: true", "input_keyed_by_unit: maybe");
        ConfigException e = refused(yaml, Configs.ENV);

        assertThat(e.problems()).extracting(ConfigException::keyPath).containsExactly("kafka.input_keyed_by_unit");
    }

    @Test
    void aLoadedFileLocatesEveryProblem() throws IOException {
        Path f = Files.writeString(dir.resolve("two.yaml"),
                Configs.valid("max_per_arm: 10000", "max_per_arm: 10000\n        alpha: 1.5"));
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.load(f, Map.of()));

        assertThat(e.file()).isEqualTo(f.toString());
        assertThat(e.problems()).hasSize(2).allSatisfy(p -> {
            assertThat(p.file()).isEqualTo(f.toString());
            assertThat(p.getMessage()).startsWith(f + ": ");
        });
    }

    // ---- the size limit ----

    @Test
    void aFileOverOneMebibyteIsRefusedBeforeParsing() throws IOException {
        String comment = "# " + "c".repeat(10 * 1024 * 1024) + "\n";
        Path f = Files.writeString(dir.resolve("big.yaml"), Configs.VALID + comment);
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.load(f, Configs.ENV));

        assertThat(e.getMessage()).isEqualTo(f + ": is " + Files.size(f) + " bytes; a configuration file may hold at "
                + "most 1 MiB (1048576 bytes): keep only the configuration in it (a configuration is a few kilobytes)");
    }

    @Test
    void aFileOfExactlyTheLimitIsRead() throws IOException {
        byte[] valid = Configs.VALID.getBytes(StandardCharsets.UTF_8);
        String padding = "#" + "p".repeat(ConfigLoader.MAX_BYTES - valid.length - 2) + "\n";
        Path f = Files.writeString(dir.resolve("limit.yaml"), Configs.VALID + padding);
        assertThat(Files.size(f)).isEqualTo(ConfigLoader.MAX_BYTES);

        assertThatCode(() -> ConfigLoader.load(f, Configs.ENV)).doesNotThrowAnyException();
        Files.writeString(f, Configs.VALID + "#" + padding);
        assertThat(catchThrowableOfType(ConfigException.class, () -> ConfigLoader.load(f, Configs.ENV)).getMessage())
                .contains("is 1048577 bytes; a configuration file may hold at most 1 MiB");
    }

    @Test
    void textOverTheLimitIsRefusedToo() {
        ConfigException e = refused(Configs.VALID + "#" + "t".repeat(ConfigLoader.MAX_BYTES) + "\n", Configs.ENV);

        assertThat(e.getMessage()).startsWith("is " + (Configs.VALID.length() + ConfigLoader.MAX_BYTES + 2)
                + " characters; a configuration file may hold at most 1 MiB");
    }

    @Test
    void aFileThatIsNotUtf8IsStillNamedSo() throws IOException {
        Path f = Files.write(dir.resolve("latin1.yaml"), "kafka: {input_topics: [caf\u00e9]}\n".getBytes(StandardCharsets.ISO_8859_1));
        ConfigException e = catchThrowableOfType(ConfigException.class, () -> ConfigLoader.load(f, Configs.ENV));

        assertThat(e.getMessage()).isEqualTo(f + ": is not UTF-8 text");
    }
}
