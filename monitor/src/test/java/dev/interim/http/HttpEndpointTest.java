package dev.interim.http;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.http.HttpEndpoint.Response;
import java.io.ByteArrayInputStream;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.OutputStream;
import java.io.UncheckedIOException;
import java.net.Socket;
import java.net.SocketTimeoutException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.TreeMap;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * The endpoint over real sockets on the loopback interface: routing, limits, HEAD, the Host check and
 * the timeouts that keep idle or slow clients from holding it. The HTTP rules are named beside each
 * check (RFC 9110, HTTP semantics; RFC 9112, HTTP/1.1).
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth)
// and from the RFC sections named beside the checks; no published statistical values are checked here.
class HttpEndpointTest {
    private static final String METRICS = "# HELP interim_held held\n# TYPE interim_held gauge\ninterim_held{experiment=\"basket-v7\"} 0.0\n";
    private static HttpClient client;

    @BeforeAll
    static void client() {
        client = HttpClient.newBuilder().version(HttpClient.Version.HTTP_1_1).connectTimeout(Duration.ofSeconds(5)).build();
    }

    @AfterAll
    static void noClient() {
        client = null;
    }

    @Test
    void bindsToLoopbackOnAFreePortByDefault() {
        try (HttpEndpoint a = HttpEndpoint.builder().start(); HttpEndpoint b = HttpEndpoint.builder().start()) {
            assertThat(a.address().getAddress().getHostAddress()).isEqualTo("127.0.0.1");
            assertThat(a.port()).isPositive();
            assertThat(b.port()).isPositive().isNotEqualTo(a.port());
            assertThat(a.uri()).isEqualTo(URI.create("http://127.0.0.1:" + a.port()));
        }
    }

    /** A port already taken is one message naming the address, with the system's reason and the BindException as cause. */
    @Test
    void aPortInUseIsNamed() {
        try (HttpEndpoint first = HttpEndpoint.builder().start()) {
            UncheckedIOException e = org.assertj.core.api.Assertions.catchThrowableOfType(UncheckedIOException.class,
                    () -> HttpEndpoint.builder().port(first.port()).start().close());
            assertThat(e).isNotNull();
            assertThat(e.getMessage()).startsWith("cannot listen on 127.0.0.1:" + first.port() + ": ").doesNotContain("\n");
            assertThat(e.getCause()).isInstanceOf(java.net.BindException.class);
        }
    }

