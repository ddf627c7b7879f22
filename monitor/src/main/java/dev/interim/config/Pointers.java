package dev.interim.config;

import com.fasterxml.jackson.core.JsonPointer;
import dev.interim.text.UserText;

/**
 * JSON Pointers (RFC 6901) into the events. A pointer is {@code ""} (the whole document) or a
 * sequence of {@code /token}s, where {@code ~0} stands for '~' and {@code ~1} for '/'. A field of an
 * event is never the whole document, so the empty pointer is refused here.
 */
final class Pointers {
    private Pointers() {}

    static JsonPointer field(ConfigNode at) {
        String text = at.json().isTextual() ? at.json().textValue() : null;
        if (text == null) {
            throw at.error("must be a JSON Pointer such as /order/total; got " + at.kind());
        }
        if (!text.startsWith("/")) {
            String suggestion = text.isBlank() ? "/field"
                    : UserText.shown("/" + text.strip().replace("~", "~0").replace(".", "/"));
            throw at.error(UserText.quoted(text) + " is not a JSON Pointer (RFC 6901): it starts with '/' and separates "
                    + "nested fields with '/', as in " + suggestion);
        }
        for (int i = text.indexOf('~'); i >= 0; i = text.indexOf('~', i + 1)) {
            if (i + 1 >= text.length() || (text.charAt(i + 1) != '0' && text.charAt(i + 1) != '1')) {
                throw at.error(UserText.quoted(text) + " is not a JSON Pointer (RFC 6901): '~' must be followed by 0 "
                        + "(for '~') or 1 (for '/')");
            }
        }
        try {
            return JsonPointer.compile(text);
        } catch (IllegalArgumentException e) {
            throw at.error(UserText.quoted(text) + " is not a JSON Pointer (RFC 6901): " + e.getMessage());
        }
    }
}
