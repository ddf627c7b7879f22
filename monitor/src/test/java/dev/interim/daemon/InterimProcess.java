package dev.interim.daemon;

import java.io.IOException;
import java.net.ServerSocket;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;

/**
 * {@code interim run} as a separate JVM, as an operator starts it: the configuration written to
 * {@code dir/NAME.yaml}, standard output and error to {@code dir/NAME.log}, the test's class path.
 * Used by the tests that kill the daemon (SIGKILL, SIGTERM) or read its exit code and output.
 */
final class InterimProcess {
    private InterimProcess() {}

    /**
     * Starts the daemon.
     *
     * @param env environment variables to add (secrets named by the configuration)
     * @param jvm JVM options, e.g. {@code -Xmx384m}
     */
    static Process run(Path dir, String name, String config, Map<String, String> env, String... jvm) throws IOException {
        Files.createDirectories(dir);
        Path file = dir.resolve(name + ".yaml");
        Files.writeString(file, config);
        List<String> command = new ArrayList<>();
        command.add(Path.of(System.getProperty("java.home"), "bin", "java").toString());
        command.addAll(List.of(jvm));
        command.addAll(List.of("-cp", System.getProperty("java.class.path"), "dev.interim.cli.Interim", "run",
                "--config", file.toString(), "--data-dir", dir.resolve("data").toString()));
        ProcessBuilder b = new ProcessBuilder(command).redirectErrorStream(true).redirectOutput(log(dir, name).toFile());
        b.environment().putAll(env);
        return b.start();
    }

    /** Where {@link #run} writes the output of the process named {@code name}. */
    static Path log(Path dir, String name) {
        return dir.resolve(name + ".log");
    }

    /** A TCP port free now (the usual way: bind port 0 and close). */
    static int freePort() throws IOException {
        try (ServerSocket s = new ServerSocket(0)) {
            return s.getLocalPort();
        }
    }
}