    @Test
    void servesMetricsInThePrometheusTextFormatAndHealth() throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().metrics(() -> METRICS).start()) {
            HttpResponse<String> metrics = get(http, "/metrics");
            assertThat(metrics.statusCode()).isEqualTo(200);
            assertThat(metrics.headers().firstValue("content-type")).hasValue("text/plain; version=0.0.4; charset=utf-8");
            assertThat(metrics.body()).isEqualTo(METRICS);

            HttpResponse<String> health = get(http, "/health");
            assertThat(health.statusCode()).isEqualTo(200);
            assertThat(health.body()).isEqualTo("ok");
        }
    }

    @Test
    void unknownPathsAndMethodsAreRefused() throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().start()) {
            assertThat(get(http, "/metrics").statusCode()).as("no scrape configured").isEqualTo(404);
            assertThat(get(http, "/healthz").statusCode()).isEqualTo(404);
            assertThat(get(http, "/health/").statusCode()).isEqualTo(404);
            HttpResponse<String> post = send(http, HttpRequest.newBuilder(http.uri().resolve("/health"))
                    .POST(HttpRequest.BodyPublishers.ofString("x")));
            // RFC 9110 §15.5.6: 405 lists the allowed methods in Allow; HEAD goes with GET (§9.3.2).
            assertThat(post.statusCode()).isEqualTo(405);
            assertThat(post.headers().firstValue("allow")).hasValue("GET, HEAD");
        }
    }

    @Test
    void aRouteIsOneCallAndItsHandlerSeesTheRequest() throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().start()) {
            http.route("POST", "/api/echo", r -> Response.json(201, ("{\"got\":\"" + r.bodyText() + "\",\"q\":\"" + r.query() + "\"}")
                    .getBytes(java.nio.charset.StandardCharsets.UTF_8)));
            HttpResponse<String> echo = send(http, HttpRequest.newBuilder(http.uri().resolve("/api/echo?x=1"))
                    .POST(HttpRequest.BodyPublishers.ofString("hello")));
            assertThat(echo.statusCode()).isEqualTo(201);
            assertThat(echo.headers().firstValue("content-type")).hasValue("application/json");
            assertThat(echo.body()).isEqualTo("{\"got\":\"hello\",\"q\":\"x=1\"}");
        }
    }

    @Test
    void bodiesAboveTheLimitAre413WithOrWithoutALength() throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().maxBodyBytes(1024).start()) {
            http.route("POST", "/api/hold", r -> Response.text(200, "read " + r.body().length));
            URI hold = http.uri().resolve("/api/hold");
            byte[] big = new byte[4096];
            assertThat(send(http, HttpRequest.newBuilder(hold).POST(HttpRequest.BodyPublishers.ofByteArray(big))).statusCode())
                    .isEqualTo(413);
            HttpResponse<String> chunked = send(http, HttpRequest.newBuilder(hold)
                    .POST(HttpRequest.BodyPublishers.ofInputStream(() -> new ByteArrayInputStream(big))));
            assertThat(chunked.statusCode()).isEqualTo(413);
            HttpResponse<String> small = send(http, HttpRequest.newBuilder(hold).POST(HttpRequest.BodyPublishers.ofByteArray(new byte[1024])));
            assertThat(small.statusCode()).isEqualTo(200);
            assertThat(small.body()).isEqualTo("read 1024");
        }
    }

    /** A failing handler gives 500 without echoing the exception, and the endpoint keeps serving. */
    @Test
    void aFailingHandlerIs500WithoutDetails() throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().start()) {
            http.route("GET", "/api/broken", r -> {
                throw new IllegalStateException("token=abc123");
            });
            HttpResponse<String> broken = get(http, "/api/broken");
            assertThat(broken.statusCode()).isEqualTo(500);
            assertThat(broken.body()).isEqualTo("internal error");
            assertThat(get(http, "/health").statusCode()).isEqualTo(200);
        }
    }

    // ---- idle and slow clients ----

    /**
     * Half-open connections (a request line or header sent in part, the socket kept open) hold no
     * worker: other requests are answered at once. "At once" is a client timeout of one second, not a
     * measured time; the read timeout is set long so that the half-open sockets are still open while
     * the requests are made, which the end of the test checks.
     */
    @ParameterizedTest(name = "{0} half-open connections")
    @ValueSource(ints = {2, 50})
    void halfOpenConnectionsDoNotDelayOtherRequests(int halfOpen) throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().metrics(() -> METRICS).readTimeout(Duration.ofSeconds(120)).start()) {
            http.route("POST", "/api/experiments/{id}/hold", r -> Response.text(200, "held " + r.param("id")));
            List<Socket> idle = new ArrayList<>();
            try {
                for (int i = 0; i < halfOpen; i++) {
                    Socket s = socket(http);
                    // Half stop inside the request line, half inside the header fields.
                    String part = i % 2 == 0 ? "GET /metr" : "GET /metrics HTTP/1.1\r\nHost: 127.0.0.1\r\nAccept: te";
                    s.getOutputStream().write(part.getBytes(StandardCharsets.US_ASCII));
                    s.getOutputStream().flush();
                    idle.add(s);
                }
                HttpClient fresh = HttpClient.newBuilder().version(HttpClient.Version.HTTP_1_1)
                        .connectTimeout(Duration.ofSeconds(1)).build();
                for (int round = 0; round < 3; round++) {
                    HttpResponse<String> metrics = fresh.send(HttpRequest.newBuilder(http.uri().resolve("/metrics"))
                            .timeout(Duration.ofSeconds(1)).GET().build(), HttpResponse.BodyHandlers.ofString());
                    assertThat(metrics.statusCode()).isEqualTo(200);
                    assertThat(metrics.body()).isEqualTo(METRICS);
                    HttpResponse<String> hold = fresh.send(HttpRequest.newBuilder(http.uri().resolve("/api/experiments/basket-v7/hold"))
                            .timeout(Duration.ofSeconds(1)).POST(HttpRequest.BodyPublishers.ofString("{}")).build(),
                            HttpResponse.BodyHandlers.ofString());
                    assertThat(hold.statusCode()).isEqualTo(200);
                    assertThat(hold.body()).isEqualTo("held basket-v7");
                }
                for (Socket s : idle) {
                    assertThat(stillOpen(s)).as("a half-open connection was still open during the requests").isTrue();
                }
            } finally {
                for (Socket s : idle) {
                    s.close();
                }
            }
        }
    }

    /** A request header sent in part and then nothing is dropped after the read timeout; the idle timeout is far longer. */
    @Test
    void aRequestHeaderNotCompleteWithinTheReadTimeoutIsDropped() throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().readTimeout(Duration.ofMillis(300)).idleTimeout(Duration.ofSeconds(60)).start();
             Socket s = socket(http)) {
            s.getOutputStream().write("GET /health HTTP/1.1\r\nHost: 127".getBytes(StandardCharsets.US_ASCII));
            s.getOutputStream().flush();
            assertThat(closedByServer(s, Duration.ofSeconds(20))).as("closed well before the 60 s idle timeout").isTrue();
        }
    }

    /**
     * A header dribbled a byte at a time (each byte restarts an idle timeout) is still dropped after the
     * read timeout, on the first request and on a later one of a kept-alive connection.
     */
    @ParameterizedTest(name = "after {0} complete request(s)")
    @ValueSource(ints = {0, 1})
    void aDribbledHeaderIsDroppedAfterTheReadTimeout(int before) throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().readTimeout(Duration.ofMillis(500)).idleTimeout(Duration.ofSeconds(60)).start();
             Socket s = socket(http)) {
            for (int i = 0; i < before; i++) {
                s.getOutputStream().write("GET /health HTTP/1.1\r\nHost: 127.0.0.1\r\n\r\n".getBytes(StandardCharsets.US_ASCII));
                assertThat(readResponse(s.getInputStream()).status()).isEqualTo(200);
            }
            Thread dribble = new Thread(() -> {
                byte[] line = "GET /health HTTP/1.1\r\nHost: 127.0.0.1\r\nX-Slow: aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa"
                        .getBytes(StandardCharsets.US_ASCII);
                try {
                    for (byte b : line) {
                        s.getOutputStream().write(b);
                        s.getOutputStream().flush();
                        Thread.sleep(100);
                    }
                } catch (IOException | InterruptedException e) {
                    // closed by the server, as expected
                }
            }, "dribble");
            dribble.setDaemon(true);
            dribble.start();
            assertThat(closedByServer(s, Duration.ofSeconds(20))).as("closed well before the 60 s idle timeout").isTrue();
            dribble.interrupt();
        }
    }

    /** A body announced and then sent a byte at a time gets the read timeout too. */
    @Test
    void aDribbledBodyIsDroppedAfterTheReadTimeout() throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().readTimeout(Duration.ofMillis(500)).idleTimeout(Duration.ofSeconds(60)).start();
             Socket s = socket(http)) {
            http.route("POST", "/api/echo", r -> Response.text(200, r.bodyText()));
            s.getOutputStream().write("POST /api/echo HTTP/1.1\r\nHost: 127.0.0.1\r\nContent-Length: 1000\r\n\r\n"
                    .getBytes(StandardCharsets.US_ASCII));
            Thread dribble = new Thread(() -> {
                try {
                    for (int i = 0; i < 1000; i++) {
                        s.getOutputStream().write('x');
                        s.getOutputStream().flush();
                        Thread.sleep(100);
                    }
                } catch (IOException | InterruptedException e) {
                    // closed by the server, as expected
                }
            }, "dribble");
            dribble.setDaemon(true);
            dribble.start();
            assertThat(closedByServer(s, Duration.ofSeconds(20))).as("closed well before the 60 s idle timeout").isTrue();
            dribble.interrupt();
        }
    }

    /** A kept-alive connection with no request in progress is closed by the server after the idle timeout. */
    @Test
    void anIdleConnectionIsClosedAfterTheIdleTimeout() throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().idleTimeout(Duration.ofMillis(300)).start(); Socket s = socket(http)) {
            s.getOutputStream().write("GET /health HTTP/1.1\r\nHost: 127.0.0.1\r\n\r\n".getBytes(StandardCharsets.US_ASCII));
            Raw first = readResponse(s.getInputStream());
            assertThat(first.status()).isEqualTo(200);
            assertThat(first.header("connection")).as("kept alive (RFC 9112 §9.3)").isNull();
            assertThat(closedByServer(s, Duration.ofSeconds(20))).isTrue();
        }
    }

    /**
     * The idle timeout is for connections, not for answers: a handler that takes longer (an operator
     * action waits up to 30 s for its commit) still gets its answer out.
     */
    @Test
    void aHandlerSlowerThanTheIdleTimeoutStillAnswers() throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().idleTimeout(Duration.ofMillis(300)).start()) {
            http.route("POST", "/api/experiments/{id}/hold", r -> {
                Thread.sleep(1500);
                return Response.text(200, "held " + r.param("id"));
            });
            HttpResponse<String> hold = send(http, HttpRequest.newBuilder(http.uri().resolve("/api/experiments/basket-v7/hold"))
                    .POST(HttpRequest.BodyPublishers.ofString("{\"reason\": \"incident 42\"}")));
            assertThat(hold.statusCode()).isEqualTo(200);
            assertThat(hold.body()).isEqualTo("held basket-v7");
        }
    }

    // ---- limits ----

    /** 10 MB is refused with 413 (RFC 9110 §15.5.14), from Content-Length before reading, and chunked once the limit is read. */
    @ParameterizedTest(name = "chunked: {0}")
    @ValueSource(booleans = {false, true})
    void aTenMegabyteBodyIs413(boolean chunked) throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().start(); Socket s = socket(http)) {
            List<byte[]> seen = new ArrayList<>();
            http.route("POST", "/api/experiments/{id}/hold", r -> {
                seen.add(r.body());
                return Response.text(200, "held");
            });
            int size = 10 * 1024 * 1024;
            String head = "POST /api/experiments/basket-v7/hold HTTP/1.1\r\nHost: 127.0.0.1\r\nContent-Type: application/json\r\n"
                    + (chunked ? "Transfer-Encoding: chunked\r\n" : "Content-Length: " + size + "\r\n") + "\r\n";
            OutputStream out = s.getOutputStream();
            out.write(head.getBytes(StandardCharsets.US_ASCII));
            out.flush();
            Thread writer = new Thread(() -> {
                byte[] block = new byte[64 * 1024];
                java.util.Arrays.fill(block, (byte) 'x');
                try {
                    for (int sent = 0; sent < size; sent += block.length) {
                        if (chunked) {
                            out.write((Integer.toHexString(block.length) + "\r\n").getBytes(StandardCharsets.US_ASCII));
                        }
                        out.write(block);
                        if (chunked) {
                            out.write("\r\n".getBytes(StandardCharsets.US_ASCII));
                        }
                    }
                    if (chunked) {
                        out.write("0\r\n\r\n".getBytes(StandardCharsets.US_ASCII));
                    }
                    out.flush();
                } catch (IOException e) {
                    // the server stopped reading after its answer: expected
                }
            }, "big-body");
            writer.setDaemon(true);
            writer.start();
            Raw answer = readResponse(s.getInputStream());
            assertThat(answer.status()).isEqualTo(413);
            assertThat(answer.body()).isEqualTo("request body larger than 65536 bytes");
            assertThat(answer.header("connection")).isEqualTo("close");
            assertThat(seen).as("the handler never ran").isEmpty();
            writer.interrupt();
        }
    }

    /** A request header above 8 KiB is refused with 431 (RFC 6585 §5), and the endpoint keeps serving. */
    @Test
    void anOversizedRequestHeaderIs431() throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().start()) {
            Raw big = exchange(http, "GET /health HTTP/1.1\r\nHost: 127.0.0.1\r\nX-Big: " + "y".repeat(10_000)
                    + "\r\nConnection: close\r\n\r\n");
            assertThat(big.status()).isEqualTo(431);
            assertThat(big.body()).doesNotContain("Jetty").doesNotContain("<");
            assertThat(get(http, "/health").statusCode()).isEqualTo(200);
        }
    }

    // ---- HEAD ----

    /** HEAD answers wherever GET does, with the same header fields and Content-Length and no content (RFC 9110 §9.3.2, §8.6). */
    @Test
    void headIsGetWithoutTheBody() throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().metrics(() -> METRICS).start()) {
            http.route("GET", "/api/experiments/{id}", r -> Response.json(200, ("{\"id\":\"" + r.param("id") + "\"}")
                    .getBytes(StandardCharsets.UTF_8)));
            http.route("POST", "/api/experiments/{id}/hold", r -> Response.text(200, "held"));
            for (String path : List.of("/metrics", "/health", "/api/experiments/basket-v7")) {
                Raw get = exchange(http, "GET " + path + " HTTP/1.1\r\nHost: 127.0.0.1\r\nConnection: close\r\n\r\n");
                Raw head = exchange(http, "HEAD " + path + " HTTP/1.1\r\nHost: 127.0.0.1\r\nConnection: close\r\n\r\n");
                assertThat(get.status()).isEqualTo(200);
                assertThat(get.body()).isNotEmpty();
                assertThat(head.status()).isEqualTo(200);
                assertThat(head.rawBody()).as("no content after the header of a HEAD answer").isEmpty();
                assertThat(head.header("content-length")).isEqualTo(String.valueOf(get.rawBody().length));
                assertThat(head.header("content-type")).isEqualTo(get.header("content-type"));
            }
            Raw headOfPost = exchange(http, "HEAD /api/experiments/basket-v7/hold HTTP/1.1\r\nHost: 127.0.0.1\r\nConnection: close\r\n\r\n");
            assertThat(headOfPost.status()).as("HEAD only where GET is").isEqualTo(405);
            assertThat(headOfPost.header("allow")).isEqualTo("POST");
        }
    }

    // ---- the Host check (DNS rebinding) ----

    /**
     * A name that is not this endpoint's is refused with 421 Misdirected Request (RFC 9110 §15.5.20) and
     * a one-line reason: a page of another site whose name was rebound to this address sends that name.
     * Loopback names and addresses, any IP literal and the configured names are answered; the Host's
     * port and case do not matter, nor the trailing dot of a fully qualified name (RFC 9110 §7.2, §4.2.3).
     */
    @Test
    void theHostMustBeANameOfThisEndpoint() throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().allowedHosts(List.of("monitor.courier.example")).start()) {
            int port = http.port();
            Raw rebound = exchange(http, "GET /health HTTP/1.1\r\nHost: shop-offers.example:" + port + "\r\nConnection: close\r\n\r\n");
            assertThat(rebound.status()).isEqualTo(421);
            assertThat(rebound.body()).isEqualTo("host 'shop-offers.example' is not a name of this endpoint (DNS rebinding guard); "
                    + "list it in http.allowed_hosts").doesNotContain("\n");
            Raw absolute = exchange(http, "GET http://shop-offers.example/health HTTP/1.1\r\nHost: shop-offers.example\r\nConnection: close\r\n\r\n");
            assertThat(absolute.status()).as("an absolute request target names the host too (RFC 9112 §3.2.2)").isEqualTo(421);
            Raw operatorAction = exchange(http, "POST /health HTTP/1.1\r\nHost: shop-offers.example\r\nContent-Length: 0\r\nConnection: close\r\n\r\n");
            assertThat(operatorAction.status()).as("refused before routing, whatever the method").isEqualTo(421);

            for (String host : List.of("127.0.0.1:" + port, "localhost:" + port, "LOCALHOST", "[::1]:" + port, "10.20.30.40",
                    "monitor.courier.example:" + port, "Monitor.Courier.Example.")) {
                Raw ok = exchange(http, "GET /health HTTP/1.1\r\nHost: " + host + "\r\nConnection: close\r\n\r\n");
                assertThat(ok.status()).as(host).isEqualTo(200);
            }
            // RFC 9112 §3.2: an HTTP/1.1 request without Host is 400; HTTP/1.0 had no Host to send.
            assertThat(exchange(http, "GET /health HTTP/1.1\r\nConnection: close\r\n\r\n").status()).isEqualTo(400);
            assertThat(exchange(http, "GET /health HTTP/1.0\r\n\r\n").status()).isEqualTo(200);
        }
    }

    @Test
    void aStarInTheAllowedHostsTurnsTheCheckOff() throws Exception {
        try (HttpEndpoint http = HttpEndpoint.builder().allowedHosts(List.of("*")).start()) {
            assertThat(exchange(http, "GET /health HTTP/1.1\r\nHost: shop-offers.example\r\nConnection: close\r\n\r\n").status())
                    .isEqualTo(200);
        }
    }

    @Test
    void boundToEveryInterfaceTheMachinesOwnNameIsAnswered() throws Exception {
        String own = java.net.InetAddress.getLocalHost().getHostName();
        try (HttpEndpoint http = HttpEndpoint.builder().bindAddress("0.0.0.0").start()) {
            assertThat(exchange(http, "GET /health HTTP/1.1\r\nHost: " + own + "\r\nConnection: close\r\n\r\n").status()).isEqualTo(200);
            assertThat(exchange(http, "GET /health HTTP/1.1\r\nHost: shop-offers.example\r\nConnection: close\r\n\r\n").status())
                    .isEqualTo(421);
        }
    }

    private static HttpResponse<String> get(HttpEndpoint http, String path) throws IOException, InterruptedException {
        return send(http, HttpRequest.newBuilder(http.uri().resolve(path)).GET());
    }

    private static HttpResponse<String> send(HttpEndpoint http, HttpRequest.Builder request) throws IOException, InterruptedException {
        return client.send(request.timeout(Duration.ofSeconds(10)).build(), HttpResponse.BodyHandlers.ofString());
    }
    // ---- raw HTTP/1.1 over a socket (what java.net.http would not send: partial requests, any Host) ----

    private record Raw(int status, Map<String, String> headers, byte[] rawBody) {
        String header(String name) {
            return headers.get(name.toLowerCase(Locale.ROOT));
        }

        String body() {
            return new String(rawBody, StandardCharsets.UTF_8);
        }
    }

    private static Socket socket(HttpEndpoint http) throws IOException {
        Socket s = new Socket(http.address().getAddress(), http.port());
        s.setSoTimeout(20_000);
        return s;
    }

    /** Sends one request that asks for the connection to close, reads the answer to the end. */
    private static Raw exchange(HttpEndpoint http, String request) throws IOException {
        try (Socket s = socket(http)) {
            s.getOutputStream().write(request.getBytes(StandardCharsets.ISO_8859_1));
            s.getOutputStream().flush();
            byte[] all = s.getInputStream().readAllBytes();
            String text = new String(all, StandardCharsets.ISO_8859_1);
            int end = text.indexOf("\r\n\r\n");
            assertThat(end).as("a complete header in: " + text).isPositive();
            Raw head = parseHead(text.substring(0, end));
            byte[] body = java.util.Arrays.copyOfRange(all, end + 4, all.length);
            return new Raw(head.status(), head.headers(), body);
        }
    }

    /** Reads one answer, its body by Content-Length, leaving the connection open. */
    private static Raw readResponse(InputStream in) throws IOException {
        ByteArrayOutputStream header = new ByteArrayOutputStream();
        while (true) {
            int b = in.read();
            assertThat(b).as("the connection closed before the answer's header ended").isNotNegative();
            header.write(b);
            byte[] h = header.toByteArray();
            int n = h.length;
            if (n >= 4 && h[n - 4] == '\r' && h[n - 3] == '\n' && h[n - 2] == '\r' && h[n - 1] == '\n') {
                break;
            }
        }
        Raw head = parseHead(header.toString(StandardCharsets.ISO_8859_1).strip());
        int length = Integer.parseInt(head.header("content-length"));
        return new Raw(head.status(), head.headers(), in.readNBytes(length));
    }

    private static Raw parseHead(String head) {
        String[] lines = head.split("\r\n");
        int status = Integer.parseInt(lines[0].substring(9, 12));
        Map<String, String> headers = new TreeMap<>();
        for (int i = 1; i < lines.length; i++) {
            int colon = lines[i].indexOf(':');
            headers.put(lines[i].substring(0, colon).strip().toLowerCase(Locale.ROOT), lines[i].substring(colon + 1).strip());
        }
        return new Raw(status, headers, new byte[0]);
    }

    /** Whether the server closed the connection (end of stream or reset) before the client gave up waiting. */
    private static boolean closedByServer(Socket s, Duration patience) throws IOException {
        s.setSoTimeout((int) patience.toMillis());
        try {
            InputStream in = s.getInputStream();
            while (in.read() >= 0) {
                // discard anything before the end
            }
            return true;
        } catch (SocketTimeoutException e) {
            return false;
        } catch (IOException e) {
            return true; // reset by the server
        }
    }

    /** Whether a socket the server has sent nothing on is still open (a short read times out rather than ending). */
    private static boolean stillOpen(Socket s) throws IOException {
        s.setSoTimeout(50);
        try {
            return s.getInputStream().read() >= 0;
        } catch (SocketTimeoutException e) {
            return true;
        } catch (IOException e) {
            return false;
        }
    }
}
