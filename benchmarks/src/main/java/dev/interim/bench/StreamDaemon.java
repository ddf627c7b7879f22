package dev.interim.bench;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * The daemon under test as a child process: {@code interim run} on a generated configuration, its
 * output in {@code daemon.log} and its GC log in {@code daemon-gc.log} of the run directory, its
 * HTTP port (0 in the configuration) read from the line it prints once running.
 */
final class StreamDaemon implements AutoCloseable {
    private static final Pattern RUNNING = Pattern.compile("metrics at http://([^/\\s]+):(\\d+)/metrics");
    private static final ObjectMapper JSON = new ObjectMapper();

    private final List<String> command;
    private final Path log;
    private final Path gcLog;
    private final HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();
    /** The class-data sharing archive beside the jar, as {@code scripts/interim} keeps it. */
    private final Path archive;
    /** Where this daemon writes the archive as it exits when there was none to use; null when it uses one. */
    private final Path partial;
    private Process process;
    private String base;

    StreamDaemon(Path jar, String heap, Path config, Path runDir) {
        this.log = runDir.resolve("daemon.log");
        this.gcLog = runDir.resolve("daemon-gc.log");
        String java = Path.of(System.getProperty("java.home"), "bin", "java").toString();
        List<String> c = new java.util.ArrayList<>(List.of(java, "-Xmx" + heap, "-Xlog:gc:file=" + gcLog,
                // Fail at once rather than limp on when a thread runs out of heap: the bench reports it.
                "-XX:+ExitOnOutOfMemoryError"));
        // Extra JVM options for the daemon only, e.g. a flight recording:
        //   INTERIM_BENCH_DAEMON_OPTS="-XX:StartFlightRecording=filename=/tmp/daemon.jfr,settings=profile"
        String extra = System.getenv("INTERIM_BENCH_DAEMON_OPTS");
        if (extra != null && !extra.isBlank()) {
            c.addAll(List.of(extra.trim().split("\\s+")));
        }
        // Start-up as scripts/interim gives it: the classes mapped from the archive beside the jar when
        // it is newer than the jar; else this daemon writes one as it exits, for the next run.
        String name = jar.getFileName().toString();
        this.archive = jar.resolveSibling(name.substring(0, name.length() - ".jar".length()) + ".jsa");
        if (fresh(archive, jar)) {
            this.partial = null;
            c.add("-XX:SharedArchiveFile=" + archive);
        } else {
            this.partial = archive.resolveSibling(archive.getFileName() + "." + ProcessHandle.current().pid() + ".partial");
            c.add("-XX:ArchiveClassesAtExit=" + partial);
        }
        c.add("-Xlog:cds*=off");
        c.addAll(List.of("-cp", jar.toString(), "dev.interim.cli.Interim", "run", "--config", config.toString(),
                "--data-dir", runDir.resolve("daemon-data").toString()));
        this.command = List.copyOf(c);
    }

    List<String> command() {
        return command;
    }

    /** What the daemon's start-up had: a class-data sharing archive, or none (it writes one at exit). */
    String archiveNote() {
        return partial == null ? "class-data sharing archive " + archive
                : "no class-data sharing archive yet: the daemon writes " + archive.getFileName()
                        + " as it exits, so later runs start faster";
    }

    private static boolean fresh(Path archive, Path jar) {
        try {
            return Files.isRegularFile(archive)
                    && Files.getLastModifiedTime(archive).compareTo(Files.getLastModifiedTime(jar)) > 0;
        } catch (IOException e) {
            return false;
        }
    }

    Path log() {
        return log;
    }

    Path gcLog() {
        return gcLog;
    }

    void start() throws IOException {
        process = new ProcessBuilder(command).redirectErrorStream(true).redirectOutput(log.toFile()).start();
    }

    /** The CPU time of the daemon's process so far (every thread), or null where the system does not tell. */
    Duration cpu() {
        return process.info().totalCpuDuration().orElse(null);
    }

    boolean alive() {
        return process != null && process.isAlive();
    }

    int exitCode() {
        return process.exitValue();
    }

    /** Whether the daemon has said where it listens (it does so once every stage has started). */
    boolean ready() throws IOException {
        if (base != null) {
            return true;
        }
        Matcher m = RUNNING.matcher(Files.readString(log, StandardCharsets.ISO_8859_1));
        if (m.find()) {
            base = "http://" + m.group(1) + ":" + m.group(2);
        }
        return base != null;
    }

    String base() {
        return base;
    }

    /** {@code GET /api/experiments}. */
    JsonNode experiments() throws IOException, InterruptedException {
        return JSON.readTree(get("/api/experiments"));
    }

    /** {@code GET /metrics}, Prometheus text. */
    String metrics() throws IOException, InterruptedException {
        return get("/metrics");
    }

    private String get(String path) throws IOException, InterruptedException {
        HttpResponse<String> r = http.send(HttpRequest.newBuilder(URI.create(base + path)).timeout(Duration.ofSeconds(10))
                .GET().build(), HttpResponse.BodyHandlers.ofString());
        if (r.statusCode() != 200) {
            throw new IOException("GET " + path + " answered " + r.statusCode());
        }
        return r.body();
    }

