package dev.interim.http;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentView;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Duration;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.concurrent.CompletableFuture;
import org.junit.jupiter.api.Test;

/**
 * Issue 10, defect 4: while the daemon owned nothing yet, {@code GET /api/experiments} answered
 * 200 {@code []} and operator actions 404, which read as "no experiments" and "no such experiment".
 * Now: 503 with the reason and Retry-After while this instance has no assignment; once assigned, the
 * experiments decided elsewhere are counted in a header, and one of them read here is 404 and acted on
 * here 409, naming the instance that decides it; an experiment not configured at all is 404.
 */
// Source: status codes and Retry-After as RFC 9110 defines them (sections 15.5.5, 15.5.10, 15.6.4,
// 10.2.3); the rest is this project's API (ExperimentApi's documentation).
class ExperimentApiOwnershipTest {
    private static final String TOKEN = "op-token-3c9e5a71b2d84f60";
    private final HttpClient client = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();
    private final ObjectMapper json = new ObjectMapper();

    /** An instance that decides nothing: configured are two experiments, both elsewhere or nobody's yet. */
    private static final class NothingHere implements ExperimentApi.Operations {
        volatile ExperimentApi.Ownership ownership = ExperimentApi.Ownership.notYet("joining the consumer group 'kiln-judge'");
        volatile String acted;

        @Override
        public Map<String, ExperimentView> views() {
            return Map.of();
        }

        private CompletableFuture<List<DecisionRecord>> act(String experiment) {
            acted = experiment;
            return CompletableFuture.completedFuture(List.of());
        }

        @Override
        public CompletableFuture<List<DecisionRecord>> hold(String experiment, String reason) {
            return act(experiment);
        }

        @Override
        public CompletableFuture<List<DecisionRecord>> resume(String experiment) {
            return act(experiment);
        }

        @Override
        public CompletableFuture<List<DecisionRecord>> forceStop(String experiment, String arm, String reason) {
            return act(experiment);
        }

        @Override
        public CompletableFuture<List<DecisionRecord>> acknowledge(String experiment) {
            return act(experiment);
        }

        @Override
        public ExperimentApi.Ownership ownership() {
            return ownership;
        }

        @Override
        public Set<String> configured() {
            return Set.of("kiln-checkout", "kiln-search");
        }

        @Override
        public Optional<String> ownerOf(String experiment) {
            return experiment.equals("kiln-checkout") ? Optional.of("member 'oven-2-8080-judge' on /10.0.0.7") : Optional.empty();
        }
    }

    @Test
    void beforeItsAssignmentTheInstanceAnswers503WithTheReasonAndRetryAfter() throws Exception {
        NothingHere operations = new NothingHere();
        try (HttpEndpoint endpoint = HttpEndpoint.builder().port(0).start()) {
            ExperimentApi.install(endpoint, operations, () -> Optional.of(TOKEN));
            for (HttpResponse<String> r : List.of(get(endpoint, "/api/experiments"), get(endpoint, "/api/experiments/kiln-checkout"),
                    post(endpoint, "/api/experiments/kiln-checkout/hold"), post(endpoint, "/api/experiments/kiln-search/arms/new/stop"))) {
                assertThat(r.statusCode()).as(r.uri().toString()).isEqualTo(503);
                assertThat(r.headers().firstValue("Retry-After")).as(r.uri().toString()).contains("5");
                JsonNode body = json.readTree(r.body());
                assertThat(body.path("error").asText())
                        .isEqualTo("this instance owns no experiments yet: joining the consumer group 'kiln-judge'");
                assertThat(body.path("retry_after_seconds").asInt()).isEqualTo(5);
            }
            assertThat(operations.acted).as("no action reaches the judge").isNull();
            // Not configured at all: 404 whatever the ownership.
            assertThat(get(endpoint, "/api/experiments/kiln-nothing").statusCode()).isEqualTo(404);
        }
    }

    @Test
    void onceAssignedExperimentsDecidedElsewhereAreNamedWithTheirInstance() throws Exception {
        NothingHere operations = new NothingHere();
        operations.ownership = ExperimentApi.Ownership.ASSIGNED;
        try (HttpEndpoint endpoint = HttpEndpoint.builder().port(0).start()) {
            ExperimentApi.install(endpoint, operations, () -> Optional.of(TOKEN));
            HttpResponse<String> list = get(endpoint, "/api/experiments");
            assertThat(list.statusCode()).isEqualTo(200);
            assertThat(json.readTree(list.body())).isEmpty();
            assertThat(list.headers().firstValue(ExperimentApi.ELSEWHERE_HEADER)).contains("2");

            HttpResponse<String> read = get(endpoint, "/api/experiments/kiln-checkout");
            assertThat(read.statusCode()).isEqualTo(404);
            assertThat(json.readTree(read.body()).path("error").asText()).isEqualTo("experiment 'kiln-checkout' is decided by "
                    + "another instance (member 'oven-2-8080-judge' on /10.0.0.7), not this one; ask that instance");

            HttpResponse<String> held = post(endpoint, "/api/experiments/kiln-checkout/hold");
            assertThat(held.statusCode()).isEqualTo(409);
            assertThat(json.readTree(held.body()).path("error").asText()).isEqualTo("experiment 'kiln-checkout' is decided by "
                    + "another instance (member 'oven-2-8080-judge' on /10.0.0.7), not this one; send the action there");
            HttpResponse<String> unknownOwner = post(endpoint, "/api/experiments/kiln-search/acknowledge");
            assertThat(unknownOwner.statusCode()).isEqualTo(409);
            assertThat(json.readTree(unknownOwner.body()).path("error").asText()).contains("decided by another instance, not this one");
            assertThat(operations.acted).isNull();

            HttpResponse<String> unknown = post(endpoint, "/api/experiments/kiln-nothing/resume");
            assertThat(unknown.statusCode()).isEqualTo(404);
            assertThat(json.readTree(unknown.body()).path("error").asText()).startsWith("no experiment 'kiln-nothing' is configured");
        }
    }

    private HttpResponse<String> get(HttpEndpoint endpoint, String path) throws Exception {
        return client.send(HttpRequest.newBuilder(endpoint.uri().resolve(path)).timeout(Duration.ofSeconds(10)).build(),
                HttpResponse.BodyHandlers.ofString());
    }

    private HttpResponse<String> post(HttpEndpoint endpoint, String path) throws Exception {
        return client.send(HttpRequest.newBuilder(URI.create(endpoint.uri() + path)).timeout(Duration.ofSeconds(10))
                .header("Authorization", "Bearer " + TOKEN).POST(HttpRequest.BodyPublishers.noBody()).build(),
                HttpResponse.BodyHandlers.ofString());
    }
}
