package dev.interim.signal;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import dev.interim.signal.WebhookSignature.Verification;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.time.Instant;
import java.util.Base64;
import java.util.List;
import java.util.Map;
import javax.crypto.Mac;
import javax.crypto.spec.SecretKeySpec;
import org.junit.jupiter.api.Test;

/** Signatures against known answers and an independent HMAC, and every way a verification fails. */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class WebhookSignatureTest {
    private static final Duration FIVE_MINUTES = Duration.ofMinutes(5);

    /**
     * Known answer from the Standard Webhooks reference libraries: repository
     * standard-webhooks/standard-webhooks, file libraries/go/webhook_test.go, test TestWebhookSign
     * (key, message id, timestamp, payload and expected header copied from there). Cross-checked
     * here with Python's hmac module when the test was written.
     */
    @Test
    void matchesTheStandardWebhooksReferenceVector() {
        SigningKey key = SigningKey.parse("whsec_MfKQ9r8GKYqrTwjUPD8ILPZIo2LaLaSw");
        byte[] payload = "{\"test\": 2432232314}".getBytes(StandardCharsets.UTF_8);
        assertThat(WebhookSignature.sign(key, "msg_p5jXN8AQM9LWM0D4loKWxJek", 1614265330L, payload))
                .isEqualTo("v1,g0hM9SsE+OTPJTGt/tmIKtSyZlE3uFJELVlNIOLJ1OE=");
    }

    /** The same scheme computed directly with javax.crypto.Mac over a decision record body. */
    @Test
    void matchesAnIndependentHmacOverADecisionRecord() throws Exception {
        byte[] raw = new byte[32];
        for (int i = 0; i < raw.length; i++) {
            raw[i] = (byte) (7 * i + 3);
        }
        byte[] body = DecisionJson.write(Fixtures.stopForHarm("7d2f4c1e-8a6b-3f90-b1c2-0e9d8f7a6b5c", false));
        Mac mac = Mac.getInstance("HmacSHA256");
        mac.init(new SecretKeySpec(raw, "HmacSHA256"));
        byte[] content = ("7d2f4c1e-8a6b-3f90-b1c2-0e9d8f7a6b5c.1772323440." + new String(body, StandardCharsets.UTF_8))
                .getBytes(StandardCharsets.UTF_8);
        String expected = "v1," + Base64.getEncoder().encodeToString(mac.doFinal(content));

        assertThat(WebhookSignature.sign(SigningKey.ofBytes(raw), "7d2f4c1e-8a6b-3f90-b1c2-0e9d8f7a6b5c", 1772323440L, body))
                .isEqualTo(expected);
        // The serialised form of the same key signs the same way.
        SigningKey serialised = SigningKey.parse("whsec_" + Base64.getEncoder().encodeToString(raw));
        assertThat(WebhookSignature.sign(serialised, "7d2f4c1e-8a6b-3f90-b1c2-0e9d8f7a6b5c", 1772323440L, body)).isEqualTo(expected);
    }

    @Test
    void verificationAcceptsTheGenuineAndRefusesEverythingElse() {
        SigningKey key = SigningKey.parse("whsec_MfKQ9r8GKYqrTwjUPD8ILPZIo2LaLaSw");
        SigningKey other = SigningKey.parse("whsec_" + Base64.getEncoder().encodeToString(new byte[24]));
        byte[] body = "{\"decision\":\"stop-harm\"}".getBytes(StandardCharsets.UTF_8);
        long ts = 1_772_323_440L;
        Instant now = Instant.ofEpochSecond(ts + 20);
        String signature = WebhookSignature.sign(key, "id-1", ts, body);
        Map<String, List<String>> headers = headers("id-1", Long.toString(ts), signature);

        assertThat(WebhookSignature.verify(key, headers, body, now, FIVE_MINUTES)).isEqualTo(Verification.VALID);
        assertThat(WebhookSignature.verify(other, headers, body, now, FIVE_MINUTES)).isEqualTo(Verification.NO_MATCHING_SIGNATURE);
        byte[] tampered = "{\"decision\":\"continue\"}".getBytes(StandardCharsets.UTF_8);
        assertThat(WebhookSignature.verify(key, headers, tampered, now, FIVE_MINUTES)).isEqualTo(Verification.NO_MATCHING_SIGNATURE);
        assertThat(WebhookSignature.verify(key, headers("id-2", Long.toString(ts), signature), body, now, FIVE_MINUTES))
                .isEqualTo(Verification.NO_MATCHING_SIGNATURE);
        assertThat(WebhookSignature.verify(key, headers("id-1", Long.toString(ts + 1), signature), body, now, FIVE_MINUTES))
                .isEqualTo(Verification.NO_MATCHING_SIGNATURE);
        // Replays: the timestamp must lie within the tolerance either way.
        assertThat(WebhookSignature.verify(key, headers, body, Instant.ofEpochSecond(ts + 301), FIVE_MINUTES))
                .isEqualTo(Verification.OUTSIDE_TOLERANCE);
        assertThat(WebhookSignature.verify(key, headers, body, Instant.ofEpochSecond(ts - 301), FIVE_MINUTES))
                .isEqualTo(Verification.OUTSIDE_TOLERANCE);
        assertThat(WebhookSignature.verify(key, headers, body, Instant.ofEpochSecond(ts + 300), FIVE_MINUTES))
                .isEqualTo(Verification.VALID);
        assertThat(WebhookSignature.verify(key, headers("id-1", "soon", signature), body, now, FIVE_MINUTES))
                .isEqualTo(Verification.BAD_TIMESTAMP);
        assertThat(WebhookSignature.verify(key, Map.of("webhook-id", List.of("id-1"), "webhook-timestamp", List.of(Long.toString(ts))),
                body, now, FIVE_MINUTES)).isEqualTo(Verification.MISSING_HEADER);
        // The signature alone, without the version, is not accepted.
        assertThat(WebhookSignature.verify(key, headers("id-1", Long.toString(ts), signature.substring(3)), body, now, FIVE_MINUTES))
                .isEqualTo(Verification.NO_MATCHING_SIGNATURE);
    }

    /** Key rotation: several space-separated signatures, any v1 match is enough; other versions are skipped. */
    @Test
    void oneMatchingSignatureAmongSeveralIsEnough() {
        SigningKey key = SigningKey.parse("whsec_MfKQ9r8GKYqrTwjUPD8ILPZIo2LaLaSw");
        byte[] body = "{}".getBytes(StandardCharsets.UTF_8);
        String genuine = WebhookSignature.sign(key, "id-1", 100, body);
        String header = "v1,Ceo5qEr07ixe2NLpvHk3FH9bwy/WavXrAFQ/9tdO6mc= v1a,AAAA v1,%%% " + genuine;
        assertThat(WebhookSignature.verify(key, headers("id-1", "100", header), body, Instant.ofEpochSecond(100), FIVE_MINUTES))
                .isEqualTo(Verification.VALID);
        String wrongVersion = "v2," + genuine.substring(3);
        assertThat(WebhookSignature.verify(key, headers("id-1", "100", wrongVersion), body, Instant.ofEpochSecond(100), FIVE_MINUTES))
                .isEqualTo(Verification.NO_MATCHING_SIGNATURE);
    }

    @Test
    void headerNamesMatchWithoutRegardToCase() {
        SigningKey key = SigningKey.parse("whsec_MfKQ9r8GKYqrTwjUPD8ILPZIo2LaLaSw");
        byte[] body = "{}".getBytes(StandardCharsets.UTF_8);
        Map<String, List<String>> headers = Map.of("Webhook-Id", List.of("x"), "WEBHOOK-TIMESTAMP", List.of("100"),
                "Webhook-Signature", List.of(WebhookSignature.sign(key, "x", 100, body)));
        assertThat(WebhookSignature.verify(key, headers, body, Instant.ofEpochSecond(100), FIVE_MINUTES).valid()).isTrue();
    }

    @Test
    void keysFollowTheSerialisationAndLengthOfTheSpecification() {
        assertThatThrownBy(() -> SigningKey.parse("MfKQ9r8GKYqrTwjUPD8ILPZIo2LaLaSw")).hasMessageContaining("whsec_");
        assertThatThrownBy(() -> SigningKey.parse("whsec_c2hvcnQ=")).hasMessageContaining("24 to 64 bytes");
        assertThatThrownBy(() -> SigningKey.ofBytes(new byte[65])).hasMessageContaining("24 to 64 bytes");
        assertThat(SigningKey.parse("  whsec_MfKQ9r8GKYqrTwjUPD8ILPZIo2LaLaSw\n").key()).hasSize(24);
    }

    static Map<String, List<String>> headers(String id, String timestamp, String signature) {
        return Map.of("webhook-id", List.of(id), "webhook-timestamp", List.of(timestamp), "webhook-signature", List.of(signature));
    }
}
