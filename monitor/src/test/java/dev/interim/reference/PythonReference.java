package dev.interim.reference;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.InputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.concurrent.TimeUnit;

/**
 * Runs a reference script kept under src/test/resources/reference/ with python3 (or
 * {@code $INTERIM_PYTHON}), JSON in on stdin and JSON out on stdout: the independent computations
 * (SciPy, NumPy) that cross-checks compare with.
 */
public final class PythonReference {
    private static final ObjectMapper JSON = new ObjectMapper();

    private PythonReference() {
    }

    /** The interpreter: {@code $INTERIM_PYTHON}, else python3. */
    public static String python() {
        return System.getenv().getOrDefault("INTERIM_PYTHON", "python3");
    }

    /** Whether the interpreter imports {@code module} (for an assumption that reports a skip). */
    public static boolean imports(String module) {
        try {
            Process p = new ProcessBuilder(python(), "-c", "import " + module).redirectErrorStream(true).start();
            p.getInputStream().readAllBytes();
            return p.waitFor(60, TimeUnit.SECONDS) && p.exitValue() == 0;
        } catch (IOException e) {
            return false;
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            return false;
        }
    }

    /** Runs resource {@code /reference/<script>} in {@code dir} on {@code input}; fails the test unless it succeeds. */
    public static JsonNode run(String script, Path dir, String input, long timeoutSeconds) throws Exception {
        Path file = dir.resolve(script);
        try (InputStream in = PythonReference.class.getResourceAsStream("/reference/" + script)) {
            Files.write(file, in.readAllBytes());
        }
        Path stdin = dir.resolve(script + ".in.json");
        Files.writeString(stdin, input);
        Process p = new ProcessBuilder(python(), file.toString()).redirectInput(stdin.toFile()).start();
        byte[] out = p.getInputStream().readAllBytes();
        byte[] err = p.getErrorStream().readAllBytes();
        assertThat(p.waitFor(timeoutSeconds, TimeUnit.SECONDS)).as(script + " finished").isTrue();
        assertThat(p.exitValue()).as(new String(err, StandardCharsets.UTF_8)).isZero();
        return JSON.readTree(out);
    }
}
