package dev.interim.dashboard;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.Tally;
import dev.interim.stats.Moments;
import dev.interim.http.ExperimentApi;
import dev.interim.http.HttpEndpoint;
import dev.interim.http.HttpEndpoint.Response;
import java.lang.reflect.Proxy;
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
    private static HttpEndpoint api(Map<String, ExperimentView> views) {
        HttpEndpoint endpoint = HttpEndpoint.builder().port(0).start();
        ExperimentApi.Operations operations = (ExperimentApi.Operations) Proxy.newProxyInstance(
                ExperimentApi.Operations.class.getClassLoader(), new Class<?>[] {ExperimentApi.Operations.class},
                (proxy, method, args) -> method.getName().equals("views") ? views
                        : CompletableFuture.failedFuture(new UnsupportedOperationException(method.getName())));
        ExperimentApi.install(endpoint, operations, Optional::empty);
        return endpoint;
    }

    @Test
    void anExperimentReadsBackIntoTheViewTheDaemonHolds() {
        Map<String, ExperimentView> views = Scenarios.invented();
        try (HttpEndpoint endpoint = api(views)) {
            DaemonClient client = DaemonClient.at(endpoint.uri() + "/");
            assertThat(client.address()).isEqualTo(endpoint.uri().toString());
            assertThat(client.experimentIds()).containsExactly("harbor-search-ranking", "lantern-onboarding", "quay-pricing");
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

    private static ExperimentView withoutTallies(ExperimentView v) {
        return new ExperimentView(v.id(), v.control(), v.treatments(), v.dryRun(), v.held(), v.holdReason(), v.sampleRatio(), v.lastLook(),
                v.exposures(), Map.of(), v.comparisons());
    }

    @Test
    void anUnknownExperimentIsNamedWithTheOnesThatExist() {
        try (HttpEndpoint endpoint = api(Map.of("quay-pricing", Scenarios.pricing()))) {
            assertThatThrownBy(() -> DaemonClient.at(endpoint.uri().toString()).experiment("quay-pricin"))
                    .isInstanceOf(IllegalArgumentException.class)
                    .hasMessage("the daemon at " + endpoint.uri() + " decides no experiment 'quay-pricin'; it decides: quay-pricing");
        }
    }

    @Test
    void aDaemonThatIsNotThereIsSaidToBeUnreachable() {
        String address;
        try (HttpEndpoint gone = HttpEndpoint.builder().port(0).start()) {
            address = gone.uri().toString();
        }
        assertThatThrownBy(() -> DaemonClient.at(address).experiment("quay-pricing"))
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
