package dev.interim.text;

/**
 * Escaping for text placed in HTML, SVG or other XML, as element content or as a quoted attribute
 * value. Experiment, arm and metric names come from configuration and hold reasons from operators,
 * so every string from outside goes through {@link #escape} before it meets markup.
 */
public final class Markup {
    private Markup() {}

    /**
     * The text with {@code & < > " '} replaced by character references ({@code '} as {@code &#39;},
     * which HTML 4 knows too, unlike {@code &apos;}), and control characters other than tab, line
     * feed and carriage return (not allowed in XML 1.0) replaced by U+FFFD. Null becomes the empty
     * string.
     */
    public static String escape(String text) {
        if (text == null) {
            return "";
        }
        StringBuilder out = new StringBuilder(text.length() + 16);
        for (int i = 0; i < text.length(); i++) {
            char c = text.charAt(i);
            switch (c) {
                case '&' -> out.append("&amp;");
                case '<' -> out.append("&lt;");
                case '>' -> out.append("&gt;");
                case '"' -> out.append("&quot;");
                case '\'' -> out.append("&#39;");
                default -> out.append(c < 0x20 && c != '\t' && c != '\n' && c != '\r' ? '\uFFFD' : c);
            }
        }
        return out.toString();
    }
}
