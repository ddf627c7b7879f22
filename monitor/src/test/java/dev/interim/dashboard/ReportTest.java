package dev.interim.dashboard;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.ExperimentView.ComparisonView;
import dev.interim.experiment.LookPoint;
import dev.interim.experiment.SampleRatio;
import dev.interim.experiment.Tally;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.w3c.dom.Element;

/**
 * The post-mortem report of an experiment decided by the real state machine on invented traffic
 * ({@link Scenarios}): it must state the design of each comparison, the look that made each final
 * decision (found here independently, from the look history), the effect with its repeated
 * confidence interval, and hold a chart per comparison — all in one file that needs nothing else.
 */
class ReportTest {
    private static final Instant GENERATED = Instant.parse("2027-03-09T08:00:00Z");
    private static final ExperimentView ONBOARDING = Scenarios.onboarding();

    @Test
    void theOutcomeNamesTheLookThatMadeEachFinalDecision() {
        Xhtml report = Xhtml.body(Report.html(ONBOARDING, "http://127.0.0.1:8080", GENERATED));
        List<Element> rows = report.all("//table[@class='summary']/tbody/tr");
        assertThat(rows).hasSize(ONBOARDING.comparisons().size());
        for (int i = 0; i < rows.size(); i++) {
            ComparisonView c = ONBOARDING.comparisons().get(i);
            String row = Xhtml.text(rows.get(i));
            assertThat(rows.get(i).getAttribute("data-arm")).isEqualTo(c.arm());
            if (c.decision().isFinal()) {
                LookPoint first = null;
                for (LookPoint p : c.looks()) {
                    if (p.decision() == c.decision()) {
                        first = p;
                        break;
                    }
                }
                assertThat(row).contains("look " + first.look() + ", fraction");
                // A stop is absorbing: the deciding look is the last one taken.
                assertThat(first).isEqualTo(c.looks().get(c.looks().size() - 1));
            } else {
                assertThat(row).contains("not decided; last look " + c.looks().get(c.looks().size() - 1).look());
            }
            assertThat(row).contains("97.5%");
        }
        assertThat(report.all("//table[@class='summary']//*[@data-decision='stop-harm']")).hasSizeGreaterThanOrEqualTo(1);
    }

    @Test
    void theDesignOfEachComparisonIsWrittenOut() {
        Xhtml report = Xhtml.body(Report.html(ONBOARDING, null, GENERATED));
        List<Element> rows = report.all("//table[@class='design']/tbody/tr");
        assertThat(rows).hasSize(ONBOARDING.comparisons().size());
        String errors = Xhtml.text(rows.get(0));
        assertThat(errors).contains("guided", "signup-errors", "event-rate", "guardrail", "0.025",
                "one-sided: rejects when the treatment is higher (harm)", "O'Brien–Fleming-type α spending (Lan–DeMets)", "kill");
        String latency = Xhtml.text(rows.get(2));
        assertThat(latency).contains("first-task-seconds", "Pocock-type α spending (Lan–DeMets)", "page");
        String activated = Xhtml.text(rows.get(4));
        assertThat(activated).contains("two-sided: rejects either way (higher: benefit, lower: harm), α shared equally between the sides");
        assertThat(Xhtml.text(report.doc.getDocumentElement())).contains("shared equally among the 2 treatments (Bonferroni)");
    }

    @Test
    void everyComparisonHasItsChartAndItsLookTable() {
        Xhtml report = Xhtml.body(Report.html(ONBOARDING, null, GENERATED));
        assertThat(report.all("//*[local-name()='svg']")).hasSize(ONBOARDING.comparisons().size());
        assertThat(report.all("//table[@class='history']")).hasSize(ONBOARDING.comparisons().size());
        for (int i = 0; i < ONBOARDING.comparisons().size(); i++) {
            ComparisonView c = ONBOARDING.comparisons().get(i);
            List<Element> rows = report.all("(//table[@class='history'])[" + (i + 1) + "]/tbody/tr");
            assertThat(rows).as("rows of %s %s", c.arm(), c.metric()).hasSize(c.looks().size());
            Element last = rows.get(rows.size() - 1);
            assertThat(last.getElementsByTagName("td").item(0).getTextContent())
                    .isEqualTo(String.valueOf(c.looks().get(c.looks().size() - 1).look()));
            int cells = last.getElementsByTagName("td").getLength();
            assertThat(last.getElementsByTagName("td").item(cells - 1).getTextContent())
                    .isEqualTo(c.looks().get(c.looks().size() - 1).decision().label());
        }
    }

