package dev.interim.dashboard;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.ExperimentView.ComparisonView;
import dev.interim.experiment.Tally;
import dev.interim.http.HttpEndpoint;
import dev.interim.stats.HistogramCounts;
import dev.interim.text.Numbers;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Instant;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.w3c.dom.Element;

/**
 * A p99 guardrail on every surface that shows an experiment: the JSON API (each arm's count and
 * quantile, the buckets to rebuild it; an arm without values), the report read back from that JSON,
 * the dashboard's cards and the report (the metric named "p99 render-ms", the arms' quantiles, and
 * what a quantile that cannot be estimated yet waits for). Traffic from {@link Scenarios#quantile}.
 */
// Source: an arm's quantile is checked against an exact computation (a sort of the values counted), to
// within HdrHistogram's bucket width for 2 significant digits (1/128 of the value, its documentation);
// the rest comes from what this test configures (its own ground truth).
class QuantileViewsTest {
    private static final Instant NOW = Scenarios.T0.plusSeconds(900);
    private static final ObjectMapper JSON = new ObjectMapper();
    /** 8 looks of 1,000 renders per arm: the p99 is estimated from the 5th look on. */
    private static final Scenarios.QuantileScenario LATE = Scenarios.quantile(8, 1_000);
    /** 3 looks of 1,000: 3,000 per arm, below the 5,000 a p99 needs. */
    private static final Scenarios.QuantileScenario EARLY = Scenarios.quantile(3, 1_000);

    private static JsonNode get(HttpEndpoint endpoint, String path) throws Exception {
        HttpResponse<String> answer = HttpClient.newHttpClient().send(HttpRequest.newBuilder(endpoint.uri().resolve(path)).build(),
                HttpResponse.BodyHandlers.ofString());
        assertThat(answer.statusCode()).isEqualTo(200);
        return JSON.readTree(answer.body());
    }

    private static HistogramCounts counts(ExperimentView v, String arm) {
        return ((Tally.Quantile) v.tallies().get("render-ms").get(arm)).counts();
    }

    /** The value at rank ⌈p·n⌉ of {@code values} (exact: a sort). */
    private static double sorted(double[] values, double p) {
        double[] s = values.clone();
        Arrays.sort(s);
        return s[(int) Math.ceil(p * s.length) - 1];
    }

    @Test
    void theApiShowsEachArmsCountAndQuantileAndAnArmWithoutValues() throws Exception {
        ExperimentView v = LATE.view();
        try (HttpEndpoint endpoint = DaemonClientTest.api(Map.of(v.id(), v))) {
            JsonNode one = get(endpoint, "/api/experiments/wicken-render");
            for (String arm : List.of("v1", "v2")) {
                JsonNode t = one.at("/tallies/render-ms/" + arm);
                assertThat(t.path("kind").asText()).isEqualTo("quantile");
                assertThat(t.path("count").asLong()).isEqualTo(8_000);
                assertThat(t.path("quantile").asDouble()).isEqualTo(0.99);
                double value = t.path("value").asDouble();
                assertThat(value).isEqualTo(counts(v, arm).quantile(0.99));
                double exact = sorted(LATE.values().get(arm), 0.99);
                assertThat(value).as(arm).isCloseTo(exact, within(exact * HistogramCounts.RELATIVE_PRECISION));
                long inBuckets = 0;
                for (JsonNode b : t.path("buckets")) {
                    inBuckets += b.get(1).asLong();
                }
                assertThat(inBuckets).isEqualTo(8_000);
            }
            JsonNode none = one.at("/tallies/render-ms/v3");
            assertThat(none.path("kind").asText()).isEqualTo("quantile");
            assertThat(none.path("count").asLong()).isZero();
            assertThat(none.path("value").isNull()).isTrue();
            assertThat(none.path("buckets").size()).isZero();
            JsonNode comparison = one.at("/comparisons/0");
            assertThat(comparison.path("kind").asText()).isEqualTo("event-quantile");
            assertThat(comparison.path("quantile").asDouble()).isEqualTo(0.99);

            // The list of experiments shows the quantile too, without the buckets.
            JsonNode listed = get(endpoint, "/api/experiments").get(0).at("/tallies/render-ms/v2");
            assertThat(listed.path("value").asDouble()).isEqualTo(counts(v, "v2").quantile(0.99));
            assertThat(listed.has("buckets")).isFalse();
        }
    }

