package dev.interim.signal;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import dev.interim.experiment.DecisionRecord;
import dev.interim.signal.DeliveryResult.Outcome;
import dev.interim.signal.WebhookSignature.Verification;
import java.io.IOException;
import java.net.ServerSocket;
import java.net.URI;
import java.time.Clock;
import java.time.Duration;
import java.time.Instant;
import java.time.ZoneOffset;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import org.junit.jupiter.api.Test;

/**
 * Delivery of the kill webhook to a local receiver that verifies every signature. Waits go to a
 * recording sleeper, so nothing here waits for a backoff; the jitter source is fixed.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class WebhookSenderTest {
    static final SigningKey KEY = SigningKey.parse("whsec_MfKQ9r8GKYqrTwjUPD8ILPZIo2LaLaSw");
    static final Instant NOW = Instant.parse("2026-03-01T00:04:10Z");
    static final Clock CLOCK = Clock.fixed(NOW, ZoneOffset.UTC);

    /** Records the waits instead of waiting. */
    static final class RecordingSleeper implements Sleeper {
        final List<Duration> waits = Collections.synchronizedList(new ArrayList<>());

        @Override
        public void sleep(Duration duration) {
            waits.add(duration);
        }
    }

    final RecordingSleeper sleeper = new RecordingSleeper();

    WebhookSender.Builder sender(URI url) {
        return WebhookSender.to(url, KEY).clock(CLOCK).sleeper(sleeper).random(() -> 0.0)
                .backoff(Duration.ofMillis(100), Duration.ofSeconds(5)).requestTimeout(Duration.ofSeconds(5));
    }

    @Test
    void retriesTwoUnavailableAnswersAndDeliversOnTheThirdAttempt() throws IOException {
        DecisionRecord stop = Fixtures.stopForHarm("5b9d3a8e-2c4f-3e61-9f0a-7d8c6b5a4e3f", false);
        try (Receiver receiver = new Receiver(KEY, NOW, 503, 503, 200)) {
            DeliveryResult result = sender(receiver.uri()).maxAttempts(5).build().send(stop);

            assertThat(result.outcome()).isEqualTo(Outcome.DELIVERED);
            assertThat(result.delivered()).isTrue();
            assertThat(result.attempts()).isEqualTo(3);
            assertThat(result.lastStatus()).isEqualTo(200);
            assertThat(sleeper.waits).containsExactly(Duration.ofMillis(100), Duration.ofMillis(200));
            assertThat(receiver.received()).hasSize(3).allSatisfy(r -> {
                assertThat(r.verification()).isEqualTo(Verification.VALID);
                assertThat(r.header("webhook-id")).isEqualTo(stop.decisionId());
                assertThat(r.header("webhook-timestamp")).isEqualTo(Long.toString(NOW.getEpochSecond()));
                assertThat(r.header("content-type")).isEqualTo("application/json");
                assertThat(DecisionJson.read(r.body())).isEqualTo(stop);
            });
        }
    }

    @Test
    void aClientErrorIsFinalAndNotRetried() throws IOException {
        try (Receiver receiver = new Receiver(KEY, NOW, 400, 200)) {
            DeliveryResult result = sender(receiver.uri()).build().send(Fixtures.stopForHarm("id-400", false));
            assertThat(result.outcome()).isEqualTo(Outcome.REJECTED);
            assertThat(result.delivered()).isFalse();
            assertThat(result.attempts()).isEqualTo(1);
            assertThat(result.lastStatus()).isEqualTo(400);
            assertThat(receiver.received()).hasSize(1);
            assertThat(sleeper.waits).isEmpty();
        }
    }

    /**
     * 408 and 429 are the 4xx answers worth retrying: 408 Request Timeout means the server did not get a
     * complete request in time and the client MAY repeat it (RFC 9110, section 15.5.9); 429 Too Many
     * Requests may carry a Retry-After saying how long to wait (RFC 6585, section 4; Retry-After in
     * RFC 9110, section 10.2.3), which lengthens the wait.
     */
    @Test
    void tooManyRequestsIsRetriedAfterTheWaitTheReceiverAsks() throws IOException {
        try (Receiver receiver = new Receiver(KEY, NOW, Duration.ZERO, Map.of("Retry-After", "3"), 429, 408, 204)) {
            DeliveryResult result = sender(receiver.uri()).build().send(Fixtures.stopForHarm("id-429", false));
            assertThat(result.outcome()).isEqualTo(Outcome.DELIVERED);
            assertThat(result.attempts()).isEqualTo(3);
            assertThat(sleeper.waits).containsExactly(Duration.ofSeconds(3), Duration.ofSeconds(3));
        }
    }

    @Test
    void theSameDecisionIsPostedOnce() throws IOException {
        DecisionRecord stop = Fixtures.stopForHarm("id-once", false);
        try (Receiver receiver = new Receiver(KEY, NOW, 200)) {
            WebhookSender sender = sender(receiver.uri()).build();
            assertThat(sender.send(stop).outcome()).isEqualTo(Outcome.DELIVERED);
            DeliveryResult again = sender.send(stop);
            assertThat(again.outcome()).isEqualTo(Outcome.DUPLICATE);
            assertThat(again.delivered()).isTrue();
            assertThat(again.attempts()).isZero();
            assertThat(receiver.received()).hasSize(1);
        }
    }

    /** The hook for the daemon: ids recorded on delivery, and consulted by a restarted sender. */
    @Test
    void aDeliveryLogKeepsDeliveredIdsAcrossRestarts() throws IOException {
        Set<String> logged = ConcurrentHashMap.newKeySet();
        DeliveryLog log = new DeliveryLog() {
            @Override
            public boolean delivered(String decisionId) {
                return logged.contains(decisionId);
            }

            @Override
            public void recordDelivered(String decisionId, Instant at) {
                logged.add(decisionId);
            }
        };
        DecisionRecord stop = Fixtures.stopForHarm("id-logged", false);
        try (Receiver receiver = new Receiver(KEY, NOW, 200)) {
            assertThat(sender(receiver.uri()).deliveryLog(log).build().send(stop).outcome()).isEqualTo(Outcome.DELIVERED);
            assertThat(logged).containsExactly("id-logged");
            WebhookSender restarted = sender(receiver.uri()).deliveryLog(log).build();
            assertThat(restarted.send(stop).outcome()).isEqualTo(Outcome.DUPLICATE);
            assertThat(receiver.received()).hasSize(1);
        }
    }

    @Test
    void aDryRunRecordIsNeverPosted() throws IOException {
        try (Receiver receiver = new Receiver(KEY, NOW, 200)) {
            DeliveryResult result = sender(receiver.uri()).build().send(Fixtures.stopForHarm("id-dry", true));
            assertThat(result.outcome()).isEqualTo(Outcome.DRY_RUN);
            assertThat(result.delivered()).isFalse();
            assertThat(result.attempts()).isZero();
            assertThat(receiver.received()).isEmpty();
        }
    }

    @Test
    void serverErrorsAreRetriedUpToTheLimitWithGrowingCappedWaits() throws IOException {
        try (Receiver receiver = new Receiver(KEY, NOW, 500)) {
            DeliveryResult result = sender(receiver.uri()).maxAttempts(8).backoff(Duration.ofMillis(100), Duration.ofMillis(1000))
                    .build().send(Fixtures.stopForHarm("id-500", false));
            assertThat(result.outcome()).isEqualTo(Outcome.EXHAUSTED);
            assertThat(result.attempts()).isEqualTo(8);
            assertThat(result.lastStatus()).isEqualTo(500);
            assertThat(receiver.received()).hasSize(8);
            assertThat(sleeper.waits).extracting(Duration::toMillis).containsExactly(100L, 200L, 400L, 800L, 1000L, 1000L, 1000L);
        }
    }

    /**
     * Jitter lengthens a wait by at most the configured share and never shortens it: with the largest
     * random draw the waits are 1.5 times the nominal 100 and 200 ms, with the smallest exactly those.
     * The floor is the contract of docs/configuration.md (webhook.initial_backoff: the first retry
     * waits at least that long); jitter that only adds is common practice for spreading retries.
     */
    @Test
    void jitterLengthensWaitsWithinItsShareAndNeverShortensThem() throws IOException {
        try (Receiver receiver = new Receiver(KEY, NOW, 502)) {
            sender(receiver.uri()).maxAttempts(3).jitter(0.5).random(() -> 0.999_999)
                    .build().send(Fixtures.stopForHarm("id-jitter", false));
            assertThat(sleeper.waits).hasSize(2);
            assertThat(sleeper.waits.get(0).toNanos()).isBetween(149_999_000L, 150_000_000L);
            assertThat(sleeper.waits.get(1).toNanos()).isBetween(299_999_000L, 300_000_000L);
        }
        sleeper.waits.clear();
        try (Receiver receiver = new Receiver(KEY, NOW, 502)) {
            sender(receiver.uri()).maxAttempts(3).jitter(1.0).random(() -> 0.0)
                    .build().send(Fixtures.stopForHarm("id-jitter-low", false));
            assertThat(sleeper.waits).extracting(Duration::toMillis).containsExactly(100L, 200L);
        }
    }

    /** The daemon's settings: initial_backoff 1s gives a first retry after 1 to 1.5 s, never 0.5 s. */
    @Test
    void theFirstRetryWaitsAtLeastTheInitialBackoff() {
        for (double draw : new double[] {0.0, 0.25, 0.5, 0.999_999}) {
            WebhookSender sender = WebhookSender.to(URI.create("https://flags.example/kill"), KEY)
                    .backoff(Duration.ofSeconds(1), Duration.ofSeconds(32)).random(() -> draw).build();
            Duration first = sender.backoff(1, java.util.Optional.empty());
            assertThat(first).as("draw %s", draw).isBetween(Duration.ofSeconds(1), Duration.ofMillis(1500));
            Duration capped = sender.backoff(10, java.util.Optional.empty());
            assertThat(capped).as("draw %s", draw).isBetween(Duration.ofSeconds(32), Duration.ofSeconds(48));
        }
    }

    @Test
    void aRefusedConnectionIsRetriedAndReportedByType() throws IOException {
        int closedPort;
        try (ServerSocket socket = new ServerSocket(0, 1, java.net.InetAddress.getLoopbackAddress())) {
            closedPort = socket.getLocalPort();
        }
        DeliveryResult result = sender(URI.create("http://127.0.0.1:" + closedPort + "/hooks/kill")).maxAttempts(2).build()
                .send(Fixtures.stopForHarm("id-refused", false));
        assertThat(result.outcome()).isEqualTo(Outcome.EXHAUSTED);
        assertThat(result.attempts()).isEqualTo(2);
        assertThat(result.lastStatus()).isZero();
        assertThat(result.lastError()).contains("ConnectException");
        assertThat(sleeper.waits).hasSize(1);
    }

    /** The per-request timeout: the first answer comes too late, the retry is answered at once. */
    @Test
    void aRequestThatTimesOutIsRetried() throws IOException {
        try (Receiver receiver = new Receiver(KEY, NOW, Duration.ofSeconds(3), Map.of(), 200)) {
            DeliveryResult result = sender(receiver.uri()).requestTimeout(Duration.ofMillis(300)).build()
                    .send(Fixtures.stopForHarm("id-slow", false));
            assertThat(result.outcome()).isEqualTo(Outcome.DELIVERED);
            assertThat(result.attempts()).isEqualTo(2);
            assertThat(sleeper.waits).hasSize(1);
        }
    }

    @Test
    void anInterruptedWaitStopsTheDelivery() throws IOException {
        try (Receiver receiver = new Receiver(KEY, NOW, 503)) {
            WebhookSender sender = sender(receiver.uri()).sleeper(d -> {
                throw new InterruptedException();
            }).build();
            DeliveryResult result = sender.send(Fixtures.stopForHarm("id-interrupt", false));
            assertThat(result.outcome()).isEqualTo(Outcome.INTERRUPTED);
            assertThat(Thread.interrupted()).isTrue(); // also clears the flag for the next test
            assertThat(receiver.received()).hasSize(1);
        }
    }

    @Test
    void settingsAreValidatedWithTheirNames() {
        assertThatThrownBy(() -> WebhookSender.to(URI.create("ftp://flags.example/kill"), KEY))
                .hasMessageContaining("http or https");
        assertThatThrownBy(() -> WebhookSender.to(URI.create("https://flags.example/kill"), KEY).maxAttempts(0))
                .hasMessageContaining("max_attempts");
        assertThatThrownBy(() -> WebhookSender.to(URI.create("https://flags.example/kill"), KEY).jitter(1.5))
                .hasMessageContaining("jitter");
        assertThatThrownBy(() -> WebhookSender.to(URI.create("https://flags.example/kill"), KEY)
                .backoff(Duration.ofSeconds(2), Duration.ofSeconds(1))).hasMessageContaining("backoff");
        assertThatThrownBy(() -> WebhookSender.to(URI.create("https://flags.example/kill"), KEY).build()
                .send(Fixtures.stopForHarm("a.b", false))).hasMessageContaining("no '.'");
    }

    /**
     * Other 4xx answers are final: the class means the client seems to have erred (RFC 9110, section
     * 15.5), so the same request again will not help (common practice); 408 (RFC 9110, 15.5.9) and 429
     * (RFC 6585, section 4) are the exceptions.
     */
    @Test
    void onlyFourHundredsOtherThan408And429AreFinal() {
        assertThat(WebhookSender.permanent(400)).isTrue();
        assertThat(WebhookSender.permanent(404)).isTrue();
        assertThat(WebhookSender.permanent(410)).isTrue();
        assertThat(WebhookSender.permanent(408)).isFalse();
        assertThat(WebhookSender.permanent(429)).isFalse();
        assertThat(WebhookSender.permanent(500)).isFalse();
        assertThat(WebhookSender.permanent(302)).isFalse();
    }
}
