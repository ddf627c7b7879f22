package dev.interim.stream;

import java.time.Duration;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.ExecutionException;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.common.errors.InterruptException;
import org.slf4j.Logger;

/**
 * A stage's transactional producer. The first one is made and initialised ({@code initTransactions}:
 * a coordinator look-up and a producer id, round trips to the brokers) on a thread of its own while
 * the stage joins its consumer group, instead of before it: at a start or restart the two waits
 * overlap. The stage takes it with {@link #get} before it first reads its state or writes anything,
 * so it reads its state after its predecessor's open transaction has been aborted, as before. After
 * a failed transaction {@link #renew} replaces it, at once.
 *
 * <p>One thread (the stage's) calls {@link #get}, {@link #renew} and {@link #close}.
 */
final class StageProducer {
    private static final Duration CLOSE_TIMEOUT = Duration.ofSeconds(5);

    private final StreamSettings settings;
    private final String role;
    private final String member;
    private final Logger log;
    private final CompletableFuture<KafkaProducer<byte[], byte[]>> first = new CompletableFuture<>();
    /** The producer in use, once {@link #get} has taken the first one. */
    private KafkaProducer<byte[], byte[]> current;

    /** Starts making the first producer. */
    StageProducer(StreamSettings settings, String role, String member, Logger log) {
        this.settings = settings;
        this.role = role;
        this.member = member;
        this.log = log;
        Thread init = new Thread(() -> {
            try {
                first.complete(Clients.transactionalProducer(settings, role, member));
            } catch (Throwable e) {
                first.completeExceptionally(e);
            }
        }, "interim-" + role + "-producer-start");
        init.setDaemon(true);
        init.start();
    }

    /** The producer, waiting for the first one; what initialising it threw, rethrown as it was. */
    KafkaProducer<byte[], byte[]> get() {
        if (current == null) {
            current = awaitFirst();
        }
        return current;
    }

    /** After a failed transaction: aborts it, closes the producer and makes a new one. */
    void renew() {
        KafkaProducer<byte[], byte[]> failed = get();
        Clients.quietly(log, failed::abortTransaction);
        Clients.quietly(log, () -> failed.close(CLOSE_TIMEOUT));
        current = Clients.transactionalProducer(settings, role, member);
    }

    /** Closes the producer; one still being made is closed when it is ready. */
    void close() {
        if (current != null) {
            KafkaProducer<byte[], byte[]> p = current;
            Clients.quietly(log, () -> p.close(CLOSE_TIMEOUT));
        } else {
            first.whenComplete((p, failed) -> {
                if (p != null) {
                    Clients.quietly(log, () -> p.close(CLOSE_TIMEOUT));
                }
            });
        }
    }

    private KafkaProducer<byte[], byte[]> awaitFirst() {
        try {
            return first.get();
        } catch (ExecutionException e) {
            Throwable cause = e.getCause();
            if (cause instanceof RuntimeException r) {
                throw r;
            }
            if (cause instanceof Error error) {
                throw error;
            }
            throw new IllegalStateException(cause);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new InterruptException(e);
        }
    }
}
