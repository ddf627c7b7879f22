package dev.interim.cli;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Runs the real launcher, {@code scripts/interim}, as a separate process from an unrelated directory.
 * It builds the runnable jar first when the jar is missing or older than the sources (a minute at
 * most); when the jar is fresh it only starts Java.
 */
class LauncherEndToEndTest {
    /** Generous: a first run builds the shaded jar with Maven on a busy machine. */
    private static final long BUILD_MINUTES = 10;

    record Run(int exit, String out, String err) {}

    @Test
    void launcherRunsPlanFromAnyDirectoryAndPassesTheExitCodeThrough(@TempDir Path elsewhere) throws Exception {
        Path launcher = findLauncher();
        assertThat(Files.isExecutable(launcher)).as("%s is executable", launcher).isTrue();

        Run ok = run(launcher, elsewhere, "plan", "--alpha", "0.025", "--sides", "1", "--spending", "obf",
                "--looks", "5", "--format", "csv");
        assertThat(ok.exit()).as(ok.err()).isZero();
        List<String> lines = ok.out().lines().toList();
        assertThat(lines).hasSize(6);
        // Lan & DeMets (1983); Jennison & Turnbull (2000); from memory: O'Brien-Fleming-type
        // spending, one-sided alpha 0.025, K = 5. ±0.001: published to 3 decimals.
        double[] published = {4.877, 3.357, 2.680, 2.290, 2.031};
        for (int k = 0; k < published.length; k++) {
            double upper = Double.parseDouble(lines.get(k + 1).split(",", -1)[2]);
            assertThat(upper).isCloseTo(published[k], within(0.001));
        }

        Run bad = run(launcher, elsewhere, "plan", "--sides", "3");
        assertThat(bad.exit()).isEqualTo(2);
        assertThat(bad.err().lines().toList()).singleElement().asString().startsWith("interim: --sides");
    }

    @Test
    void aFirstDaemonCommandWritesTheClassArchiveThatLaterCommandsStartFrom(@TempDir Path elsewhere) throws Exception {
        Path launcher = findLauncher();
        Run plain = run(launcher, elsewhere, "plan", "--looks", "3", "--format", "csv");   // builds the jar if need be
        assertThat(plain.exit()).as(plain.err()).isZero();
        Path jar = launcher.getParent().resolveSibling("monitor").resolve("target").resolve("interim-all.jar");
        Path archive = jar.resolveSibling("interim-all.jsa");
        Files.deleteIfExists(archive);

        // 'run' without an archive writes one as the JVM exits, even when it exits at once on bad input.
        Run missing = run(launcher, elsewhere, "run", "--config", elsewhere.resolve("absent.yaml").toString());
        assertThat(missing.exit()).isEqualTo(2);
        assertThat(missing.err().lines().toList()).as("only the tool's own message on stderr, no JVM warning")
                .singleElement().asString().startsWith("interim: no configuration file at");
        assertThat(archive).exists();
        assertThat(Files.getLastModifiedTime(archive)).isGreaterThan(Files.getLastModifiedTime(jar));
        try (var partials = Files.list(archive.getParent())) {
            assertThat(partials.map(Path::toString)).noneMatch(f -> f.endsWith(".partial"));
        }

        // Later commands map it: -Xshare:on makes the JVM refuse to start when it cannot (a JVM option
        // that JAVA_TOOL_OPTIONS puts before the launcher's own).
        Run shared = run(launcher, elsewhere, java.util.Map.of("JAVA_TOOL_OPTIONS", "-Xshare:on"),
                "plan", "--looks", "3", "--format", "csv");
        assertThat(shared.exit()).as(shared.err()).isZero();
        assertThat(shared.out()).isEqualTo(plain.out());
    }

    private static Run run(Path launcher, Path directory, String... args) throws IOException, InterruptedException {
        return run(launcher, directory, java.util.Map.of(), args);
    }

    private static Run run(Path launcher, Path directory, java.util.Map<String, String> env, String... args)
            throws IOException, InterruptedException {
        List<String> command = new java.util.ArrayList<>(List.of(launcher.toString()));
        command.addAll(List.of(args));
        Path out = Files.createTempFile(directory, "out", ".txt");
        Path err = Files.createTempFile(directory, "err", ".txt");
        ProcessBuilder builder = new ProcessBuilder(command).directory(directory.toFile())
                .redirectOutput(out.toFile()).redirectError(err.toFile());
        builder.environment().putAll(env);
        Process p = builder.start();
        if (!p.waitFor(BUILD_MINUTES, TimeUnit.MINUTES)) {
            p.destroyForcibly();
            throw new AssertionError("launcher did not finish within " + BUILD_MINUTES + " minutes");
        }
        String stderr = Files.readString(err, StandardCharsets.UTF_8)
                .lines().filter(l -> !l.startsWith("interim: building") && !l.startsWith("Picked up JAVA_TOOL_OPTIONS")
                        && !l.replaceAll("\u001B\\[[0-9;]*m", "").isBlank())
                .reduce("", (a, b) -> a + b + "\n");
        return new Run(p.exitValue(), Files.readString(out, StandardCharsets.UTF_8), stderr);
    }

    /** scripts/interim in the checkout that holds this module (tests run in the module's directory). */
    private static Path findLauncher() {
        for (Path dir = Path.of("").toAbsolutePath(); dir != null; dir = dir.getParent()) {
            Path candidate = dir.resolve("scripts").resolve("interim");
            if (Files.exists(candidate)) {
                return candidate;
            }
        }
        throw new AssertionError("scripts/interim not found above " + Path.of("").toAbsolutePath());
    }
}
