package dev.interim.dashboard;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.interim.experiment.Assignment;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.LookPoint;
import dev.interim.experiment.Tally;
import dev.interim.stats.Moments;
import dev.interim.stats.RatioMoments;
import dev.interim.http.ExperimentApi;
import dev.interim.http.HttpEndpoint;
import dev.interim.http.HttpEndpoint.Response;
import java.lang.reflect.Proxy;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.Optional;
import java.util.concurrent.CompletableFuture;
import org.junit.jupiter.api.Test;

/**
 * Reading experiments back from the JSON API: what {@link ExperimentApi} writes (its own code, with
 * infinities and NaN written as null) must read back into the very same view, so that a report
 * made from a daemon equals one made in-process; and every failure must say what to do.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class DaemonClientTest {

    /**
     * The API over fixed views. Operator actions are not used here: a proxy answers every one of
     * them with a failure, whatever actions the API grows.
     */
    static HttpEndpoint api(Map<String, ExperimentView> views) {
        HttpEndpoint endpoint = HttpEndpoint.builder().port(0).start();
        ExperimentApi.Operations operations = (ExperimentApi.Operations) Proxy.newProxyInstance(
                ExperimentApi.Operations.class.getClassLoader(), new Class<?>[] {ExperimentApi.Operations.class},
                (proxy, method, args) -> method.getName().equals("views") ? views
                        : method.isDefault() ? java.lang.reflect.InvocationHandler.invokeDefault(proxy, method, args)
                        : CompletableFuture.failedFuture(new UnsupportedOperationException(method.getName())));
        ExperimentApi.install(endpoint, operations, Optional::empty);
        return endpoint;
    }

    @Test
    void anExperimentReadsBackIntoTheViewTheDaemonHolds() {
        Map<String, ExperimentView> views = new LinkedHashMap<>(Scenarios.invented());
        views.put("ember-basket", Scenarios.perUnitRatio());
        try (HttpEndpoint endpoint = api(views)) {
            DaemonClient client = DaemonClient.at(endpoint.uri() + "/");
            assertThat(client.address()).isEqualTo(endpoint.uri().toString());
            assertThat(client.experimentIds()).containsExactly("ember-basket", "mossglint-onboarding", "tamsel-pricing",
                    "varrow-search-ranking");
            for (ExperimentView v : views.values()) {
                ExperimentView read = client.experiment(v.id());
                // Everything but the tallies comes back bit for bit; a mean's sum of squared
                // deviations is rebuilt from the standard deviation, so it may differ in the last bits.
                assertThat(withoutTallies(read)).as(v.id()).isEqualTo(withoutTallies(v));
                assertThat(read.tallies().keySet()).isEqualTo(v.tallies().keySet());
                v.tallies().forEach((metric, byArm) -> byArm.forEach((arm, t) -> {
                    Tally back = read.tallies().get(metric).get(arm);
                    if (t instanceof Tally.Rate) {
                        assertThat(back).isEqualTo(t);
                    } else if (t instanceof Tally.Ratio ratio) {
                        // The API shows units and the mean numerator and denominator, not their spreads.
                        RatioMoments m = ratio.moments();
                        RatioMoments b = ((Tally.Ratio) back).moments();
                        assertThat(b.count()).isEqualTo(m.count());
                        assertThat(b.meanX()).isEqualTo(m.meanX());
                        assertThat(b.meanY()).isEqualTo(m.meanY());
                        assertThat(b.ratio()).isEqualTo(m.ratio());
                    } else {
                        Moments m = ((Tally.Mean) t).moments();
                        Moments b = ((Tally.Mean) back).moments();
                        assertThat(b.count()).isEqualTo(m.count());
                        assertThat(b.mean()).isEqualTo(m.mean());
                        assertThat(b.standardDeviation()).isCloseTo(m.standardDeviation(), within(1e-12 * m.standardDeviation()));
                    }
                }));
            }
        }
    }

    static ExperimentView withoutTallies(ExperimentView v) {
        return new ExperimentView(v.id(), v.control(), v.treatments(), v.dryRun(), v.held(), v.holdReason(), v.sampleRatio(), v.lastLook(),
                v.exposures(), Map.of(), v.comparisons(), v.assignment());
    }

    /**
     * The API's JSON of a per-unit experiment: its assignment, the ratio tallies (units, mean
     * numerator and denominator per unit, their ratio) and, on every look, the relative change with
     * its interval. The expected relative change of the last look is computed here from the tallies
     * alone: ratio(bundle-hint) / ratio(plain) − 1.
     */
    @Test
    void theApiShowsAssignmentRatioTalliesAndTheRelativeChange() throws Exception {
        ExperimentView v = Scenarios.perUnitRatio();
        try (HttpEndpoint endpoint = api(Map.of(v.id(), v))) {
            HttpResponse<String> answer = HttpClient.newHttpClient().send(HttpRequest.newBuilder(
                    endpoint.uri().resolve("/api/experiments/ember-basket")).build(), HttpResponse.BodyHandlers.ofString());
            JsonNode n = new ObjectMapper().readTree(answer.body());
            assertThat(n.path("assignment").asText()).isEqualTo("unit");
            RatioMoments plain = ((Tally.Ratio) v.tallies().get("value-per-session").get("plain")).moments();
            RatioMoments hint = ((Tally.Ratio) v.tallies().get("value-per-session").get("bundle-hint")).moments();
            JsonNode tally = n.path("tallies").path("value-per-session").path("plain");
            assertThat(tally.path("units").asLong()).isEqualTo(4800).isEqualTo(tally.path("count").asLong());
            assertThat(tally.path("numerator_mean").asDouble()).isEqualTo(plain.meanX());
            assertThat(tally.path("denominator_mean").asDouble()).isEqualTo(plain.meanY());
            assertThat(tally.path("ratio").asDouble()).isEqualTo(plain.meanX() / plain.meanY());
            JsonNode comparison = n.path("comparisons").path(0);
            JsonNode last = comparison.path("last");
            assertThat(last.path("look").asInt()).as("the last look saw the tallies shown").isEqualTo(6);
            double byHand = hint.ratio() / plain.ratio() - 1;
            assertThat(last.path("relative").path("value").asDouble()).isCloseTo(byHand, within(1e-12));
            assertThat(last.path("relative").path("lower").asDouble()).isLessThan(byHand);
            assertThat(last.path("relative").path("upper").asDouble()).isGreaterThan(byHand);
            for (JsonNode look : comparison.path("looks")) {
                assertThat(look.path("relative").has("value")).isTrue();
            }
            JsonNode list = new ObjectMapper().readTree(HttpClient.newHttpClient().send(HttpRequest.newBuilder(
                    endpoint.uri().resolve("/api/experiments")).build(), HttpResponse.BodyHandlers.ofString()).body());
            assertThat(list.path(0).path("assignment").asText()).isEqualTo("unit");
            assertThat(list.path(0).path("comparisons").path(0).path("last").path("relative").path("value").asDouble())
                    .isCloseTo(byHand, within(1e-12));
        }
    }

    /** An answer from an older daemon, without assignment, ratio tallies or relative changes, still reads. */
    @Test
    void anOlderAnswerReadsWithPerEventAssignmentAndNoRelativeChange() throws Exception {
        String old = """
                {"id":"kolvane","control":"a","treatments":["b"],"dry_run":true,"held":false,
                 "sample_ratio":{"p_value":0.5,"mismatch":false},"exposures":{"a":10,"b":10},"tallies":{},
                 "comparisons":[{"arm":"b","metric":"m","kind":"event-mean","decision":"continue","alpha":0.05,
                   "last":{"look":1,"at":"2027-03-08T09:01:00Z","fraction":0.1,"statistic":0.5,"upper":4.0,"lower":null,
                   "alpha_spent":0.0001,"estimate":{"value":1.5,"lower":-2.0,"upper":null},"decision":"continue"}}]}
                """;
        ExperimentView v = ExperimentJson.read(new ObjectMapper().readTree(old));
        assertThat(v.assignment()).isEqualTo(Assignment.EVENT);
        LookPoint p = v.comparisons().get(0).looks().get(0);
        assertThat(p.relative()).isNaN();
        assertThat(p.relativeLower()).isNaN();
        assertThat(p.relativeUpper()).isNaN();
        assertThatThrownBy(() -> ExperimentJson.read(new ObjectMapper().readTree(old.replace("\"dry_run\"",
                "\"assignment\":\"cohort\",\"dry_run\"")))).hasMessageContaining("unknown assignment 'cohort'");
    }

    @Test
    void anUnknownExperimentIsNamedWithTheOnesThatExist() {
        try (HttpEndpoint endpoint = api(Map.of("tamsel-pricing", Scenarios.pricing()))) {
            assertThatThrownBy(() -> DaemonClient.at(endpoint.uri().toString()).experiment("tamsel-pricin"))
                    .isInstanceOf(IllegalArgumentException.class)
                    .hasMessage("the daemon at " + endpoint.uri() + " decides no experiment 'tamsel-pricin'; it decides: tamsel-pricing");
        }
    }

    @Test
    void aDaemonThatIsNotThereIsSaidToBeUnreachable() {
        String address;
        try (HttpEndpoint gone = HttpEndpoint.builder().port(0).start()) {
            address = gone.uri().toString();
        }
        assertThatThrownBy(() -> DaemonClient.at(address).experiment("tamsel-pricing"))
                .isInstanceOf(IllegalArgumentException.class)
                .hasMessage("cannot reach the daemon at " + address + " (connection refused): start it, or give its HTTP address "
                        + "(the 'http' section of its configuration) with --from");
    }

    @Test
    void somethingElseAtTheAddressIsNotMistakenForADaemon() {
        try (HttpEndpoint other = HttpEndpoint.builder().port(0).start()) {
            other.route("GET", "/api/experiments/{id}", r -> Response.text(200, "hello"));
            assertThatThrownBy(() -> DaemonClient.at(other.uri().toString()).experiment("x"))
                    .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("is not JSON");
        }
    }

    @Test
    void aMalformedAddressIsRefusedBeforeAnyRequest() {
        for (String bad : new String[] {"127.0.0.1:8080", "ftp://host:21", "http://", "http://host:8080/?x=1", ""}) {
            assertThatThrownBy(() -> DaemonClient.at(bad)).as(bad).isInstanceOf(IllegalArgumentException.class)
                    .hasMessageStartingWith("the daemon's address must be http://HOST:PORT");
        }
    }
}
