package dev.interim.dashboard;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.ExperimentView.ComparisonView;
import dev.interim.experiment.LookPoint;
import dev.interim.experiment.SampleRatio;
import dev.interim.experiment.Tally;
import dev.interim.stats.ProportionCounts;
import dev.interim.stats.RatioMoments;
import dev.interim.http.HttpEndpoint;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Clock;
import java.time.Instant;
import java.time.ZoneOffset;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.Map;
import java.util.concurrent.atomic.AtomicReference;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.w3c.dom.Element;

/**
 * The dashboard's HTML without a browser: one card per arm × metric showing the decision of the
 * view, stops for harm called out in words, held experiments explained, every name escaped, and
 * nothing referenced outside the page. The views come from the real decision state machine on
 * invented traffic ({@link Scenarios}); what is checked is that the page says what the views say.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class DashboardPageTest {
    private static final Instant NOW = Scenarios.T0.plusSeconds(900);
    private static final Map<String, ExperimentView> VIEWS = Scenarios.invented();

    @Test
    void everyComparisonHasACardWithItsChartAndItsDecision() {
        Xhtml page = Xhtml.parse(DashboardPage.fragment(VIEWS.values(), NOW));
        List<ComparisonView> expected = new ArrayList<>();
        VIEWS.values().stream().sorted(Comparator.comparing(ExperimentView::id)).forEach(v -> expected.addAll(v.comparisons()));
        List<Element> cards = page.byClass("comparison");
        assertThat(cards).hasSize(expected.size());
        for (int i = 0; i < cards.size(); i++) {
            Element card = cards.get(i);
            ComparisonView c = expected.get(i);
            assertThat(card.getAttribute("data-arm")).isEqualTo(c.arm());
            assertThat(card.getAttribute("data-metric")).isEqualTo(c.metric());
            assertThat(card.getAttribute("data-decision")).isEqualTo(c.decision().label());
            assertThat(card.getElementsByTagName("svg").getLength()).isEqualTo(1);
            String look = c.looks().isEmpty() ? "none yet" : c.looks().get(c.looks().size() - 1).look() + " at fraction";
            assertThat(Xhtml.text(card)).contains(look);
        }
        assertThat(page.byClass("experiment")).extracting(e -> e.getAttribute("data-experiment"))
                .containsExactly("mossglint-onboarding", "tamsel-pricing", "varrow-search-ranking");
    }

    @Test
    void aStopForHarmIsCalledOutInWordsNotOnlyInColour() {
        ExperimentView onboarding = VIEWS.get("mossglint-onboarding");
        List<String> harmed = onboarding.comparisons().stream().filter(c -> c.decision() == Decision.STOP_HARM)
                .map(ComparisonView::metric).toList();
        assertThat(harmed).as("the scenario stops 'express' for harm").isNotEmpty();
        Xhtml page = Xhtml.parse(ExperimentSection.html(onboarding, 0, NOW));
        assertThat(page.byClass("alert")).singleElement().extracting(Xhtml::text)
                .isEqualTo("⚠ Stopped for harm: express on " + String.join(", ", harmed) + ".");
        for (Element card : page.byClass("comparison")) {
            boolean harm = card.getAttribute("data-decision").equals("stop-harm");
            assertThat(Xhtml.text(card).contains("STOP: HARM")).as("badge words on %s", card.getAttribute("data-metric")).isEqualTo(harm);
        }
    }

    @Test
    void eachCardShowsWhatTheLastLookCountedForItsArmAndControl() {
        ExperimentView onboarding = VIEWS.get("mossglint-onboarding");
        Xhtml page = Xhtml.parse(ExperimentSection.html(onboarding, 0, NOW));
        for (Element card : page.byClass("comparison")) {
            String metric = card.getAttribute("data-metric");
            String arm = card.getAttribute("data-arm");
            String text = Xhtml.text(card);
            for (String who : List.of(arm, "classic")) {
                Tally t = onboarding.tallies().get(metric).get(who);
                if (t instanceof Tally.Rate r) {
                    assertThat(text).contains(who + ": " + String.format(java.util.Locale.ROOT, "%,d of %,d", r.counts().successes(),
                            r.counts().trials()));
                } else {
                    assertThat(text).contains(who + ": n " + String.format(java.util.Locale.ROOT, "%,d", t.count()) + " · mean ");
                }
            }
        }
    }

    /**
     * A per-unit experiment says how arms were assigned, shows its ratio tallies per unit, and each
     * card the relative change next to the effect. The expected relative change is computed here
     * from the tallies: ratio(bundle-hint) / ratio(plain) − 1, in percent with one decimal.
     */
    @Test
    void aPerUnitExperimentShowsItsAssignmentRatiosAndTheRelativeChange() {
        ExperimentView v = Scenarios.perUnitRatio();
        Xhtml page = Xhtml.parse(ExperimentSection.html(v, 0, NOW));
        String text = Xhtml.text(page.doc.getDocumentElement());
        assertThat(text).contains("assignment", "arms assigned per unit");
        RatioMoments plain = ((Tally.Ratio) v.tallies().get("value-per-session").get("plain")).moments();
        RatioMoments hint = ((Tally.Ratio) v.tallies().get("value-per-session").get("bundle-hint")).moments();
        assertThat(text).contains("plain: 4,800 units · ratio ", "bundle-hint: 4,800 units · ratio ");
        String card = Xhtml.text(page.byClass("comparison").get(0));
        double byHand = hint.ratio() / plain.ratio() - 1;
        String percent = String.format(java.util.Locale.ROOT, "%+.1f%%", 100 * byHand);
        assertThat(card).contains("relative change (95% repeated CI)", percent + " [");
        ExperimentView perEvent = VIEWS.get("mossglint-onboarding");
        assertThat(Xhtml.text(Xhtml.parse(ExperimentSection.html(perEvent, 0, NOW)).doc.getDocumentElement()))
                .contains("arms assigned per event");
    }

    @Test
    void aComparisonThatCouldNotLookYetSaysWhy() {
        ExperimentView v = Scenarios.perUnitRatio();
        ComparisonView c = v.comparisons().get(0);
        ComparisonView waiting = new ComparisonView(c.arm(), c.metric(), c.kind(), c.role(), c.worse(), c.action(), c.alpha(),
                c.alternative(), c.spending(), c.decision(), List.of(), "no variance yet: every event so far is a failure in both arms");
        ExperimentView w = new ExperimentView(v.id(), v.control(), v.treatments(), v.dryRun(), v.held(), v.holdReason(),
                v.sampleRatio(), v.lastLook(), v.exposures(), v.tallies(), List.of(waiting), v.assignment());
        String card = Xhtml.text(Xhtml.parse(ExperimentSection.html(w, 0, NOW)).byClass("comparison").get(0));
        assertThat(card).contains("none yet: no variance yet: every event so far is a failure in both arms");
    }

    /**
     * A tiny sample-ratio p-value reads like a number ({@code 2.6e-24}), never as a row of zeros; the
     * replay and the report use the same words ({@code dev.interim.text.Numbers.pValue}). Common practice.
     */
    @Test
    void aTinySampleRatioPValueIsWrittenWithAnExponent() {
        ExperimentView v = Scenarios.perUnitRatio();
        ExperimentView w = new ExperimentView(v.id(), v.control(), v.treatments(), v.dryRun(), true, "sample-ratio mismatch",
                new SampleRatio(2.62e-24, true), v.lastLook(), v.exposures(), v.tallies(), v.comparisons(), v.assignment());
        String text = Xhtml.text(Xhtml.parse(ExperimentSection.html(w, 0, NOW)).doc.getDocumentElement());
        assertThat(text).contains("p = 2.6e-24 — MISMATCH").doesNotContain("0.0000000");
    }

    /** The relative change in words; the numbers are chosen by hand, so the expected texts are too. */
    @Test
    void theRelativeChangeReadsAsAPercentWithItsInterval() {
        // relative 0.041 = +4.1%, interval [0.003, 0.082] = [+0.3%, +8.2%]
        assertThat(Wording.relative(point(0.041, 0.003, 0.082))).isEqualTo("+4.1% [+0.3%, +8.2%]");
        // a one-sided interval open above; a decrease
        assertThat(Wording.relative(point(-0.125, -0.2, Double.POSITIVE_INFINITY))).isEqualTo("-12.5% [-20.0%, ∞)");
        // open below: exp(−∞) − 1 = −1
        assertThat(Wording.relative(point(0.02, -1, 0.05))).isEqualTo("+2.0% (-100%, +5.0%]");
        // undefined (a level that is not positive): a dash
        assertThat(Wording.relative(point(Double.NaN, Double.NaN, Double.NaN))).isEqualTo("–");
        assertThat(Wording.percent(0.0004)).isEqualTo("0.0%");
    }

    private static LookPoint point(double relative, double lower, double upper) {
        return new LookPoint(1, NOW, 0.5, 1.0, 3.0, -3.0, 0.001, 0.5, -0.1, 1.1, Decision.CONTINUE, relative, lower, upper);
    }

    @Test
    void aHeldExperimentSaysThatItIsHeldAndWhy() {
        ExperimentView held = VIEWS.get("varrow-search-ranking");
        assertThat(held.held()).isTrue();
        String text = Xhtml.text(Xhtml.parse(ExperimentSection.html(held, 0, NOW)).doc.getDocumentElement());
        assertThat(text).contains("HELD", "SAMPLE-RATIO MISMATCH", "MISMATCH: the split is not as configured; decisions held",
                "Held: automated decisions are suspended (sample-ratio mismatch)", "12,000", "4,080", "74.6%", "25.4%");
    }

    @Test
    void namesAndReasonsFromOutsideAreEscaped() {
        String evil = "<img src=x onerror=\"alert('x')\">&amp;";
        ComparisonView c = new ComparisonView(evil, evil, "event-rate", "guardrail", "higher", "kill", 0.05, "greater", "obf",
                Decision.HELD, List.of());
        ExperimentView v = new ExperimentView(evil, evil, List.of(evil), false, true, evil, new SampleRatio(0.5, false), NOW,
                Map.of(evil, 12L), Map.of(evil, Map.of(evil, new Tally.Rate(new ProportionCounts(1, 12)))), List.of(c));
        String html = DashboardPage.fragment(List.of(v), NOW);
        assertThat(html).doesNotContain("<img").doesNotContain("onerror=\"");
        Xhtml page = Xhtml.parse(html);
        assertThat(page.all("//img")).isEmpty();
        assertThat(page.byClass("experiment").get(0).getAttribute("data-experiment")).isEqualTo(evil);
        assertThat(Xhtml.text(page.byClass("held-note").get(0))).contains(evil);
    }

    @Test
    void thePageReferencesNothingOutsideItself() {
        String page = DashboardPage.page(VIEWS.values(), NOW);
        Matcher http = Pattern.compile("https?://[^\"'\\s<)]*").matcher(page);
        while (http.find()) {
            assertThat(http.group()).as("the only address is the SVG namespace").isEqualTo("http://www.w3.org/2000/svg");
        }
        assertThat(page).doesNotContainPattern("\\ssrc=").doesNotContain("rel=\"stylesheet\"").doesNotContain("@import")
                .contains("<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none';")
                .contains("<noscript><meta http-equiv=\"refresh\" content=\"5\"></noscript>")
                .contains("fetch('dashboard/fragment'");
        Xhtml.body(page);
    }

    @Test
    void anInstanceWithoutExperimentsSaysSo() {
        assertThat(DashboardPage.page(List.of(), NOW)).contains("No experiment is decided by this instance yet",
                "0 experiments · no stop for harm");
    }

    @Test
    void theRoutesServeTheViewsOfTheMoment() throws Exception {
        AtomicReference<Map<String, ExperimentView>> now = new AtomicReference<>(Map.of());
        HttpClient client = HttpClient.newHttpClient();
        try (HttpEndpoint endpoint = HttpEndpoint.builder().port(0).start()) {
            Dashboard.install(endpoint, now::get, Clock.fixed(NOW, ZoneOffset.UTC));
            URI base = endpoint.uri();
            HttpResponse<String> empty = client.send(HttpRequest.newBuilder(base.resolve("/dashboard")).build(),
                    HttpResponse.BodyHandlers.ofString());
            assertThat(empty.statusCode()).isEqualTo(200);
            assertThat(empty.headers().firstValue("Content-Type")).hasValue("text/html; charset=utf-8");
            assertThat(empty.body()).contains("0 experiments");
            now.set(Map.of("tamsel-pricing", VIEWS.get("tamsel-pricing")));
            HttpResponse<String> fragment = client.send(HttpRequest.newBuilder(base.resolve("/dashboard/fragment")).build(),
                    HttpResponse.BodyHandlers.ofString());
            assertThat(fragment.statusCode()).isEqualTo(200);
            assertThat(fragment.body()).contains("data-experiment=\"tamsel-pricing\"", "as of 2027-03-08 09:15:00 UTC")
                    .doesNotContain("<html");
            assertThat(client.send(HttpRequest.newBuilder(base.resolve("/dashboard")).POST(HttpRequest.BodyPublishers.noBody()).build(),
                    HttpResponse.BodyHandlers.ofString()).statusCode()).isEqualTo(405);
        }
    }
}
