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

    private static Run run(Path launcher, Path directory, String... args) throws IOException, InterruptedException {
        List<String> command = new java.util.ArrayList<>(List.of(launcher.toString()));
        command.addAll(List.of(args));
        Path out = Files.createTempFile(directory, "out", ".txt");
        Path err = Files.createTempFile(directory, "err", ".txt");
        Process p = new ProcessBuilder(command).directory(directory.toFile())
                .redirectOutput(out.toFile()).redirectError(err.toFile()).start();
        if (!p.waitFor(BUILD_MINUTES, TimeUnit.MINUTES)) {
            p.destroyForcibly();
            throw new AssertionError("launcher did not finish within " + BUILD_MINUTES + " minutes");
        }
        String stderr = Files.readString(err, StandardCharsets.UTF_8)
                .lines().filter(l -> !l.startsWith("interim: building") && !l.replaceAll("\u001B\\[[0-9;]*m", "").isBlank())
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
