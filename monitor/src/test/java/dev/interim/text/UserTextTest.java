package dev.interim.text;

import static org.assertj.core.api.Assertions.assertThat;

import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * How messages quote what users wrote: escaped and shortened, everything else as written. Sources:
 * the character categories are the Unicode Standard's (General_Category, as {@link Character#getType}
 * reports it): Cc controls, Cf format characters (the bidirectional controls U+202A–U+202E and
 * U+2066–U+2069, the zero-width space U+200B and joiner U+200D, the byte order mark U+FEFF), Zl, Zp
 * and Zs separators; the \\uXXXX form is the Java Language Specification's (3.3, Unicode escapes).
 */
class UserTextTest {

    @Test
    void ordinaryTextIsQuotedAsWritten() {
        assertThat(UserText.quoted("basket-v3")).isEqualTo("'basket-v3'");
        assertThat(UserText.quoted("größe – 料金 ✓")).isEqualTo("'größe – 料金 ✓'");
        assertThat(UserText.quoted("a b")).isEqualTo("'a b'");
        assertThat(UserText.quoted(null)).isEqualTo("(none)");
        assertThat(UserText.shown("plain")).isEqualTo("plain");
    }

    @ParameterizedTest(name = "U+{0}")
    @CsvSource({
        "0000", "0007", "0009", "000A", "000D", "001B", "007F", "0085", // controls (Cc), line breaks and tab included
        "202A", "202B", "202C", "202D", "202E", "2066", "2067", "2068", "2069", "200E", "200F", // bidirectional
        "200B", "200C", "200D", "2060", "FEFF", "00AD", // zero-width and invisible format characters (Cf)
        "2028", "2029", // line and paragraph separators
        "00A0", "2007", "3000", // spaces other than the ASCII space
        "E000", // private use
        "D800", // a lone surrogate
    })
    void invisibleAndSteeringCharactersAreEscaped(String hex) {
        char c = (char) Integer.parseInt(hex, 16);
        String quoted = UserText.quoted("a" + c + "b");
        assertThat(quoted).isEqualTo("'a\\u" + hex + "b'");
        assertThat(quoted.chars().allMatch(ch -> ch >= 0x20 && ch < 0x7F)).isTrue();
    }

    @Test
    void aCharacterBeyondTheBasicPlaneIsEscapedAsItsTwoHalvesWhenInvisible() {
        String tag = new String(Character.toChars(0xE0041)); // TAG LATIN CAPITAL LETTER A, a format character
        assertThat(UserText.quoted("x" + tag)).isEqualTo("'x\\uDB40\\uDC41'");
        String emoji = new String(Character.toChars(0x1F600)); // a visible symbol: shown as written
        assertThat(UserText.quoted(emoji)).isEqualTo("'" + emoji + "'");
    }

    @Test
    void aLongValueIsCutAtTheLimitAndItsLengthSaid() {
        String megabyte = "x".repeat(1_048_576);
        String quoted = UserText.quoted(megabyte);
        assertThat(quoted).isEqualTo("'" + "x".repeat(UserText.LIMIT) + "…' (1048576 characters)");
        assertThat(UserText.quoted("y".repeat(UserText.LIMIT))).isEqualTo("'" + "y".repeat(UserText.LIMIT) + "'");
        assertThat(UserText.quoted("y".repeat(UserText.LIMIT + 1))).endsWith("…' (81 characters)");
        assertThat(UserText.shown("z".repeat(100), 10)).isEqualTo("zzzzzzzzzz… (100 characters)");
    }

    @Test
    void lengthsCountCharactersNotUtf16UnitsAndACutNeverSplitsOne() {
        String face = new String(Character.toChars(0x1F600));
        String quoted = UserText.quoted(face.repeat(100));
        assertThat(quoted).isEqualTo("'" + face.repeat(UserText.LIMIT) + "…' (100 characters)");
    }

    @Test
    void theCutComesBeforeEscapingSoALongInvisibleRunStaysShort() {
        String quoted = UserText.quoted("\u200B".repeat(10_000));
        assertThat(quoted).isEqualTo("'" + "\\u200B".repeat(UserText.LIMIT) + "…' (10000 characters)");
    }
}