    @Test
    void anArmWhoseQuantileIsNotEstimableYetStillShowsItsValue() throws Exception {
        ExperimentView v = EARLY.view();
        assertThat(v.comparisons()).allMatch(c -> c.looks().isEmpty());
        try (HttpEndpoint endpoint = DaemonClientTest.api(Map.of(v.id(), v))) {
            JsonNode t = get(endpoint, "/api/experiments/wicken-render").at("/tallies/render-ms/v2");
            assertThat(t.path("count").asLong()).isEqualTo(3_000);
            double exact = sorted(EARLY.values().get("v2"), 0.99);
            assertThat(t.path("value").asDouble()).isCloseTo(exact, within(exact * HistogramCounts.RELATIVE_PRECISION));
        }
    }

    @Test
    void theJsonReadsBackIntoTheSameQuantiles() {
        for (ExperimentView v : List.of(LATE.view(), EARLY.view())) {
            try (HttpEndpoint endpoint = DaemonClientTest.api(Map.of(v.id(), v))) {
                ExperimentView read = DaemonClient.at(endpoint.uri().toString()).experiment(v.id());
                assertThat(DaemonClientTest.withoutTallies(read)).isEqualTo(DaemonClientTest.withoutTallies(v));
                assertThat(read.comparisons()).extracting(ComparisonView::quantile).containsOnly(0.99);
                for (String arm : List.of("v1", "v2", "v3")) {
                    HistogramCounts back = counts(read, arm);
                    HistogramCounts original = counts(v, arm);
                    assertThat(back.count()).isEqualTo(original.count());
                    if (original.count() > 0) {
                        for (double p : new double[] {0.5, 0.9, 0.99, 0.999}) {
                            assertThat(back.quantile(p)).as(arm + " at " + p).isEqualTo(original.quantile(p));
                        }
                    }
                }
                // So the report made from the daemon's JSON is the one made in-process.
                assertThat(Report.html(read, "x", NOW)).isEqualTo(Report.html(v, "x", NOW));
            }
        }
    }

    @Test
    void theCardsNameThePercentileShowTheArmsQuantilesAndTheStop() {
        ExperimentView v = LATE.view();
        ComparisonView slow = v.comparisons().stream().filter(c -> c.arm().equals("v2")).findFirst().orElseThrow();
        assertThat(slow.decision()).as("the slow path is stopped for harm").isEqualTo(Decision.STOP_HARM);
        Xhtml page = Xhtml.parse(DashboardPage.fragment(List.of(v), NOW));
        Element card = page.all("//*[@data-arm='v2' and @data-metric='render-ms']").get(0);
        String text = Xhtml.text(card);
        assertThat(text).contains("v2 vs v1 · p99 render-ms", "guardrail · event-quantile 0.99 · higher is worse",
                "v2: n 8,000 · p99 " + Numbers.precise(counts(v, "v2").quantile(0.99), 3),
                "v1: n 8,000 · p99 " + Numbers.precise(counts(v, "v1").quantile(0.99), 3));
        assertThat(Xhtml.text(page.byClass("alert").get(0))).contains("Stopped for harm: v2 on p99 render-ms.");
        assertThat(Xhtml.text(card.getElementsByTagName("svg").item(0) instanceof Element svg ? svg : card))
                .contains("v2 · p99 render-ms · stop-harm", "Group-sequential chart of v2 on p99 render-ms");
        Element empty = page.all("//*[@data-arm='v3' and @data-metric='render-ms']").get(0);
        assertThat(Xhtml.text(empty)).contains("v3: n 0", "none yet: too few observations");
    }

    @Test
    void aQuantileThatCannotBeEstimatedYetSaysWhatItWaitsFor() {
        ExperimentView v = EARLY.view();
        Xhtml page = Xhtml.parse(DashboardPage.fragment(List.of(v), NOW));
        Element card = page.all("//*[@data-arm='v2' and @data-metric='render-ms']").get(0);
        assertThat(Xhtml.text(card)).contains("none yet: waiting for 50 values beyond the p99 in each arm (5,000 events per arm):"
                + " v2 has 3,000, v1 3,000");

        Xhtml report = Xhtml.body(Report.html(v, null, NOW));
        String outcome = Xhtml.text(report.all("//table[@class='summary']/tbody/tr[@data-arm='v2']").get(0));
        assertThat(outcome).contains("p99 render-ms", "no look: waiting for 50 values beyond the p99 in each arm");
        String design = Xhtml.text(report.all("//table[@class='design']/tbody/tr").get(0));
        assertThat(design).contains("render-ms", "event-quantile 0.99");
        String counted = Xhtml.text(report.all("//table[contains(@class,'counts')]/tbody/tr").get(0));
        assertThat(counted).contains("n 3,000 · p99 " + Numbers.precise(counts(v, "v2").quantile(0.99), 3), "n 0");
    }
}
