package dev.interim.dashboard;

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

/**
 * Parses the generated markup with the JDK's XML parser (the pages are written so that their body
 * is well-formed XML): a tag left open or a name that breaks out of its escaping fails here.
 */
final class Xhtml {
    final Document doc;

    private Xhtml(Document doc) {
        this.doc = doc;
    }

    static Xhtml parse(String markup) {
        try {
            DocumentBuilderFactory f = DocumentBuilderFactory.newInstance();
            f.setFeature("http://apache.org/xml/features/disallow-doctype-decl", true);
            return new Xhtml(f.newDocumentBuilder().parse(new InputSource(new StringReader(markup))));
        } catch (Exception e) {
            throw new AssertionError("not well-formed: " + e.getMessage(), e);
        }
    }

    /** The body of a whole page ({@code <body>...</body>}), parsed. */
    static Xhtml body(String page) {
        int start = page.indexOf("<body");
        int end = page.indexOf("</body>") + "</body>".length();
        return parse(page.substring(start, end));
    }

    List<Element> all(String expression) {
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

    /** Elements whose class list contains {@code cls}. */
    List<Element> byClass(String cls) {
        return all("//*[contains(concat(' ', normalize-space(@class), ' '), ' " + cls + " ')]");
    }

    /** Text of an element with whitespace runs folded to one space. */
    static String text(Element e) {
        return e.getTextContent().replaceAll("\\s+", " ").strip();
    }
}
