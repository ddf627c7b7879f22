package dev.interim.text;

/**
 * Values a user wrote, as messages quote them. A message must stay one readable line and show what
 * was written without being steered by it, so a quoted value is
 *
 * <ul>
 *   <li><b>escaped</b>: control characters (line breaks and tabs included), format characters
 *       (bidirectional controls such as U+202E, zero-width spaces and joiners, the byte order mark),
 *       line and paragraph separators, space characters other than the ASCII space, lone surrogates,
 *       private-use and unassigned code points become {@code \}{@code uXXXX} (a code point beyond
 *       the Basic Multilingual Plane as its two UTF-16 halves, as Java writes it);</li>
 *   <li><b>shortened</b>: beyond {@value #LIMIT} code points it ends with {@code …} and says how
 *       long the value is, such as {@code 'aaaa…' (1048576 characters)}.</li>
 * </ul>
 *
 * <p>Everything else is shown as written, letters of any script included. Backslashes are not
 * escaped: the form is for people reading a message, not for reading back.
 */
public final class UserText {
    /** Code points of a value shown in full; longer values are cut here. */
    public static final int LIMIT = 80;

    private UserText() {}

    /** {@code value} in single quotes, escaped and shortened; {@code null} becomes {@code (none)}. */
    public static String quoted(String value) {
        if (value == null) {
            return "(none)";
        }
        int length = value.codePointCount(0, value.length());
        if (length <= LIMIT) {
            return "'" + escaped(value) + "'";
        }
        return "'" + escaped(value.substring(0, value.offsetByCodePoints(0, LIMIT))) + "…' (" + length + " characters)";
    }

    /** {@code value} escaped and shortened to {@value #LIMIT} code points, without quotes. */
    public static String shown(String value) {
        return shown(value, LIMIT);
    }

    /** {@code value} escaped and shortened to {@code limit} code points, without quotes. */
    public static String shown(String value, int limit) {
        if (value == null) {
            return "(none)";
        }
        int length = value.codePointCount(0, value.length());
        if (length <= limit) {
            return escaped(value);
        }
        return escaped(value.substring(0, value.offsetByCodePoints(0, limit))) + "… (" + length + " characters)";
    }

    /** The whole of {@code text} with the characters listed in the class comment escaped. */
    public static String escaped(String text) {
        int first = firstToEscape(text);
        if (first < 0) {
            return text;
        }
        StringBuilder out = new StringBuilder(text.length() + 16).append(text, 0, first);
        for (int i = first; i < text.length(); ) {
            int cp = text.codePointAt(i);
            int n = Character.charCount(cp);
            if (needsEscape(cp)) {
                for (int j = i; j < i + n; j++) {
                    out.append(String.format("\\u%04X", (int) text.charAt(j)));
                }
            } else {
                out.appendCodePoint(cp);
            }
            i += n;
        }
        return out.toString();
    }

    private static int firstToEscape(String text) {
        for (int i = 0; i < text.length(); ) {
            int cp = text.codePointAt(i);
            if (needsEscape(cp)) {
                return i;
            }
            i += Character.charCount(cp);
        }
        return -1;
    }

    /** Whether {@code cp} is invisible, steers the display, or breaks the line (see the class comment). */
    static boolean needsEscape(int cp) {
        if (cp >= 0x21 && cp <= 0x7E || cp == ' ') {
            return false;
        }
        return switch (Character.getType(cp)) {
            case Character.CONTROL, Character.FORMAT, Character.LINE_SEPARATOR, Character.PARAGRAPH_SEPARATOR,
                    Character.SPACE_SEPARATOR, Character.SURROGATE, Character.PRIVATE_USE, Character.UNASSIGNED -> true;
            default -> false;
        };
    }
}
