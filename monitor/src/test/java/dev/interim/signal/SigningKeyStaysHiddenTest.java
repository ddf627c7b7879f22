package dev.interim.signal;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.catchThrowable;

import ch.qos.logback.classic.Level;
import ch.qos.logback.classic.Logger;
import ch.qos.logback.classic.spi.ILoggingEvent;
import ch.qos.logback.classic.spi.IThrowableProxy;
import ch.qos.logback.core.read.ListAppender;
import dev.interim.experiment.DecisionRecord;
import java.io.IOException;
import java.net.URI;
import java.nio.charset.StandardCharsets;
import java.time.Clock;
import java.time.Duration;
import java.time.ZoneOffset;
import java.util.ArrayList;
import java.util.Base64;
import java.util.List;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.slf4j.LoggerFactory;

/**
 * The signing key never shows: not in toString, exception messages, results, meters or log lines
 * (captured at DEBUG). Each check collects the strings a user or an operator could see and looks
 * for the key in its serialised form, its base64 body and its raw bytes.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class SigningKeyStaysHiddenTest {
    private static final byte[] RAW = "interim-test-key-0123456789abcdef".getBytes(StandardCharsets.US_ASCII);
    private static final String BASE64 = Base64.getEncoder().encodeToString(RAW);
    private static final String SERIALISED = "whsec_" + BASE64;

    private final List<String> seen = new ArrayList<>();
    private Logger logger;
    private Level levelBefore;
    private ListAppender<ILoggingEvent> appender;

    @BeforeEach
    void captureLogs() {
        logger = (Logger) LoggerFactory.getLogger("dev.interim.signal");
        levelBefore = logger.getLevel();
        logger.setLevel(Level.DEBUG);
        logger.setAdditive(false);
        appender = new ListAppender<>();
        appender.start();
        logger.addAppender(appender);
    }

    @AfterEach
    void restoreLogs() {
        logger.detachAppender(appender);
        logger.setAdditive(true);
        logger.setLevel(levelBefore);
    }

    @Test
    void theKeyAppearsNowhere() throws IOException {
        SigningKey key = SigningKey.parse(SERIALISED);
        seen.add(key.toString());
        seen.add(String.valueOf(key));
        seen.add("" + key);
        assertThat(key.toString()).isEqualTo("***");

        // Bad keys: the messages describe the rule, never the text (the JDK's base64 message would quote a character).
        seen.add(message(() -> SigningKey.parse(BASE64)));
        seen.add(message(() -> SigningKey.parse("whsec_" + BASE64.substring(0, 10) + "-" + BASE64.substring(10))));
        seen.add(message(() -> SigningKey.parse("whsec_" + BASE64.substring(0, 12))));
        seen.add(message(() -> SigningKey.ofBytes(new byte[3])));

        Meters meters = new Meters();
        DecisionRecord stop = Fixtures.stopForHarm("id-hidden", false);
        WebhookSender.Builder builder = WebhookSender.to(URI.create("http://user:" + BASE64 + "@127.0.0.1:1/hook?token=" + BASE64), key)
                .clock(Clock.fixed(Fixtures.T0, ZoneOffset.UTC)).sleeper(d -> { }).maxAttempts(2)
                .requestTimeout(Duration.ofSeconds(2));
        seen.add(builder.toString());
        WebhookSender unreachable = builder.build();
        seen.add(unreachable.toString());
        DeliveryResult failed = unreachable.send(stop);
        assertThat(failed.outcome()).isEqualTo(DeliveryResult.Outcome.EXHAUSTED);
        seen.add(failed.toString());
        meters.webhook(failed);

        try (Receiver receiver = new Receiver(key, Fixtures.T0, 503, 400)) {
            WebhookSender sender = WebhookSender.to(receiver.uri(), key).clock(Clock.fixed(Fixtures.T0, ZoneOffset.UTC))
                    .sleeper(d -> { }).build();
            DeliveryResult rejected = sender.send(stop);
            assertThat(rejected.outcome()).isEqualTo(DeliveryResult.Outcome.REJECTED);
            seen.add(rejected.toString());
            seen.add(sender.send(Fixtures.stopForHarm("id-dry", true)).toString());
            meters.webhook(rejected);
        }
        seen.add(message(() -> WebhookSender.to(URI.create("ftp://" + BASE64 + "@flags.example/"), key)));
        seen.add(WebhookSignature.verify(key, WebhookSignatureTest.headers("x", "1", "v1,AAAA"), new byte[0],
                Fixtures.T0, Duration.ofMinutes(5)).toString());
        seen.add(meters.scrape());

        for (ILoggingEvent event : appender.list) {
            seen.add(event.getFormattedMessage());
            for (IThrowableProxy t = event.getThrowableProxy(); t != null; t = t.getCause()) {
                seen.add(t.getClassName() + ": " + t.getMessage());
            }
        }
        assertThat(appender.list).as("the deliveries above were logged").isNotEmpty();
        assertThat(seen).isNotEmpty().allSatisfy(text -> assertThat(text)
                .doesNotContain(BASE64)
                .doesNotContain(BASE64.substring(0, 12))
                .doesNotContain(new String(RAW, StandardCharsets.US_ASCII))
                .doesNotContain("whsec_" + BASE64.charAt(0)));
    }

    private static String message(Runnable action) {
        Throwable t = catchThrowable(action::run);
        assertThat(t).isInstanceOf(IllegalArgumentException.class);
        StringBuilder all = new StringBuilder(t.toString());
        for (Throwable c = t.getCause(); c != null; c = c.getCause()) {
            all.append(" / ").append(c);
        }
        return all.toString();
    }
}
