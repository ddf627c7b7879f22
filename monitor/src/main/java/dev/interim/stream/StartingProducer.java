package dev.interim.stream;

import java.time.Duration;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.ExecutionException;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.common.errors.InterruptException;

/**
 * A stage's transactional producer, made and initialised ({@code initTransactions}: a coordinator
 * look-up and a producer id, round trips to the brokers) on a thread of its own while the stage
 * joins its consumer group, instead of before it: at a start or restart the two waits overlap. The
 * stage takes it with {@link #get} before it first reads its state or writes anything, so it reads
 * its state after its predecessor's open transaction has been aborted, as before.
 */
final class StartingProducer {
    private final CompletableFuture<KafkaProducer<byte[], byte[]>> ready = new CompletableFuture<>();

    StartingProducer(StreamSettings settings, String role, String member) {
        Thread init = new Thread(() -> {
            try {
                ready.complete(Clients.transactionalProducer(settings, role, member));
            } catch (Throwable e) {
                ready.completeExceptionally(e);
            }
        }, "interim-" + role + "-producer-start");
        init.setDaemon(true);
        init.start();
    }

    /** The initialised producer, waiting for it; what initialising it threw, rethrown as it was. */
    KafkaProducer<byte[], byte[]> get() {
        try {
            return ready.get();
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

    /** Closes the producer when it is ready, if it ever is (for a stage stopping before it took it). */
    void closeWhenReady(Duration timeout) {
        ready.whenComplete((producer, failed) -> {
            if (producer != null) {
                producer.close(timeout);
            }
        });
    }
}
