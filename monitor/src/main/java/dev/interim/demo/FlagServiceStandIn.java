package dev.interim.demo;

import com.sun.net.httpserver.HttpServer;
import dev.interim.signal.DecisionJson;
import dev.interim.signal.SigningKey;
import dev.interim.signal.WebhookSignature;
import dev.interim.experiment.DecisionRecord;
import java.io.IOException;
import java.io.InputStream;
import java.net.InetSocketAddress;
import java.net.URI;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.concurrent.CopyOnWriteArrayList;
import java.util.function.Consumer;

/**
 * A stand-in for a team's feature-flag service, on 127.0.0.1: receives kill webhooks, verifies
 * their Standard Webhooks signature, and switches the build off (here: reports it).
 */
final class FlagServiceStandIn implements AutoCloseable {
    private final HttpServer server;
    private final List<DecisionRecord> kills = new CopyOnWriteArrayList<>();

    FlagServiceStandIn(SigningKey secret, Consumer<String> say) throws IOException {
        server = HttpServer.create(new InetSocketAddress("127.0.0.1", 0), 0);
        server.createContext("/flags/kill", exchange -> {
            try (InputStream in = exchange.getRequestBody()) {
                byte[] body = in.readNBytes(64 * 1024);
                WebhookSignature.Verification v = WebhookSignature.verify(secret, exchange.getRequestHeaders(), body,
                        Instant.now(), Duration.ofMinutes(5));
                if (!v.valid()) {
                    say.accept("flag service: refused a kill request (" + v + ")");
                    exchange.sendResponseHeaders(401, -1);
                    return;
                }
                DecisionRecord d = DecisionJson.read(body);
                if (kills.stream().noneMatch(k -> k.decisionId().equals(d.decisionId()))) {
                    kills.add(d);
                    say.accept("flag service: signature verified; switching off build '" + d.arm() + "' of "
                            + d.experiment() + " (" + d.metric() + ", decision " + d.decisionId() + ")");
                }
                exchange.sendResponseHeaders(204, -1);
            } finally {
                exchange.close();
            }
        });
        server.start();
    }

    URI url() {
        return URI.create("http://127.0.0.1:" + server.getAddress().getPort() + "/flags/kill");
    }

    List<DecisionRecord> kills() {
        return List.copyOf(kills);
    }

    @Override
    public void close() {
        server.stop(0);
    }
}
