package dev.interim.dashboard;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.File;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.net.http.WebSocket;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Base64;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.CompletionStage;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.function.Predicate;

/**
 * A real headless Chromium driven over the Chrome DevTools Protocol (its WebSocket, with the JDK's
 * client; no driver library). One browser per instance, in a fresh profile directory, started with
 * the flags that work on the project's machines. It reports, per page, every problem the browser
 * console would show as an error: uncaught exceptions ({@code Runtime.exceptionThrown}),
 * {@code console.error} and failed {@code console.assert} calls ({@code Runtime.consoleAPICalled}),
 * and the browser's own error entries ({@code Log.entryAdded}: failed requests, blocked content,
 * security violations).
 */
final class Chromium implements AutoCloseable {
    static final List<String> FLAGS = List.of("--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
            "--disable-background-networking", "--disable-component-update", "--disable-sync", "--hide-scrollbars",
            "--remote-debugging-address=127.0.0.1", "--remote-debugging-port=0");
    private static final ObjectMapper JSON = new ObjectMapper();
    private static final Duration STARTUP = Duration.ofSeconds(30);
    private static final Duration CALL = Duration.ofSeconds(30);

    private final Process process;
    private final Path profile;
    private final WebSocket socket;
    private final AtomicInteger ids = new AtomicInteger();
    private final Map<Integer, CompletableFuture<JsonNode>> pending = new ConcurrentHashMap<>();
    private final List<JsonNode> events = new ArrayList<>();

    /** The browser to use: {@code $INTERIM_CHROMIUM}, else Debian's {@code /usr/bin/chromium}, else {@code chromium} on the PATH. */
    static Optional<Path> find() {
        String configured = System.getenv("INTERIM_CHROMIUM");
        if (configured != null && !configured.isBlank()) {
            return Optional.of(Path.of(configured)).filter(Files::isExecutable);
        }
        List<Path> candidates = new ArrayList<>(List.of(Path.of("/usr/bin/chromium")));
        for (String dir : System.getenv().getOrDefault("PATH", "").split(File.pathSeparator)) {
            if (!dir.isBlank()) {
                candidates.add(Path.of(dir, "chromium"));
                candidates.add(Path.of(dir, "chromium-browser"));
            }
        }
        return candidates.stream().filter(Files::isExecutable).findFirst();
    }

    private Chromium(Process process, Path profile, WebSocket socket) {
        this.process = process;
        this.profile = profile;
        this.socket = socket;
    }

