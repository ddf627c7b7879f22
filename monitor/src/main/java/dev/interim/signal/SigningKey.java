package dev.interim.signal;

import java.nio.charset.StandardCharsets;
import java.util.Base64;

/**
 * A webhook signing key. It prints as {@code ***} and never enters an exception message, a log line
 * or a meter: messages about a bad key describe the rule, not the value.
 *
 * <p>Written as the Standard Webhooks specification serialises symmetric keys: {@code whsec_}
 * followed by the base64 of the key bytes; the specification asks for 24 to 64 random bytes
 * (192 to 512 bits), and so do we. A raw key (bytes from a key store) is taken as it is by
 * {@link #ofBytes}.
 *
 * <p>Immutable; the key bytes are copied in and never handed out beyond this package.
 */
public final class SigningKey {
    /** The prefix of a serialised symmetric key (Standard Webhooks). */
    public static final String PREFIX = "whsec_";
    static final int MIN_BYTES = 24;
    static final int MAX_BYTES = 64;

    private final byte[] key;

    private SigningKey(byte[] key) {
        if (key.length < MIN_BYTES || key.length > MAX_BYTES) {
            throw new IllegalArgumentException("a webhook signing key must have " + MIN_BYTES + " to " + MAX_BYTES
                    + " bytes (Standard Webhooks), this one has " + key.length);
        }
        this.key = key;
    }

    /**
     * The key written as {@code whsec_<base64>} (surrounding white space ignored, as left by
     * environment files).
     *
     * @throws IllegalArgumentException without the prefix, with invalid base64, or with a key of the
     *     wrong length; the message never contains the text
     */
    public static SigningKey parse(String text) {
        if (text == null || !text.strip().startsWith(PREFIX)) {
            throw new IllegalArgumentException("a webhook secret must be written " + PREFIX
                    + "<base64 of the key bytes>; for a raw key use SigningKey.ofBytes");
        }
        byte[] key;
        try {
            key = Base64.getDecoder().decode(text.strip().substring(PREFIX.length()).getBytes(StandardCharsets.US_ASCII));
        } catch (IllegalArgumentException e) {
            // The decoder's own message quotes the offending character: never pass it on.
            throw new IllegalArgumentException("a webhook secret after '" + PREFIX + "' must be standard base64 (A-Z a-z 0-9 + / and = padding)");
        }
        return new SigningKey(key);
    }

    /** A raw key, copied. */
    public static SigningKey ofBytes(byte[] key) {
        if (key == null) {
            throw new IllegalArgumentException("a webhook signing key is required");
        }
        return new SigningKey(key.clone());
    }

    /** The key bytes, for the signature code of this package only. */
    byte[] key() {
        return key;
    }

    /** Never the key. */
    @Override
    public String toString() {
        return "***";
    }
}
