package dev.interim.simulate;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.experiment.Worse;
import dev.interim.sequential.Fractions;
import java.io.ByteArrayInputStream;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;
import javax.xml.XMLConstants;
import javax.xml.parsers.DocumentBuilderFactory;
import org.junit.jupiter.api.Test;
import org.w3c.dom.Document;
import org.w3c.dom.Element;
import org.w3c.dom.NodeList;

/**
 * The chart is well-formed SVG (parsed by the JDK's XML parser, external entities off) with the
 * elements a reader needs: per comparison a titled block, the stopping-look histogram with one line
 * per effect, and the decisions panel with a point and an error bar per effect and the α line. The
 * SVG element names are those of the W3C SVG 1.1 specification; no statistical values here.
 */
class ReportChartTest {

    private static SimulationReport report() throws InterruptedException {
        List<SimulatedComparison> comparisons = SimulatedComparison.of(Designs.experiment(2,
                Designs.twoSided(0.05, "obf"), Designs.guardrail(Worse.HIGHER, 0.01, "pocock")), name -> true,
                Fractions.equallySpaced(8));
        return new Simulation(2_000, 2, 3L, new double[] {1, 2.5, -1}, EffectUnit.DRIFT).run(comparisons, Progress.none());
    }

    private static Document parse(String svg) throws Exception {
        DocumentBuilderFactory factory = DocumentBuilderFactory.newInstance();
        factory.setNamespaceAware(true);
        factory.setFeature(XMLConstants.FEATURE_SECURE_PROCESSING, true);
        factory.setFeature("http://apache.org/xml/features/disallow-doctype-decl", true);
        return factory.newDocumentBuilder().parse(new ByteArrayInputStream(svg.getBytes(StandardCharsets.UTF_8)));
    }

    private static List<Element> byClass(Element root, String tag, String cls) {
        NodeList nodes = root.getElementsByTagNameNS("http://www.w3.org/2000/svg", tag);
        List<Element> found = new ArrayList<>();
        for (int i = 0; i < nodes.getLength(); i++) {
            Element e = (Element) nodes.item(i);
            if (List.of(e.getAttribute("class").split(" ")).contains(cls)) {
                found.add(e);
            }
        }
        return found;
    }

    @Test
    void theChartIsSvgWithABlockPerComparisonAndALinePointAndBarPerEffect() throws Exception {
        SimulationReport report = report();
        String svg = ReportChart.svg(report);
        Document doc = parse(svg);
        Element root = doc.getDocumentElement();
        assertThat(root.getLocalName()).isEqualTo("svg");
        assertThat(root.getNamespaceURI()).isEqualTo("http://www.w3.org/2000/svg");
        assertThat(root.getAttribute("viewBox")).startsWith("0 0 960 ");
        assertThat(root.getElementsByTagNameNS("http://www.w3.org/2000/svg", "title").item(0).getTextContent())
                .contains("Operating characteristics");

        List<Element> blocks = byClass(root, "g", "comparison");
        assertThat(blocks).extracting(b -> b.getAttribute("data-metric")).containsExactly("orders", "page-load-ms");
        for (Element block : blocks) {
            assertThat(block.getTextContent()).contains("mossglint-checkout / " + block.getAttribute("data-metric"));
            Element histogram = byClass(block, "g", "stopping-looks").get(0);
            List<Element> lines = byClass(histogram, "polyline", "effect");
            assertThat(lines).hasSize(4); // the null and three effects
            assertThat(lines).extracting(l -> l.getAttribute("data-drift")).containsExactly("0", "1", "2.5", "-1");
            for (Element line : lines) {
                // A step outline: two points per look plus the two ends on the axis.
                assertThat(line.getAttribute("points").split(" ")).hasSize(2 * 8 + 2);
            }
            Element decisions = byClass(block, "g", "decisions").get(0);
            assertThat(byClass(decisions, "circle", "reject")).hasSize(4);
            assertThat(byClass(decisions, "line", "error-bar")).hasSize(4);
            assertThat(byClass(decisions, "polyline", "reject")).hasSize(1);
            assertThat(byClass(decisions, "polyline", "expected-fraction")).hasSize(1);
            assertThat(byClass(decisions, "line", "alpha-level")).hasSize(1);
            assertThat(decisions.getTextContent()).contains("alpha");
            assertThat(byClass(block, "g", "legend")).hasSize(2);
        }
        assertThat(svg).doesNotContain("NaN").doesNotContain("Infinity");
    }

    @Test
    void theProbabilityAxisEndsAtANiceNumber() {
        assertThat(ReportChart.niceCeiling(0.13)).isEqualTo(0.2);
        assertThat(ReportChart.niceCeiling(0.02)).isEqualTo(0.02);
        assertThat(ReportChart.niceCeiling(0.0)).isEqualTo(1);
    }
}
