package dev.interim.text;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.ByteArrayInputStream;
import java.nio.charset.StandardCharsets;
import javax.xml.parsers.DocumentBuilderFactory;
import org.junit.jupiter.api.Test;
import org.w3c.dom.Element;

/**
 * The one escaper for HTML and SVG. Sources: the predefined entities and character references of
 * XML 1.0 (W3C, section 4.6) and of HTML (WHATWG HTML, "character references"); the characters XML
 * 1.0 allows (section 2.2: no C0 control other than tab, line feed and carriage return).
 */
class MarkupTest {
    @Test
    void markupIsEscapedForTextAndAttributes() {
        assertThat(Markup.escape("<a href=\"x\">Tom & 'Jo'</a>\u0007"))
                .isEqualTo("&lt;a href=&quot;x&quot;&gt;Tom &amp; &#39;Jo&#39;&lt;/a&gt;\uFFFD");
        assertThat(Markup.escape("a<b & \"c\" 'd'>")).isEqualTo("a&lt;b &amp; &quot;c&quot; &#39;d&#39;&gt;");
        assertThat(Markup.escape("tab\tline\ncr\r")).isEqualTo("tab\tline\ncr\r");
        assertThat(Markup.escape(null)).isEmpty();
    }

    @Test
    void anXmlParserReadsBackWhatWasEscapedInContentAndInAnAttribute() throws Exception {
        String text = "checkout <v2> & \"fast\" 'path' ≥ 5%";
        String xml = "<svg a=\"" + Markup.escape(text) + "\" b='" + Markup.escape(text) + "'>" + Markup.escape(text) + "</svg>";
        Element root = DocumentBuilderFactory.newInstance().newDocumentBuilder()
                .parse(new ByteArrayInputStream(xml.getBytes(StandardCharsets.UTF_8))).getDocumentElement();
        assertThat(root.getAttribute("a")).isEqualTo(text);
        assertThat(root.getAttribute("b")).isEqualTo(text);
        assertThat(root.getTextContent()).isEqualTo(text);
    }
}
