package dev.interim.signal;

import com.sun.net.httpserver.HttpServer;
import dev.interim.signal.WebhookSignature.Verification;
import java.io.IOException;
import java.io.InputStream;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.URI;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Collections;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.atomic.AtomicInteger;

/**
 * A webhook receiver on 127.0.0.1 for the tests: it verifies each request's signature as a team's
 * flag service would, records it, and answers the scripted statuses in order (the last one
 * repeats).
 */
final class Receiver implements AutoCloseable {
    record Received(Map<String, List<String>> headers, byte[] body, Verification verification) {
        String header(String name) {
            return headers.get(name).get(0);
        }
    }

    private final HttpServer server;
    private final ExecutorService threads = Executors.newFixedThreadPool(4);
    private final List<Received> received = Collections.synchronizedList(new ArrayList<>());
    private final AtomicInteger calls = new AtomicInteger();

    /**
     * @param now the receiver's clock for the timestamp tolerance
     * @param firstDelay how long the first request is held before it is answered (timeouts)
     * @param extraHeaders headers of every answer (e.g. Retry-After)
     */
    Receiver(SigningKey key, Instant now, Duration firstDelay, Map<String, String> extraHeaders, int... statuses) throws IOException {
        server = HttpServer.create(new InetSocketAddress(InetAddress.getLoopbackAddress(), 0), 0);
        server.setExecutor(threads);
        server.createContext("/hooks/kill", exchange -> {
            try (exchange; InputStream in = exchange.getRequestBody()) {
                int call = calls.getAndIncrement();
                byte[] body = in.readAllBytes();
                Map<String, List<String>> headers = new HashMap<>();
                exchange.getRequestHeaders().forEach((k, v) -> headers.put(k.toLowerCase(), List.copyOf(v)));
                received.add(new Received(headers, body, WebhookSignature.verify(key, headers, body, now, Duration.ofMinutes(5))));
                if (call == 0 && !firstDelay.isZero()) {
                    try {
                        Thread.sleep(firstDelay.toMillis());
                    } catch (InterruptedException e) {
                        Thread.currentThread().interrupt();
                    }
                }
                extraHeaders.forEach((k, v) -> exchange.getResponseHeaders().set(k, v));
                exchange.sendResponseHeaders(statuses[Math.min(call, statuses.length - 1)], -1);
            }
        });
        server.start();
    }

    Receiver(SigningKey key, Instant now, int... statuses) throws IOException {
        this(key, now, Duration.ZERO, Map.of(), statuses);
    }

    URI uri() {
        return URI.create("http://127.0.0.1:" + server.getAddress().getPort() + "/hooks/kill");
    }

    List<Received> received() {
        synchronized (received) {
            return List.copyOf(received);
        }
    }

    @Override
    public void close() {
        server.stop(0);
        threads.shutdownNow();
    }
}
