package dev.interim.http;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.http.HttpEndpoint.Response;
import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Duration;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/** The endpoint over real sockets on the loopback interface. */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
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
            assertThat(post.statusCode()).isEqualTo(405);
            assertThat(post.headers().firstValue("allow")).hasValue("GET");
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

    private static HttpResponse<String> get(HttpEndpoint http, String path) throws IOException, InterruptedException {
        return send(http, HttpRequest.newBuilder(http.uri().resolve(path)).GET());
    }

    private static HttpResponse<String> send(HttpEndpoint http, HttpRequest.Builder request) throws IOException, InterruptedException {
        return client.send(request.timeout(Duration.ofSeconds(10)).build(), HttpResponse.BodyHandlers.ofString());
    }
}
