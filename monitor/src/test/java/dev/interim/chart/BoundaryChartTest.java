package dev.interim.chart;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentView.ComparisonView;
import dev.interim.experiment.LookPoint;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.w3c.dom.Element;

/**
 * The boundary chart read back as XML: every point must sit where the chart's own tick labels say
 * its value is, boundaries must be drawn only where they are finite, and whatever is not drawn must
 * be said. The looks are invented numbers (no statistical claim is made here); the reference for
 * positions is the axes of the picture, interpolated linearly between two tick labels.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class BoundaryChartTest {
    private static final Instant T0 = Instant.parse("2027-01-04T10:00:00Z");
    private static final double INF = Double.POSITIVE_INFINITY;
    /** Coordinates are written to 0.1 px and tick labels sit 4 px below their tick, also to 0.1 px. */
    private static final double PIXEL = 0.25;

    static LookPoint look(int n, double fraction, double z, double upper, double lower, Decision d) {
        return new LookPoint(n, T0.plusSeconds(60L * n), fraction, z, upper, lower, 0.001 * n, 0.01, -0.01, 0.03, d);
    }

    static ComparisonView comparison(String arm, String alternative, String worse, Decision decision, List<LookPoint> looks) {
        return new ComparisonView(arm, "errors", "event-rate", "guardrail", worse, "kill", 0.025, alternative, "obf", decision, looks);
    }

    /** A one-sided harm guardrail whose statistic crosses at the fourth look. */
    static ComparisonView crossing() {
        return comparison("treatment", "greater", "higher", Decision.STOP_HARM, List.of(
                look(1, 0.2, 0.5, 3.9, -INF, Decision.CONTINUE),
                look(2, 0.4, 1.2, 3.4, -INF, Decision.CONTINUE),
                look(3, 0.6, 2.1, 3.1, -INF, Decision.CONTINUE),
                look(4, 0.8, 2.9, 2.8, -INF, Decision.STOP_HARM)));
    }

    @Test
    void everyPointSitsWhereTheAxesSayItsValueIs() {
        ComparisonView c = crossing();
        Svg svg = Svg.parse(BoundaryChart.svg(c, "t1"));
        List<double[]> statistic = Svg.points(svg.one("statistic").getAttribute("d"));
        List<double[]> upper = Svg.points(svg.one("boundary-upper").getAttribute("d"));
        assertThat(statistic).hasSize(4);
        assertThat(upper).hasSize(4);
        List<double[]> xTicks = svg.ticks("axis-x");
        List<double[]> yTicks = svg.ticks("axis-y");
        for (int i = 0; i < 4; i++) {
            LookPoint p = c.looks().get(i);
            assertThat(statistic.get(i)[0]).as("x of look %d", p.look()).isCloseTo(interpolate(xTicks, p.fraction()), within(PIXEL));
            assertThat(statistic.get(i)[1]).as("y of Z at look %d", p.look()).isCloseTo(interpolate(yTicks, p.statistic()), within(PIXEL));
            assertThat(upper.get(i)[1]).as("y of the boundary at look %d", p.look()).isCloseTo(interpolate(yTicks, p.upper()), within(PIXEL));
        }
        assertThat(statistic.get(0)[2]).isEqualTo(1);
        assertThat(statistic.subList(1, 4)).allSatisfy(p -> assertThat(p[2]).isZero());
        Element zero = svg.one("zero");
        assertThat(Double.parseDouble(zero.getAttribute("y1"))).isCloseTo(interpolate(yTicks, 0), within(PIXEL));
        // The fraction axis ends at 1, the planned maximum, once the looks are past 0.6 of it.
        assertThat(xTicks.get(xTicks.size() - 1)[0]).isEqualTo(1.0);
        assertThat(xTicks.get(0)[0]).isEqualTo(0.0);
    }

    @Test
    void theCurrentLookIsRingedAndLabelled() {
        Svg svg = Svg.parse(BoundaryChart.svg(crossing(), "t2"));
        Element current = svg.one("current-look");
        assertThat(current.getAttribute("data-look")).isEqualTo("4");
        List<double[]> statistic = Svg.points(svg.one("statistic").getAttribute("d"));
        Element ring = (Element) current.getElementsByTagNameNS("*", "circle").item(0);
        assertThat(Double.parseDouble(ring.getAttribute("cx"))).isEqualTo(statistic.get(3)[0]);
        assertThat(Double.parseDouble(ring.getAttribute("cy"))).isEqualTo(statistic.get(3)[1]);
        assertThat(current.getTextContent()).isEqualTo("now: look 4, Z 2.90");
    }

    @Test
    void titleAndDescriptionNameTheComparisonAndAreReferenced() {
        Svg svg = Svg.parse(BoundaryChart.svg(crossing(), "t3"));
        Element root = svg.doc.getDocumentElement();
        assertThat(root.getAttribute("role")).isEqualTo("img");
        assertThat(root.getAttribute("aria-labelledby")).isEqualTo("t3-title t3-desc");
        assertThat(svg.xpath("//*[@id='t3-title']").get(0).getTextContent()).isEqualTo("treatment · errors · stop-harm");
        String desc = svg.xpath("//*[@id='t3-desc']").get(0).getTextContent();
        assertThat(desc).contains("4 looks", "Current look 4", "Z = 2.90", "upper boundary (harm) 2.80", "Decision: stop-harm",
                "one-sided");
        assertThat(svg.one("chart-title").getTextContent()).isEqualTo("treatment · errors · stop-harm");
    }

    @Test
    void aOneSidedDesignWithoutFutilityHasNoLowerLine() {
        Svg svg = Svg.parse(BoundaryChart.svg(crossing(), "t4"));
        assertThat(svg.byClass("boundary-lower")).isEmpty();
        assertThat(svg.one("boundary-upper").getAttribute("class")).contains("boundary-harm");
        assertThat(svg.one("legend").getTextContent()).contains("harm boundary").doesNotContain("futility");
        assertThat(svg.byClass("chart-note")).isEmpty();
    }

    @Test
    void anInfiniteBoundaryIsLeftOutAndTheChartSaysSo() {
        ComparisonView c = comparison("treatment", "greater", "higher", Decision.CONTINUE, List.of(
                look(1, 0.01, 0.3, INF, -INF, Decision.CONTINUE),
                look(2, 0.02, 0.8, INF, -INF, Decision.CONTINUE),
                look(3, 0.05, 1.1, 8.5, -INF, Decision.CONTINUE),
                look(4, 0.10, 0.9, 6.1, -INF, Decision.CONTINUE)));
        String text = BoundaryChart.svg(c, "t5");
        Svg svg = Svg.parse(text);
        Element upper = svg.one("boundary-upper");
        List<double[]> points = Svg.points(upper.getAttribute("d"));
        assertThat(points).hasSize(2);
        assertThat(upper.getAttribute("data-points")).isEqualTo("2");
        List<double[]> statistic = Svg.points(svg.one("statistic").getAttribute("d"));
        assertThat(points.get(0)[0]).as("the line starts at look 3").isEqualTo(statistic.get(2)[0]);
        assertThat(notes(svg)).contains("harm boundary infinite at 2 looks (up to fraction 0.02; no α spent yet): not drawn there");
        assertThat(text).doesNotContain("Infinity").doesNotContain("NaN");
    }

    @Test
    void aRejectingBoundaryThatIsInfiniteEverywhereIsSaidToBeMissing() {
        ComparisonView c = comparison("treatment", "greater", "higher", Decision.CONTINUE, List.of(
                look(1, 0.001, 0.3, INF, -INF, Decision.CONTINUE)));
        Svg svg = Svg.parse(BoundaryChart.svg(c, "t6"));
        assertThat(svg.byClass("boundary")).isEmpty();
        assertThat(notes(svg)).contains("no finite harm boundary yet (no α spent so far): none drawn");
    }

    @Test
    void aBoundaryFarAboveTheStatisticIsCutAtTheEdgeOfThePlot() {
        ComparisonView c = comparison("treatment", "greater", "higher", Decision.CONTINUE, List.of(
                look(1, 0.05, 0.4, 25.0, -INF, Decision.CONTINUE),
                look(2, 0.10, 0.7, 12.0, -INF, Decision.CONTINUE),
                look(3, 0.20, 1.0, 3.6, -INF, Decision.CONTINUE)));
        Svg svg = Svg.parse(BoundaryChart.svg(c, "t7"));
        List<double[]> yTicks = svg.ticks("axis-y");
        double top = yTicks.get(yTicks.size() - 1)[0];
        assertThat(top).as("the range follows the statistic, not the huge early boundary").isLessThan(12);
        assertThat(notes(svg)).contains("harm boundary above the chart at 2 looks (up to fraction 0.1, Z up to 25.00): cut at the edge");
        Element clipped = (Element) svg.one("boundary-upper").getParentNode();
        assertThat(clipped.getAttribute("clip-path")).isEqualTo("url(#t7-plot)");
        assertThat(svg.xpath("//*[local-name()='clipPath' and @id='t7-plot']")).hasSize(1);
    }

    @Test
    void aTwoSidedDesignDrawsBothBoundariesNamedByWhatTheyStopFor() {
        ComparisonView c = comparison("treatment", "two_sided", "lower", Decision.CONTINUE, List.of(
                look(1, 0.3, -0.5, 3.9, -3.9, Decision.CONTINUE),
                look(2, 0.5, 0.4, 3.0, -3.0, Decision.CONTINUE)));
        Svg svg = Svg.parse(BoundaryChart.svg(c, "t8"));
        Element upper = svg.one("boundary-upper");
        Element lower = svg.one("boundary-lower");
        assertThat(upper.getAttribute("class")).contains("boundary-benefit");
        assertThat(lower.getAttribute("class")).contains("boundary-harm");
        assertThat(upper.getAttribute("stroke-dasharray")).isNotEqualTo(lower.getAttribute("stroke-dasharray"));
        assertThat(svg.byClass("boundary-label")).extracting(Element::getTextContent).containsExactly("benefit", "harm");
        assertThat(svg.one("legend").getTextContent()).contains("benefit boundary", "harm boundary");
    }

    @Test
    void theOtherSideOfAOneSidedDesignIsItsFutilityBoundary() {
        ComparisonView c = comparison("treatment", "greater", "lower", Decision.CONTINUE, List.of(
                look(1, 0.25, 0.2, 3.0, -0.8, Decision.CONTINUE),
                look(2, 0.50, 0.6, 2.6, 0.1, Decision.CONTINUE)));
        Svg svg = Svg.parse(BoundaryChart.svg(c, "t9"));
        assertThat(svg.one("boundary-upper").getAttribute("class")).contains("boundary-benefit");
        assertThat(svg.one("boundary-lower").getAttribute("class")).contains("boundary-futility");
    }

    @Test
    void namesFromConfigurationAreEscaped() {
        String arm = "<b onclick=\"steal()\">x</b> & 'y'";
        String text = BoundaryChart.svg(comparison(arm, "greater", "higher", Decision.CONTINUE, crossing().looks()), "t10");
        assertThat(text).doesNotContain("<b onclick").doesNotContain("\"steal()\"");
        Svg svg = Svg.parse(text);
        assertThat(svg.xpath("//*[@id='t10-title']").get(0).getTextContent()).isEqualTo(arm + " · errors · continue");
        assertThat(svg.xpath("//*[local-name()='b']")).isEmpty();
    }

    @Test
    void aComparisonWithoutLooksShowsAnEmptyFrameThatSaysSo() {
        Svg svg = Svg.parse(BoundaryChart.svg(comparison("treatment", "greater", "higher", Decision.HELD, List.of()), "t11"));
        assertThat(svg.byClass("statistic")).isEmpty();
        assertThat(svg.byClass("current-look")).isEmpty();
        assertThat(svg.one("empty").getTextContent()).isEqualTo("no look yet");
        assertThat(svg.xpath("//*[@id='t11-desc']").get(0).getTextContent()).contains("No look yet");
    }

    @Test
    void aMissingStatisticLeavesAGapAndAnInfiniteOneIsDrawnAtTheEdge() {
        ComparisonView c = comparison("treatment", "greater", "higher", Decision.STOP_HARM, List.of(
                look(1, 0.1, 0.5, 6.0, -INF, Decision.CONTINUE),
                look(2, 0.2, Double.NaN, 4.5, -INF, Decision.CONTINUE),
                look(3, 0.3, 1.5, 3.8, -INF, Decision.CONTINUE),
                look(4, 0.4, INF, 3.3, -INF, Decision.STOP_HARM)));
        Svg svg = Svg.parse(BoundaryChart.svg(c, "t12"));
        List<double[]> statistic = Svg.points(svg.one("statistic").getAttribute("d"));
        assertThat(statistic).hasSize(3);
        assertThat(statistic.stream().filter(p -> p[2] == 1)).as("two subpaths around the gap").hasSize(2);
        List<double[]> yTicks = svg.ticks("axis-y");
        assertThat(statistic.get(2)[1]).isCloseTo(yTicks.get(yTicks.size() - 1)[1], within(PIXEL));
        assertThat(notes(svg)).anyMatch(n -> n.contains("Z is infinite at look 4"));
    }

    @Test
    void longRunsOfLooksAreDrawnAsLinesWithoutMarkers() {
        List<LookPoint> looks = new ArrayList<>();
        for (int k = 1; k <= 800; k++) {
            double t = k / 1600.0;
            looks.add(look(k, t, Math.sin(k / 50.0), 2.5 / Math.sqrt(t), -INF, Decision.CONTINUE));
        }
        Svg svg = Svg.parse(BoundaryChart.svg(comparison("treatment", "greater", "higher", Decision.CONTINUE, looks), "t13"));
        assertThat(svg.one("statistic").getAttribute("data-points")).isEqualTo("800");
        assertThat(Svg.points(svg.one("boundary-upper").getAttribute("d"))).hasSize(800);
        assertThat(svg.byClass("look-point")).isEmpty();
        assertThat(svg.byClass("boundary-point")).isEmpty();
    }

    @Test
    void manyMoreLooksThanPixelsAreThinnedToAboutTwoPerColumnKeepingTheEndsAndTheStop() {
        List<LookPoint> looks = new ArrayList<>();
        for (int k = 1; k <= 4000; k++) {
            double t = k / 8000.0;
            Decision d = k == 4000 ? Decision.STOP_HARM : Decision.CONTINUE;
            looks.add(look(k, t, Math.sin(k / 300.0), k <= 10 ? INF : 2.5 / Math.sqrt(t), -INF, d));
        }
        Svg svg = Svg.parse(BoundaryChart.svg(comparison("treatment", "greater", "higher", Decision.STOP_HARM, looks), "t14"));
        List<double[]> statistic = Svg.points(svg.one("statistic").getAttribute("d"));
        List<double[]> xTicks = svg.ticks("axis-x");
        double plotWidth = xTicks.get(xTicks.size() - 1)[1] - xTicks.get(0)[1];
        assertThat(statistic.size()).isBetween((int) plotWidth, (int) (2 * plotWidth) + 3);
        assertThat(statistic.get(0)[0]).isCloseTo(interpolate(xTicks, 1 / 8000.0), within(PIXEL));
        assertThat(statistic.get(statistic.size() - 1)[0]).isCloseTo(interpolate(xTicks, 0.5), within(PIXEL));
        for (int i = 1; i < statistic.size(); i++) {
            // Half a pixel apart, less the rounding of each coordinate to 0.1 px.
            assertThat(statistic.get(i)[0] - statistic.get(i - 1)[0]).as("step %d", i).isGreaterThanOrEqualTo(0.35);
        }
        // The boundary starts exactly at look 11, the first finite one, even though thinning drops most looks.
        List<double[]> upper = Svg.points(svg.one("boundary-upper").getAttribute("d"));
        assertThat(upper.get(0)[0]).isCloseTo(interpolate(xTicks, 11 / 8000.0), within(PIXEL));
        assertThat(svg.one("current-look").getAttribute("data-look")).isEqualTo("4000");
        assertThat(svg.xpath("//*[@id='t14-desc']").get(0).getTextContent()).contains("4000 looks");
    }

    @Test
    void degenerateLooksStillGiveAPicture() {
        ComparisonView c = comparison("treatment", "less", "lower", Decision.CONTINUE, List.of(
                look(1, 0.0, Double.NaN, INF, Double.NaN, Decision.CONTINUE),
                look(2, Double.NaN, 1.0, INF, -3.0, Decision.CONTINUE)));
        Svg svg = Svg.parse(BoundaryChart.svg(c, "t15"));
        assertThat(svg.byClass("statistic")).isEmpty();
        assertThat(svg.ticks("axis-x")).isNotEmpty();
    }

    @Test
    void anIdThatIsNotSafeInMarkupIsRefused() {
        assertThatThrownBy(() -> BoundaryChart.svg(crossing(), "1 bad\""))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("chart id");
    }

    /** The notes under the plot, joined back into one sentence each. */
    private static List<String> notes(Svg svg) {
        List<String> out = new ArrayList<>();
        for (Element e : svg.byClass("chart-note")) {
            String line = e.getTextContent();
            if (line.startsWith("Note: ")) {
                out.add(line.substring(6));
            } else {
                out.set(out.size() - 1, out.get(out.size() - 1) + " " + line);
            }
        }
        return out;
    }

    /** The pixel of {@code value} by linear interpolation between the first and last tick labels. */
    private static double interpolate(List<double[]> ticks, double value) {
        double[] a = ticks.get(0);
        double[] b = ticks.get(ticks.size() - 1);
        return a[1] + (value - a[0]) / (b[0] - a[0]) * (b[1] - a[1]);
    }
}
