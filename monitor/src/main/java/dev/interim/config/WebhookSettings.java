package dev.interim.config;

import java.net.URI;
import java.time.Duration;

/**
 * The kill webhook, called on stop-harm of a guardrail whose action is kill (never in dry-run).
 * Requests are signed per the Standard Webhooks specification with {@code signingKey}.
 *
 * @param url where to POST the decision record
 * @param signingKey the HMAC-SHA256 key: base64, optionally prefixed {@code whsec_}
 * @param timeout how long one attempt may take
 * @param maxAttempts attempts in all, the first included
 * @param initialBackoff the shortest wait before the second attempt; it doubles for each later one
 *                       (random jitter only lengthens a wait, see {@code WebhookSender})
 */
public record WebhookSettings(URI url, Secret signingKey, Duration timeout, int maxAttempts, Duration initialBackoff) {
}