    @Test
    void theLookTableHasAColumnPerBoundaryTheDesignHas() {
        Xhtml report = Xhtml.body(Report.html(ONBOARDING, null, GENERATED));
        List<Element> heads = report.all("//table[@class='history']/thead/tr");
        // guided · signup-errors: a one-sided harm guardrail, no futility; guided · activated: two-sided.
        assertThat(Xhtml.text(heads.get(0))).contains("upper (harm)").doesNotContain("lower");
        assertThat(Xhtml.text(heads.get(4))).contains("upper (benefit)", "lower (harm)");
        Xhtml pricing = Xhtml.body(Report.html(Scenarios.pricing(), null, GENERATED));
        assertThat(Xhtml.text(pricing.all("//table[@class='history']/thead/tr").get(0))).contains("upper (benefit)", "lower (futility)");
    }

    @Test
    void effectsOfRatesAreInPercentagePointsWithTheirRepeatedInterval() {
        ComparisonView c = new ComparisonView("b", "errors", "event-rate", "guardrail", "higher", "kill", 0.025, "greater", "obf",
                Decision.STOP_HARM, List.of(new LookPoint(3, GENERATED, 0.3, 4.2, 3.9, Double.NEGATIVE_INFINITY, 0.0012, 0.0142,
                        0.0061, Double.POSITIVE_INFINITY, Decision.STOP_HARM)));
        String row = Xhtml.text(Xhtml.body(Report.html(view(List.of(c)), null, GENERATED)).all("//table[@class='summary']/tbody/tr").get(0));
        // 0.0142 = +1.42 percentage points; the one-sided interval is open above.
        assertThat(row).contains("+1.42 pp", "[0.610, ∞) pp", "97.5%", "4.200", "3.90 (harm)");
    }

    /**
     * The outcome and the look table show the relative change next to the effect. Numbers chosen by
     * hand: treatment 1.042% against control 1.000% is 1.042/1.000 − 1 = +4.2%.
     */
    @Test
    void theRelativeChangeIsShownInPercentWithItsInterval() {
        LookPoint p = new LookPoint(3, GENERATED, 0.3, 2.1, 3.9, Double.NEGATIVE_INFINITY, 0.0012, 0.00042, -0.0001,
                Double.POSITIVE_INFINITY, Decision.CONTINUE, 0.01042 / 0.01 - 1, -0.011, Double.POSITIVE_INFINITY);
        ComparisonView c = new ComparisonView("b", "errors", "event-rate", "guardrail", "higher", "kill", 0.025, "greater", "obf",
                Decision.CONTINUE, List.of(p));
        Xhtml report = Xhtml.body(Report.html(view(List.of(c)), null, GENERATED));
        assertThat(Xhtml.text(report.all("//table[@class='summary']/tbody/tr").get(0))).contains("+4.2% [-1.1%, ∞)");
        assertThat(Xhtml.text(report.all("//table[@class='summary']/thead/tr").get(0))).contains("relative change (repeated CI)");
        assertThat(Xhtml.text(report.all("//table[@class='history']/tbody/tr").get(0))).contains("+4.2% [-1.1%, ∞)");
        ComparisonView none = new ComparisonView("b", "errors", "event-mean", "guardrail", "higher", "kill", 0.025, "greater", "obf",
                Decision.CONTINUE, List.of(new LookPoint(1, GENERATED, 0.1, 0.4, 6.1, Double.NEGATIVE_INFINITY, 1e-6, 0.001, -0.01,
                        Double.POSITIVE_INFINITY, Decision.CONTINUE)));
        Element row = Xhtml.body(Report.html(view(List.of(none)), null, GENERATED)).all("//table[@class='summary']/tbody/tr").get(0);
        // Without a relative change the cell before the level holds a dash.
        int n = row.getElementsByTagName("td").getLength();
        assertThat(row.getElementsByTagName("td").item(n - 2).getTextContent()).isEqualTo("–");
        Xhtml unit = Xhtml.body(Report.html(Scenarios.perUnitRatio(), null, GENERATED));
        assertThat(Xhtml.text(unit.doc.getDocumentElement())).contains("arms assigned per unit", "4,800 units · ratio ");
    }

    @Test
    void aStopThatNoLookMadeIsSaidToBeAnOperatorsOrOlder() {
        ComparisonView c = new ComparisonView("b", "errors", "event-rate", "guardrail", "higher", "kill", 0.025, "greater", "obf",
                Decision.STOP_HARM, List.of(new LookPoint(1, GENERATED, 0.1, 0.4, 6.1, Double.NEGATIVE_INFINITY, 1e-6, 0.001, -0.01,
                        Double.POSITIVE_INFINITY, Decision.CONTINUE)));
        String row = Xhtml.text(Xhtml.body(Report.html(view(List.of(c)), null, GENERATED)).all("//table[@class='summary']/tbody/tr").get(0));
        assertThat(row).contains("STOP: HARM", "not at a look shown: an operator's stop, or decided before a restart");
    }