    /** Starts the browser with a new profile under {@code work} and attaches to its first page. */
    static Chromium start(Path binary, Path work) throws Exception {
        Path profile = Files.createTempDirectory(work, "chromium-profile-");
        List<String> command = new ArrayList<>();
        command.add(binary.toString());
        command.addAll(FLAGS);
        command.add("--user-data-dir=" + profile);
        command.add("about:blank");
        Process process = new ProcessBuilder(command).redirectErrorStream(true)
                .redirectOutput(work.resolve("chromium.log").toFile()).start();
        try {
            int port = devToolsPort(profile, process);
            HttpClient http = HttpClient.newHttpClient();
            String pageSocket = null;
            long deadline = System.nanoTime() + STARTUP.toNanos();
            while (pageSocket == null && System.nanoTime() < deadline) {
                HttpResponse<String> list = http.send(HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + port + "/json/list")).build(),
                        HttpResponse.BodyHandlers.ofString());
                for (JsonNode target : JSON.readTree(list.body())) {
                    if ("page".equals(target.path("type").asText())) {
                        pageSocket = target.path("webSocketDebuggerUrl").asText();
                        break;
                    }
                }
                if (pageSocket == null) {
                    Thread.sleep(100);
                }
            }
            if (pageSocket == null) {
                throw new IllegalStateException("chromium opened no page; see " + work.resolve("chromium.log"));
            }
            Chromium[] self = new Chromium[1];
            Listener listener = new Listener(message -> self[0].receive(message));
            WebSocket socket = http.newWebSocketBuilder().connectTimeout(CALL).buildAsync(URI.create(pageSocket), listener)
                    .get(CALL.toSeconds(), TimeUnit.SECONDS);
            self[0] = new Chromium(process, profile, socket);
            self[0].call("Runtime.enable", null);
            self[0].call("Log.enable", null);
            self[0].call("Page.enable", null);
            return self[0];
        } catch (Exception e) {
            process.descendants().forEach(ProcessHandle::destroyForcibly);
            process.destroyForcibly();
            throw e;
        }
    }

    /** The port chromium chose, from the DevToolsActivePort file it writes into its profile. */
    private static int devToolsPort(Path profile, Process process) throws Exception {
        Path file = profile.resolve("DevToolsActivePort");
        long deadline = System.nanoTime() + STARTUP.toNanos();
        while (System.nanoTime() < deadline) {
            if (!process.isAlive()) {
                throw new IllegalStateException("chromium exited at start with code " + process.exitValue());
            }
            if (Files.isRegularFile(file)) {
                List<String> lines = Files.readAllLines(file);
                if (!lines.isEmpty() && !lines.get(0).isBlank()) {
                    return Integer.parseInt(lines.get(0).trim());
                }
            }
            Thread.sleep(50);
        }
        throw new IllegalStateException("chromium did not open its DevTools port within " + STARTUP.toSeconds() + " s");
    }

    /** Something the console would show as an error. */
    record Problem(String kind, String text) {
        @Override
        public String toString() {
            return kind + ": " + text;
        }
    }

    /** Opens {@code url} and returns once its load event has fired; the problems seen so far are dropped. */
    void open(URI url) throws Exception {
        synchronized (events) {
            events.clear();
        }
        ObjectNode params = JSON.createObjectNode().put("url", url.toString());
        JsonNode result = call("Page.navigate", params);
        if (result.hasNonNull("errorText")) {
            throw new IllegalStateException("chromium could not open " + url + ": " + result.get("errorText").asText());
        }
        awaitEvent(e -> "Page.loadEventFired".equals(e.path("method").asText()), CALL);
    }

    /** Every console error, uncaught exception and browser error entry since the page was opened. */
    List<Problem> problems() {
        List<Problem> out = new ArrayList<>();
        synchronized (events) {
            for (JsonNode e : events) {
                JsonNode p = e.path("params");
                switch (e.path("method").asText()) {
                    case "Runtime.exceptionThrown" -> {
                        JsonNode d = p.path("exceptionDetails");
                        String text = d.path("exception").path("description").asText(d.path("text").asText());
                        out.add(new Problem("uncaught exception", text));
                    }
                    case "Runtime.consoleAPICalled" -> {
                        String type = p.path("type").asText();
                        if (type.equals("error") || type.equals("assert")) {
                            List<String> args = new ArrayList<>();
                            p.path("args").forEach(a -> args.add(a.path("value").asText(a.path("description").asText())));
                            out.add(new Problem("console." + type, String.join(" ", args)));
                        }
                    }
                    case "Log.entryAdded" -> {
                        JsonNode entry = p.path("entry");
                        if (entry.path("level").asText().equals("error")) {
                            out.add(new Problem("browser " + entry.path("source").asText(), entry.path("text").asText()
                                    + (entry.hasNonNull("url") ? " (" + entry.get("url").asText() + ")" : "")));
                        }
                    }
                    default -> { }
                }
            }
        }
        return out;
    }

    /** The value of a JavaScript expression in the page (awaited when it is a promise). */
    JsonNode evaluate(String expression) throws Exception {
        ObjectNode params = JSON.createObjectNode().put("expression", expression).put("returnByValue", true).put("awaitPromise", true);
        JsonNode result = call("Runtime.evaluate", params);
        if (result.has("exceptionDetails")) {
            throw new IllegalStateException("evaluating " + expression + " threw " + result.get("exceptionDetails"));
        }
        return result.path("result").path("value");
    }

    /** Waits until {@code expression} is true in the page; false when the time runs out. */
    boolean waitUntil(String expression, Duration timeout) throws Exception {
        long deadline = System.nanoTime() + timeout.toNanos();
        while (System.nanoTime() < deadline) {
            if (evaluate(expression).asBoolean(false)) {
                return true;
            }
            Thread.sleep(200);
        }
        return false;
    }

    /** The document as it is now (after scripts ran), as HTML. */
    String dom() throws Exception {
        return evaluate("document.documentElement.outerHTML").asText();
    }

    /** A PNG of the whole page at {@code width} CSS pixels, as tall as its content. */
    byte[] screenshot(int width) throws Exception {
        call("Emulation.setDeviceMetricsOverride", JSON.createObjectNode().put("width", width).put("height", 900)
                .put("deviceScaleFactor", 1).put("mobile", false));
        int height = (int) Math.ceil(evaluate("document.documentElement.scrollHeight").asDouble(900));
        call("Emulation.setDeviceMetricsOverride", JSON.createObjectNode().put("width", width).put("height", Math.min(height, 16000))
                .put("deviceScaleFactor", 1).put("mobile", false));
        JsonNode shot = call("Page.captureScreenshot", JSON.createObjectNode().put("format", "png"));
        return Base64.getDecoder().decode(shot.path("data").asText());
    }

    private JsonNode call(String method, ObjectNode params) throws Exception {
        int id = ids.incrementAndGet();
        ObjectNode message = JSON.createObjectNode().put("id", id).put("method", method);
        if (params != null) {
            message.set("params", params);
        }
        CompletableFuture<JsonNode> answer = new CompletableFuture<>();
        pending.put(id, answer);
        socket.sendText(JSON.writeValueAsString(message), true).get(CALL.toSeconds(), TimeUnit.SECONDS);
        JsonNode reply = answer.get(CALL.toSeconds(), TimeUnit.SECONDS);
        if (reply.has("error")) {
            throw new IllegalStateException(method + " failed: " + reply.get("error"));
        }
        return reply.path("result");
    }

    private void awaitEvent(Predicate<JsonNode> wanted, Duration timeout) throws InterruptedException {
        long deadline = System.nanoTime() + timeout.toNanos();
        synchronized (events) {
            while (events.stream().noneMatch(wanted)) {
                long left = TimeUnit.NANOSECONDS.toMillis(deadline - System.nanoTime());
                if (left <= 0) {
                    throw new IllegalStateException("chromium: no page load within " + timeout.toSeconds() + " s");
                }
                events.wait(left);
            }
        }
    }

    private void receive(String text) {
        JsonNode message;
        try {
            message = JSON.readTree(text);
        } catch (IOException e) {
            return;
        }
        if (message.has("id")) {
            CompletableFuture<JsonNode> answer = pending.remove(message.get("id").asInt());
            if (answer != null) {
                answer.complete(message);
            }
            return;
        }
        synchronized (events) {
            events.add(message);
            events.notifyAll();
        }
    }

    /** Closes the browser (politely, then by force) and deletes its profile. */
    @Override
    public void close() throws Exception {
        try {
            socket.sendText("{\"id\":" + ids.incrementAndGet() + ",\"method\":\"Browser.close\"}", true);
        } catch (RuntimeException ignored) {
            // the browser may be gone already
        }
        if (!process.waitFor(10, TimeUnit.SECONDS)) {
            process.descendants().forEach(ProcessHandle::destroyForcibly);
            process.destroyForcibly();
            process.waitFor(10, TimeUnit.SECONDS);
        }
        socket.abort();
        try (var files = Files.walk(profile)) {
            files.sorted((a, b) -> b.getNameCount() - a.getNameCount()).forEach(p -> p.toFile().delete());
        }
    }

    /** Collects whole text messages (the protocol's replies can arrive in parts: a screenshot is megabytes). */
    private static final class Listener implements WebSocket.Listener {
        private final java.util.function.Consumer<String> sink;
        private final StringBuilder partial = new StringBuilder();

        Listener(java.util.function.Consumer<String> sink) {
            this.sink = sink;
        }

        @Override
        public CompletionStage<?> onText(WebSocket webSocket, CharSequence data, boolean last) {
            partial.append(data);
            if (last) {
                String message = partial.toString();
                partial.setLength(0);
                sink.accept(message);
            }
            webSocket.request(1);
            return null;
        }
    }
}
