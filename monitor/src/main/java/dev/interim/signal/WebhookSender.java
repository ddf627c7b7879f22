package dev.interim.signal;

import dev.interim.experiment.DecisionRecord;
import dev.interim.stats.Probabilities;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Clock;
import java.time.Duration;
import java.util.Optional;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.ThreadLocalRandom;
import java.util.function.DoubleSupplier;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Delivers decision records to a webhook (the team's flag or deploy service) as signed POSTs,
 * following the Standard Webhooks specification: headers {@code webhook-id} (the decision id),
 * {@code webhook-timestamp} (epoch seconds of the attempt, so each retry is signed afresh) and
 * {@code webhook-signature} ({@link WebhookSignature}); the body is {@link DecisionJson}.
 *
 * <p>Delivery. A 2xx answer delivers. 4xx answers other than 408 (timeout) and 429 (too many
 * requests) are the receiver's final word and are not retried; everything else — other statuses,
 * timeouts, refused connections — is retried after an exponential backoff with jitter, up to
 * {@code maxAttempts} requests, each with its own timeout. The n-th wait is at least its nominal
 * length {@code min(maxBackoff, initialBackoff·2^(n−1))} and lengthened by a random share of it up
 * to {@code jitter} (so it lies in [nominal, nominal·(1 + jitter)]): the jitter only adds, so the
 * first retry never comes sooner than the configured initial backoff. A {@code Retry-After} in
 * seconds, itself capped at {@code maxBackoff}, is waited for when it is longer.
 *
 * <p>Idempotent by decision id: an id delivered before, in this process or according to the
 * {@link DeliveryLog}, is not sent again, and one id is never sent by two threads at once. A dry-run
 * record is never sent. Every outcome is logged in one line; the URL in logs is reduced to its
 * scheme, host and port (paths and queries of webhook URLs often carry tokens) and the key never
 * appears.
 *
 * <p>Thread-safe. {@link #send} blocks for the whole delivery, waits included: call it off the
 * decision path.
 */
public final class WebhookSender {
    private static final Logger LOG = LoggerFactory.getLogger(WebhookSender.class);

    private final URI url;
    private final String shownUrl;
    private final SigningKey secret;
    private final int maxAttempts;
    private final Duration initialBackoff;
    private final Duration maxBackoff;
    private final double jitter;
    private final Duration requestTimeout;
    private final Clock clock;
    private final Sleeper sleeper;
    private final DoubleSupplier random;
    private final DeliveryLog deliveryLog;
    private final HttpClient client;
    private final Set<String> delivered = ConcurrentHashMap.newKeySet();
    private final Set<String> inFlight = ConcurrentHashMap.newKeySet();

    private WebhookSender(Builder b) {
        this.url = b.url;
        this.shownUrl = shown(b.url);
        this.secret = b.secret;
        this.maxAttempts = b.maxAttempts;
        this.initialBackoff = b.initialBackoff;
        this.maxBackoff = b.maxBackoff;
        this.jitter = b.jitter;
        this.requestTimeout = b.requestTimeout;
        this.clock = b.clock;
        this.sleeper = b.sleeper;
        this.random = b.random;
        this.deliveryLog = b.deliveryLog;
        this.client = b.client != null ? b.client : HttpClient.newBuilder()
                .connectTimeout(b.requestTimeout)
                .followRedirects(HttpClient.Redirect.NEVER)
                .build();
    }

    /** A sender to {@code url} (http or https) signing with {@code secret}; the rest has defaults. */
    public static Builder to(URI url, SigningKey secret) {
        return new Builder(url, secret);
    }

    /** Delivers {@code record} unless it is a dry run or was delivered before; see the class comment. */
    public DeliveryResult send(DecisionRecord record) {
        String id = record.decisionId();
        if (id == null || id.isEmpty() || id.indexOf('.') >= 0) {
            throw new IllegalArgumentException("a decision id must be non-empty and contain no '.' (it is signed as id.timestamp.body)");
        }
        if (record.dryRun()) {
            LOG.info("dry run: webhook not sent for decision_id={} experiment={} arm={} metric={} decision={}",
                    id, record.experiment(), record.arm(), record.metric(), record.decision());
            return new DeliveryResult(id, DeliveryResult.Outcome.DRY_RUN, 0, 0, null);
        }
        if (delivered.contains(id) || deliveredBefore(id)) {
            LOG.info("webhook already delivered for decision_id={}: not sent again", id);
            return new DeliveryResult(id, DeliveryResult.Outcome.DUPLICATE, 0, 0, null);
        }
        if (!inFlight.add(id)) {
            LOG.info("webhook for decision_id={} is being delivered by another thread: not sent twice", id);
            return new DeliveryResult(id, DeliveryResult.Outcome.IN_FLIGHT, 0, 0, null);
        }
        try {
            return deliver(record, DecisionJson.write(record));
        } finally {
            inFlight.remove(id);
        }
    }

    private DeliveryResult deliver(DecisionRecord record, byte[] body) {
        String id = record.decisionId();
        int status = 0;
        String error = null;
        for (int attempt = 1; ; attempt++) {
            Optional<Duration> retryAfter = Optional.empty();
            try {
                HttpResponse<Void> response = client.send(request(id, body), HttpResponse.BodyHandlers.discarding());
                status = response.statusCode();
                error = null;
                if (status >= 200 && status < 300) {
                    markDelivered(id);
                    LOG.info("webhook delivered: decision_id={} experiment={} arm={} metric={} decision={} to={} status={} attempts={}",
                            id, record.experiment(), record.arm(), record.metric(), record.decision(), shownUrl, status, attempt);
                    return new DeliveryResult(id, DeliveryResult.Outcome.DELIVERED, attempt, status, null);
                }
                if (permanent(status)) {
                    LOG.error("webhook refused for good: decision_id={} experiment={} arm={} to={} status={} attempts={}",
                            id, record.experiment(), record.arm(), shownUrl, status, attempt);
                    return new DeliveryResult(id, DeliveryResult.Outcome.REJECTED, attempt, status, null);
                }
                retryAfter = retryAfter(response);
            } catch (IOException e) {
                status = 0;
                error = describe(e);
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                LOG.warn("webhook delivery interrupted: decision_id={} attempts={}", id, attempt);
                return new DeliveryResult(id, DeliveryResult.Outcome.INTERRUPTED, attempt, 0, "interrupted");
            }
            if (attempt >= maxAttempts) {
                LOG.error("webhook not delivered after {} attempts: decision_id={} experiment={} arm={} to={} last {}",
                        attempt, id, record.experiment(), record.arm(), shownUrl, failure(status, error));
                return new DeliveryResult(id, DeliveryResult.Outcome.EXHAUSTED, attempt, status, error);
            }
            Duration wait = backoff(attempt, retryAfter);
            LOG.warn("webhook attempt {} of {} failed: decision_id={} to={} {}; retrying in {} ms",
                    attempt, maxAttempts, id, shownUrl, failure(status, error), wait.toMillis());
            try {
                sleeper.sleep(wait);
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                LOG.warn("webhook delivery interrupted: decision_id={} attempts={}", id, attempt);
                return new DeliveryResult(id, DeliveryResult.Outcome.INTERRUPTED, attempt, status, error);
            }
        }
    }

    private HttpRequest request(String id, byte[] body) {
        long timestamp = clock.instant().getEpochSecond();
        return HttpRequest.newBuilder(url)
                .timeout(requestTimeout)
                .header("content-type", "application/json")
                .header("user-agent", "interim-webhook")
                .header(WebhookSignature.ID, id)
                .header(WebhookSignature.TIMESTAMP, Long.toString(timestamp))
                .header(WebhookSignature.SIGNATURE, WebhookSignature.sign(secret, id, timestamp, body))
                .POST(HttpRequest.BodyPublishers.ofByteArray(body))
                .build();
    }

    /** 4xx answers are final, except 408 (request timeout) and 429 (too many requests). */
    static boolean permanent(int status) {
        return status >= 400 && status < 500 && status != 408 && status != 429;
    }

    /** The wait after the {@code failures}-th failed attempt: the nominal wait, lengthened by the jitter. */
    Duration backoff(int failures, Optional<Duration> retryAfter) {
        double nominal = initialBackoff.toNanos() * Math.pow(2, failures - 1);
        double capped = Math.min(nominal, maxBackoff.toNanos());
        Duration wait = Duration.ofNanos((long) (capped * (1 + jitter * random.getAsDouble())));
        if (retryAfter.isPresent()) {
            Duration asked = retryAfter.get().compareTo(maxBackoff) > 0 ? maxBackoff : retryAfter.get();
            wait = asked.compareTo(wait) > 0 ? asked : wait;
        }
        return wait;
    }

    private static Optional<Duration> retryAfter(HttpResponse<?> response) {
        return response.headers().firstValue("retry-after").flatMap(v -> {
            try {
                long seconds = Long.parseLong(v.trim());
                return seconds >= 0 ? Optional.of(Duration.ofSeconds(seconds)) : Optional.empty();
            } catch (NumberFormatException e) {
                return Optional.empty(); // an HTTP date: the backoff alone decides
            }
        });
    }

    private boolean deliveredBefore(String id) {
        try {
            return deliveryLog.delivered(id);
        } catch (RuntimeException e) {
            // Sending a kill twice is safer than not sending it: the receiver dedupes by webhook-id.
            LOG.warn("delivery log could not be read for decision_id={} ({}); sending anyway", id, e.getClass().getSimpleName());
            return false;
        }
    }

    private void markDelivered(String id) {
        delivered.add(id);
        try {
            deliveryLog.recordDelivered(id, clock.instant());
        } catch (RuntimeException e) {
            LOG.warn("delivery log could not record decision_id={} ({}); a restart may send it again",
                    id, e.getClass().getSimpleName());
        }
    }

    private static String failure(int status, String error) {
        return error != null ? "error=" + error : "status=" + status;
    }

    private String describe(IOException e) {
        String message = e.getMessage();
        String text = e.getClass().getSimpleName() + (message == null ? "" : ": " + message);
        return text.replace(url.toString(), shownUrl);
    }

    /** Scheme, host and port only. */
    static String shown(URI url) {
        return url.getScheme() + "://" + url.getHost() + (url.getPort() >= 0 ? ":" + url.getPort() : "");
    }

    @Override
    public String toString() {
        return "WebhookSender[" + shownUrl + ", attempts " + maxAttempts + "]";
    }

    /** Settings of a {@link WebhookSender}; every one but the URL and the key has a default. */
    public static final class Builder {
        private final URI url;
        private final SigningKey secret;
        private int maxAttempts = 6;
        private Duration initialBackoff = Duration.ofSeconds(1);
        private Duration maxBackoff = Duration.ofSeconds(60);
        private double jitter = 0.5;
        private Duration requestTimeout = Duration.ofSeconds(15);
        private Clock clock = Clock.systemUTC();
        private Sleeper sleeper = Sleeper.system();
        private DoubleSupplier random = () -> ThreadLocalRandom.current().nextDouble();
        private DeliveryLog deliveryLog = DeliveryLog.none();
        private HttpClient client;

        private Builder(URI url, SigningKey secret) {
            if (url == null || url.getHost() == null
                    || !("http".equalsIgnoreCase(url.getScheme()) || "https".equalsIgnoreCase(url.getScheme()))) {
                throw new IllegalArgumentException("webhook url must be an absolute http or https URL with a host, got "
                        + (url == null ? "none" : shown(url)));
            }
            if (secret == null) {
                throw new IllegalArgumentException("webhook secret is required to sign the requests");
            }
            this.url = url;
            this.secret = secret;
        }

        /** Requests per decision at most, the first included (default 6). */
        public Builder maxAttempts(int n) {
            require(n >= 1 && n <= 100, "max_attempts must lie between 1 and 100, got " + n);
            this.maxAttempts = n;
            return this;
        }

        /** The first wait, doubled after each failure up to {@code max} (defaults 1 s and 60 s). */
        public Builder backoff(Duration initial, Duration max) {
            require(initial != null && max != null && !initial.isNegative() && !initial.isZero() && max.compareTo(initial) >= 0,
                    "backoff needs 0 < initial <= max, got " + initial + " and " + max);
            this.initialBackoff = initial;
            this.maxBackoff = max;
            return this;
        }

        /**
         * The largest share by which a wait may be lengthened at random, in [0, 1] (default 0.5): a
         * wait lies between its nominal length and that length times (1 + share), never below it.
         */
        public Builder jitter(double share) {
            Probabilities.requireClosed(share, "jitter");
            this.jitter = share;
            return this;
        }

        /** Timeout of each request, connecting included (default 15 s). */
        public Builder requestTimeout(Duration timeout) {
            require(timeout != null && !timeout.isNegative() && !timeout.isZero(), "request_timeout must be positive, got " + timeout);
            this.requestTimeout = timeout;
            return this;
        }

        /** The clock of the {@code webhook-timestamp} header. */
        public Builder clock(Clock clock) {
            this.clock = java.util.Objects.requireNonNull(clock, "clock");
            return this;
        }

        public Builder sleeper(Sleeper sleeper) {
            this.sleeper = java.util.Objects.requireNonNull(sleeper, "sleeper");
            return this;
        }

        /** Uniform numbers in [0, 1) for the jitter. */
        public Builder random(DoubleSupplier random) {
            this.random = java.util.Objects.requireNonNull(random, "random");
            return this;
        }

        public Builder deliveryLog(DeliveryLog log) {
            this.deliveryLog = java.util.Objects.requireNonNull(log, "deliveryLog");
            return this;
        }

        /** An HTTP client of the caller's (proxy, TLS settings); it should not follow redirects. */
        public Builder httpClient(HttpClient client) {
            this.client = java.util.Objects.requireNonNull(client, "httpClient");
            return this;
        }

        public WebhookSender build() {
            return new WebhookSender(this);
        }

        private static void require(boolean ok, String message) {
            if (!ok) {
                throw new IllegalArgumentException(message);
            }
        }
    }
}