    @Test
    void theCountsOfTheLastLookAreListedPerMetricAndArm() {
        Xhtml report = Xhtml.body(Report.html(ONBOARDING, null, GENERATED));
        List<Element> rows = report.all("//table[@class='summary counts']/tbody/tr");
        assertThat(rows).extracting(r -> r.getElementsByTagName("td").item(0).getTextContent())
                .containsExactly("signup-errors", "first-task-seconds", "activated");
        Tally.Rate express = (Tally.Rate) ONBOARDING.tallies().get("signup-errors").get("express");
        assertThat(rows.get(0).getElementsByTagName("td").item(3).getTextContent())
                .startsWith(String.format(java.util.Locale.ROOT, "%,d of %,d (", express.counts().successes(), express.counts().trials()));
    }

    @Test
    void theFileNeedsNothingElse(@TempDir Path dir) throws Exception {
        Path file = dir.resolve("report.html");
        Report.write(ONBOARDING, file, "replay of tuesday.ndjson", GENERATED);
        String html = Files.readString(file, StandardCharsets.UTF_8);
        assertThat(html).startsWith("<!DOCTYPE html>").contains("<title>Interim report · mossglint-onboarding</title>",
                "generated 2027-03-09 08:00:00 UTC from replay of tuesday.ndjson", "script-src 'none'").doesNotContain("<script");
        Matcher http = Pattern.compile("https?://[^\"'\\s<)]*").matcher(html);
        while (http.find()) {
            assertThat(http.group()).isEqualTo("http://www.w3.org/2000/svg");
        }
        assertThat(html).doesNotContainPattern("\\ssrc=");
    }

    @Test
    void aLongHistoryIsShortenedInTheTableButDrawnInFull() {
        List<LookPoint> looks = new ArrayList<>();
        for (int k = 1; k <= 500; k++) {
            Decision d = k < 300 ? Decision.CONTINUE : k < 320 ? Decision.HELD : Decision.CONTINUE;
            looks.add(new LookPoint(k, GENERATED.plusSeconds(k), k / 1000.0, 0.5, 30 / Math.sqrt(k), Double.NEGATIVE_INFINITY, 1e-6 * k,
                    0.001, -0.01, Double.POSITIVE_INFINITY, d));
        }
        ComparisonView c = new ComparisonView("b", "errors", "event-rate", "guardrail", "higher", "kill", 0.025, "greater", "obf",
                Decision.CONTINUE, looks);
        // The first look, the two changes (to held at 300, back at 320) and the last 30.
        assertThat(Report.shown(looks)).extracting(LookPoint::look).startsWith(1, 300, 320, 471).endsWith(500).hasSize(33);
        Xhtml report = Xhtml.body(Report.html(view(List.of(c)), null, GENERATED));
        assertThat(report.all("//table[@class='history']/tbody/tr")).hasSize(33);
        assertThat(report.all("//table[@class='history']/tbody/tr[@class='changed']")).hasSize(2);
        assertThat(report.byClass("statistic").get(0).getAttribute("data-points")).isEqualTo("500");
        assertThat(report.byClass("current-look").get(0).getAttribute("data-look")).isEqualTo("500");
        assertThat(Xhtml.text(report.doc.getDocumentElement())).contains("500 looks; the table shows 33");
    }

    /** The report's facts write a tiny sample-ratio p-value as the dashboard and the replay do (common practice). */
    @Test
    void aTinySampleRatioPValueIsWrittenWithAnExponent() {
        ExperimentView v = new ExperimentView("kolvane-render", "a", List.of("b"), true, true, "sample-ratio mismatch",
                new SampleRatio(2.62e-24, true), GENERATED, Map.of("a", 1000L, "b", 700L), Map.of(), List.of());
        String text = Xhtml.text(Xhtml.body(Report.html(v, null, GENERATED)).doc.getDocumentElement());
        assertThat(text).contains("p = 2.6e-24").doesNotContain("0.0000000");
    }

    private static ExperimentView view(List<ComparisonView> comparisons) {
        return new ExperimentView("kolvane-render", "a", List.of("b"), true, false, null, new SampleRatio(0.4, false), GENERATED,
                Map.of("a", 1000L, "b", 990L), Map.of(), comparisons);
    }
}
