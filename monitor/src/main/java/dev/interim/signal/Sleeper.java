package dev.interim.signal;

import java.time.Duration;

/** Waits between delivery attempts. Injected so that tests record the waits instead of waiting. */
@FunctionalInterface
public interface Sleeper {

    void sleep(Duration duration) throws InterruptedException;

    /** {@link Thread#sleep}. */
    static Sleeper system() {
        return d -> Thread.sleep(d.toMillis());
    }
}
