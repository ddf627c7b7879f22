package dev.interim.chart;

import java.io.StringReader;
import java.util.ArrayList;
import java.util.List;
import javax.xml.parsers.DocumentBuilderFactory;
import javax.xml.xpath.XPathConstants;
import javax.xml.xpath.XPathFactory;
import org.w3c.dom.Document;
import org.w3c.dom.Element;
import org.w3c.dom.NodeList;
import org.xml.sax.InputSource;

/** Reads charts back with the JDK's XML parser: a chart that is not well-formed XML fails here. */
final class Svg {
    final Document doc;

    private Svg(Document doc) {
        this.doc = doc;
    }

    static Svg parse(String svg) {
        try {
            DocumentBuilderFactory f = DocumentBuilderFactory.newInstance();
            f.setNamespaceAware(true);
            f.setFeature("http://apache.org/xml/features/disallow-doctype-decl", true);
            return new Svg(f.newDocumentBuilder().parse(new InputSource(new StringReader(svg))));
        } catch (Exception e) {
            throw new AssertionError("not well-formed XML: " + e.getMessage() + "\n" + svg, e);
        }
    }

    /** Elements whose class list contains {@code cls}. */
    List<Element> byClass(String cls) {
        return xpath("//*[contains(concat(' ', normalize-space(@class), ' '), ' " + cls + " ')]");
    }

    List<Element> xpath(String expression) {
        try {
            NodeList nodes = (NodeList) XPathFactory.newInstance().newXPath().evaluate(expression, doc, XPathConstants.NODESET);
            List<Element> out = new ArrayList<>();
            for (int i = 0; i < nodes.getLength(); i++) {
                out.add((Element) nodes.item(i));
            }
            return out;
        } catch (Exception e) {
            throw new AssertionError(e);
        }
    }

    Element one(String cls) {
        List<Element> found = byClass(cls);
        if (found.size() != 1) {
            throw new AssertionError("expected one element of class " + cls + ", found " + found.size());
        }
        return found.get(0);
    }

    /** The points of a path's "M x y L x y ..." data, each with a flag: 1 when it starts a new subpath. */
    static List<double[]> points(String d) {
        List<double[]> out = new ArrayList<>();
        String[] t = d.trim().split("\\s+");
        for (int i = 0; i + 1 < t.length; i += 2) {
            char command = t[i].charAt(0);
            if (command != 'M' && command != 'L') {
                throw new AssertionError("unexpected path command in " + d);
            }
            out.add(new double[] {Double.parseDouble(t[i].substring(1)), Double.parseDouble(t[i + 1]), command == 'M' ? 1 : 0});
        }
        return out;
    }

    /** Tick labels of an axis as (value, pixel) pairs read from the picture itself. */
    List<double[]> ticks(String axis) {
        List<double[]> out = new ArrayList<>();
        for (Element t : xpath("//*[contains(@class, '" + axis + "')]/*[local-name()='text' and @class='tick']")) {
            double value = Double.parseDouble(t.getTextContent());
            double pixel = axis.equals("axis-x") ? Double.parseDouble(t.getAttribute("x")) : Double.parseDouble(t.getAttribute("y")) - 4;
            out.add(new double[] {value, pixel});
        }
        return out;
    }
}
