/**
 * Edge: what leaves the daemon about its decisions. Decision records as JSON
 * ({@link dev.interim.signal.DecisionJson}), the signed kill webhook
 * ({@link dev.interim.signal.WebhookSender}, {@link dev.interim.signal.WebhookSignature}, after the
 * Standard Webhooks specification) and the Prometheus meters ({@link dev.interim.signal.Meters}).
 *
 * <p>Depends on the experiment layer, never the other way round. Time and waiting are injected
 * ({@link java.time.Clock}, {@link dev.interim.signal.Sleeper}); signing keys live in
 * {@link dev.interim.signal.SigningKey}, which never prints.
 */
package dev.interim.signal;
