package dev.interim.signal;

import java.nio.charset.StandardCharsets;
import java.security.GeneralSecurityException;
import java.security.MessageDigest;
import java.time.Duration;
import java.time.Instant;
import java.util.Base64;
import java.util.List;
import java.util.Map;
import javax.crypto.Mac;
import javax.crypto.spec.SecretKeySpec;

/**
 * The symmetric signature scheme of the Standard Webhooks specification (version 1.0.0, "Signature
 * scheme" and "Webhook headers"): the signed content is {@code id + "." + timestamp + "." + body}
 * (timestamp in epoch seconds, body the exact bytes sent), the signature is HMAC-SHA256 under the
 * key, sent base64-encoded as {@code v1,<signature>} in the {@code webhook-signature} header. That
 * header may carry several space-separated signatures (key rotation); one valid {@code v1} entry
 * is enough.
 *
 * <p>Receivers must also check the timestamp against their clock (replays) and treat the id as an
 * idempotency key. {@link #verify} does the first; the id is theirs to remember.
 *
 * <p>Stateless and thread-safe.
 */
public final class WebhookSignature {
    public static final String ID = "webhook-id";
    public static final String TIMESTAMP = "webhook-timestamp";
    public static final String SIGNATURE = "webhook-signature";
    /** Tolerance between the sender's timestamp and the receiver's clock, either way (common practice). */
    public static final Duration DEFAULT_TOLERANCE = Duration.ofMinutes(5);

    private static final String VERSION = "v1";
    private static final String ALGORITHM = "HmacSHA256";

    private WebhookSignature() {}

    /** What a verification found; only {@link #VALID} means the request may be trusted. */
    public enum Verification {
        VALID,
        /** One of the three headers is absent or empty. */
        MISSING_HEADER,
        /** The timestamp is not an integer number of seconds. */
        BAD_TIMESTAMP,
        /** The timestamp is further from the receiver's clock than the tolerance. */
        OUTSIDE_TOLERANCE,
        /** No {@code v1} signature in the header matches the content. */
        NO_MATCHING_SIGNATURE;

        public boolean valid() {
            return this == VALID;
        }
    }

    /** The header value {@code v1,<base64 HMAC-SHA256>} for one delivery attempt. */
    public static String sign(SigningKey secret, String id, long timestamp, byte[] body) {
        return VERSION + "," + Base64.getEncoder().encodeToString(mac(secret, id, Long.toString(timestamp), body));
    }

    /**
     * Checks a received webhook.
     *
     * @param headers the request headers; names are matched without regard to case
     * @param body the body bytes exactly as received (not re-serialised)
     * @param now the receiver's clock
     * @param tolerance how far the timestamp may lie from {@code now}, either way
     */
    public static Verification verify(SigningKey secret, Map<String, List<String>> headers, byte[] body, Instant now,
                                      Duration tolerance) {
        String id = header(headers, ID);
        String timestamp = header(headers, TIMESTAMP);
        String signatures = header(headers, SIGNATURE);
        if (id == null || timestamp == null || signatures == null) {
            return Verification.MISSING_HEADER;
        }
        long seconds;
        try {
            seconds = Long.parseLong(timestamp);
        } catch (NumberFormatException e) {
            return Verification.BAD_TIMESTAMP;
        }
        if (Math.abs(now.getEpochSecond() - seconds) > tolerance.getSeconds()) {
            return Verification.OUTSIDE_TOLERANCE;
        }
        byte[] expected = mac(secret, id, timestamp, body);
        boolean match = false;
        for (String entry : signatures.trim().split(" +")) {
            int comma = entry.indexOf(',');
            if (comma < 0 || !VERSION.equals(entry.substring(0, comma))) {
                continue;
            }
            byte[] given;
            try {
                given = Base64.getDecoder().decode(entry.substring(comma + 1));
            } catch (IllegalArgumentException e) {
                continue;
            }
            // Constant time, and every entry is checked, so the time taken says nothing about which matched.
            match |= MessageDigest.isEqual(expected, given);
        }
        return match ? Verification.VALID : Verification.NO_MATCHING_SIGNATURE;
    }

    private static byte[] mac(SigningKey secret, String id, String timestamp, byte[] body) {
        try {
            Mac mac = Mac.getInstance(ALGORITHM);
            mac.init(new SecretKeySpec(secret.key(), ALGORITHM));
            mac.update(id.getBytes(StandardCharsets.UTF_8));
            mac.update((byte) '.');
            mac.update(timestamp.getBytes(StandardCharsets.UTF_8));
            mac.update((byte) '.');
            mac.update(body);
            return mac.doFinal();
        } catch (GeneralSecurityException e) {
            // Every Java runtime provides HmacSHA256. No cause attached: a key error must not carry the key.
            throw new IllegalStateException("HMAC-SHA256 failed in this Java runtime: " + e.getClass().getSimpleName());
        }
    }

    private static String header(Map<String, List<String>> headers, String name) {
        for (Map.Entry<String, List<String>> e : headers.entrySet()) {
            if (e.getKey() != null && e.getKey().equalsIgnoreCase(name) && e.getValue() != null && !e.getValue().isEmpty()) {
                String value = e.getValue().get(0);
                return value == null || value.isBlank() ? null : value.trim();
            }
        }
        return null;
    }
}