    /** The sum over every series of a Prometheus counter (0 when absent). */
    static double counter(String metricsText, String name) {
        double total = 0;
        for (String line : metricsText.split("\n")) {
            if (line.startsWith(name) && (line.startsWith(name + "{") || line.startsWith(name + " "))) {
                String value = line.substring(line.lastIndexOf(' ') + 1);
                try {
                    total += Double.parseDouble(value);
                } catch (NumberFormatException ignored) {
                    // not a sample line
                }
            }
        }
        return total;
    }

    /** The series of a counter with a non-zero value, as written (for messages). */
    static List<String> nonZero(String metricsText, String name) {
        List<String> out = new ArrayList<>();
        for (String line : metricsText.split("\n")) {
            if (line.startsWith(name + "{") && !line.endsWith(" 0.0") && !line.endsWith(" 0")) {
                out.add(line);
            }
        }
        return out;
    }

    /** SIGTERM (the daemon's orderly shutdown), then SIGKILL if it has not ended within {@code patience}. */
    void stop(Duration patience) {
        if (process == null || !process.isAlive()) {
            return;
        }
        process.destroy();
        try {
            if (!process.waitFor(patience.toMillis(), TimeUnit.MILLISECONDS)) {
                process.destroyForcibly();
                process.waitFor(10, TimeUnit.SECONDS);
            }
        } catch (InterruptedException e) {
            process.destroyForcibly();
            Thread.currentThread().interrupt();
        }
        if (partial != null) {
            try {
                if (!process.isAlive() && Files.size(partial) > 0) {
                    Files.move(partial, archive, java.nio.file.StandardCopyOption.REPLACE_EXISTING,
                            java.nio.file.StandardCopyOption.ATOMIC_MOVE);
                }
            } catch (IOException e) {
                // No archive (the daemon was killed before writing it): the next run makes one.
            } finally {
                try {
                    Files.deleteIfExists(partial);
                } catch (IOException ignored) {
                    // a stray partial file in target/ costs nothing
                }
            }
        }
    }

    @Override
    public void close() {
        stop(Duration.ofSeconds(20));
    }

    /** Counts of the daemon's log lines at WARN and ERROR level, and the first few of them. */
    record LogSummary(int errors, int warnings, List<String> first) {}

    LogSummary summarizeLog() {
        int errors = 0;
        int warnings = 0;
        List<String> first = new ArrayList<>();
        try {
            for (String line : Files.readAllLines(log, StandardCharsets.ISO_8859_1)) {
                boolean error = line.contains(" ERROR ") || line.contains("OutOfMemoryError");
                boolean warning = line.contains(" WARN ");
                if (error) {
                    errors++;
                } else if (warning) {
                    warnings++;
                }
                if ((error || warning) && first.size() < 5) {
                    first.add(line.length() > 300 ? line.substring(0, 300) + "..." : line);
                }
            }
        } catch (IOException e) {
            first.add("(cannot read " + log + ": " + e.getMessage() + ")");
        }
        return new LogSummary(errors, warnings, first);
    }

    /**
     * The heap figures of a unified GC log ({@code -Xlog:gc}): each pause line ends with
     * {@code BEFORE->AFTER(COMMITTED) TIME}, e.g. {@code Pause Young (Normal) (G1 Evacuation Pause) 51M->8M(256M) 3.4ms}.
     */
    record GcSummary(int pauses, int fullPauses, long peakBeforeBytes, long largestAfterBytes, long lastAfterBytes,
                     long largestCommittedBytes) {}

    private static final Pattern HEAP = Pattern.compile("(\\d+)([KMG])->(\\d+)([KMG])\\((\\d+)([KMG])\\)");

    GcSummary summarizeGc() throws IOException {
        int pauses = 0;
        int full = 0;
        long peak = 0;
        long after = 0;
        long last = 0;
        long committed = 0;
        if (!Files.exists(gcLog)) {
            return new GcSummary(0, 0, 0, 0, 0, 0);
        }
        for (String line : Files.readAllLines(gcLog, StandardCharsets.ISO_8859_1)) {
            Matcher m = HEAP.matcher(line);
            if (!m.find()) {
                continue;
            }
            pauses++;
            if (line.contains("Pause Full")) {
                full++;
            }
            long before = bytes(m.group(1), m.group(2));
            long left = bytes(m.group(3), m.group(4));
            peak = Math.max(peak, before);
            after = Math.max(after, left);
            last = left;
            committed = Math.max(committed, bytes(m.group(5), m.group(6)));
        }
        return new GcSummary(pauses, full, peak, after, last, committed);
    }

    private static long bytes(String number, String unit) {
        long n = Long.parseLong(number);
        return switch (unit) {
            case "K" -> n << 10;
            case "M" -> n << 20;
            default -> n << 30;
        };
    }
}
