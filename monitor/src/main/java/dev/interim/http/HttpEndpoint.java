package dev.interim.http;

import com.sun.net.httpserver.Headers;
import com.sun.net.httpserver.HttpExchange;
import com.sun.net.httpserver.HttpServer;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.URI;
import java.nio.charset.StandardCharsets;
import java.util.Map;
import java.util.Objects;
import java.util.TreeSet;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.function.Supplier;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The daemon's HTTP server (the JDK's {@code com.sun.net.httpserver}): {@code GET /health} and, given
 * a scrape, {@code GET /metrics}; more routes are one {@link #route} call each, before or after the
 * start. Paths match exactly; an unknown path is 404, a known path with another method 405 (with
 * {@code Allow}), a request body above the limit 413 (refused from its {@code Content-Length} when
 * it has one, else once the limit is read), a handler's exception 500 with a plain message (the
 * exception is logged, never echoed).
 *
 * <p>Binds to 127.0.0.1 unless told otherwise: exposing the endpoint beyond the host is a decision
 * for the operator. Two worker threads (daemon threads), so one slow scrape does not stall the rest.
 */
public final class HttpEndpoint implements AutoCloseable {
    /** The Prometheus text exposition format, version 0.0.4. */
    public static final String PROMETHEUS_TEXT = "text/plain; version=0.0.4; charset=utf-8";
    public static final String DEFAULT_BIND = "127.0.0.1";
    public static final int DEFAULT_MAX_BODY_BYTES = 64 * 1024;

    private static final Logger LOG = LoggerFactory.getLogger(HttpEndpoint.class);
    private static final AtomicInteger THREADS = new AtomicInteger();

    /** method → path → handler. */
    private final Map<String, Map<String, Handler>> routes = new ConcurrentHashMap<>();
    private final int maxBodyBytes;
    private final HttpServer server;
    private final ExecutorService workers;

    /** Answers one request. */
    @FunctionalInterface
    public interface Handler {
        Response handle(Request request) throws Exception;
    }

    /**
     * A request as handlers see it, the body already read within the limit.
     *
     * @param headers request headers (names without regard to case)
     */
    public record Request(String method, String path, String query, Headers headers, byte[] body,
                          Map<String, String> params) {
        public String bodyText() {
            return new String(body, StandardCharsets.UTF_8);
        }

        /** A path parameter of a templated route such as {@code /api/experiments/{id}}. */
        public String param(String name) {
            return params.get(name);
        }
    }

    /** A complete answer; {@code headers} are added to the response as they are (names as written). */
    public record Response(int status, String contentType, byte[] body, Map<String, String> headers) {
        public Response {
            headers = Map.copyOf(headers);
        }

        public Response(int status, String contentType, byte[] body) {
            this(status, contentType, body, Map.of());
        }

        /** The same answer with one more header, such as {@code Retry-After} on a 503. */
        public Response withHeader(String name, String value) {
            Map<String, String> more = new java.util.LinkedHashMap<>(headers);
            more.put(name, value);
            return new Response(status, contentType, body, more);
        }

        public static Response text(int status, String text) {
            return new Response(status, "text/plain; charset=utf-8", text.getBytes(StandardCharsets.UTF_8));
        }

        public static Response json(int status, byte[] json) {
            return new Response(status, "application/json", json);
        }
    }

    private HttpEndpoint(Builder b) throws IOException {
        this.maxBodyBytes = b.maxBodyBytes;
        this.server = HttpServer.create(new InetSocketAddress(InetAddress.getByName(b.bindAddress), b.port), 0);
        this.workers = Executors.newFixedThreadPool(2, r -> {
            Thread t = new Thread(r, "interim-http-" + THREADS.incrementAndGet());
            t.setDaemon(true);
            return t;
        });
        server.setExecutor(workers);
        server.createContext("/", this::dispatch);
        route("GET", "/health", request -> Response.text(200, "ok"));
        if (b.metrics != null) {
            Supplier<String> scrape = b.metrics;
            route("GET", "/metrics", request -> new Response(200, PROMETHEUS_TEXT, scrape.get().getBytes(StandardCharsets.UTF_8)));
        }
    }

    public static Builder builder() {
        return new Builder();
    }

    /**
     * Serves {@code handler} for {@code method} on {@code path}; a route of the same method and path is
     * replaced. A segment written {@code {name}} matches any one segment and is handed to the handler
     * as a parameter ({@link Request#param}); exact paths win over templates.
     */
    public HttpEndpoint route(String method, String path, Handler handler) {
        Objects.requireNonNull(handler, "handler");
        if (path == null || !path.startsWith("/") || method == null || method.isBlank()) {
            throw new IllegalArgumentException("a route needs a method and a path starting with '/', got " + method + " " + path);
        }
        routes.computeIfAbsent(path, p -> new ConcurrentHashMap<>()).put(method.toUpperCase(java.util.Locale.ROOT), handler);
        return this;
    }

    /** The routes of the template that matches {@code path}, with its parameters; null when none does. */
    private Map<String, Handler> template(String path, Map<String, String> params) {
        String[] segments = path.split("/", -1);
        for (Map.Entry<String, Map<String, Handler>> e : routes.entrySet()) {
            String template = e.getKey();
            if (!template.contains("{")) {
                continue;
            }
            String[] parts = template.split("/", -1);
            if (parts.length != segments.length) {
                continue;
            }
            Map<String, String> found = new java.util.HashMap<>();
            boolean match = true;
            for (int i = 0; i < parts.length && match; i++) {
                if (parts[i].startsWith("{") && parts[i].endsWith("}")) {
                    match = !segments[i].isEmpty();
                    found.put(parts[i].substring(1, parts[i].length() - 1),
                            java.net.URLDecoder.decode(segments[i], StandardCharsets.UTF_8));
                } else {
                    match = parts[i].equals(segments[i]);
                }
            }
            if (match) {
                params.putAll(found);
                return e.getValue();
            }
        }
        return null;
    }

    /** The bound port (the one chosen by the system when built with port 0). */
    public int port() {
        return server.getAddress().getPort();
    }

    public InetSocketAddress address() {
        return server.getAddress();
    }

    /** {@code http://host:port} of the bound address. */
    public URI uri() {
        InetSocketAddress a = server.getAddress();
        String host = a.getAddress().getHostAddress();
        return URI.create("http://" + (host.contains(":") ? "[" + host + "]" : host) + ":" + a.getPort());
    }

    /** Stops at once: requests in progress are cut off. */
    @Override
    public void close() {
        server.stop(0);
        workers.shutdownNow();
    }

    private void dispatch(HttpExchange exchange) throws IOException {
        try (exchange) {
            String path = exchange.getRequestURI().getPath();
            Map<String, String> params = new java.util.HashMap<>();
            Map<String, Handler> byMethod = routes.get(path);
            if (byMethod == null) {
                byMethod = template(path, params);
            }
            if (byMethod == null) {
                send(exchange, Response.text(404, "not found"));
                return;
            }
            Handler handler = byMethod.get(exchange.getRequestMethod());
            if (handler == null) {
                exchange.getResponseHeaders().set("Allow", String.join(", ", new TreeSet<>(byMethod.keySet())));
                send(exchange, Response.text(405, "method not allowed"));
                return;
            }
            byte[] body = readBody(exchange);
            if (body == null) {
                send(exchange, Response.text(413, "request body larger than " + maxBodyBytes + " bytes"));
                return;
            }
            Response response;
            try {
                response = handler.handle(new Request(exchange.getRequestMethod(), path, exchange.getRequestURI().getRawQuery(),
                        exchange.getRequestHeaders(), body, Map.copyOf(params)));
            } catch (Exception e) {
                LOG.error("handler of {} {} failed", exchange.getRequestMethod(), path, e);
                response = Response.text(500, "internal error");
            }
            send(exchange, response);
        } catch (IOException | UncheckedIOException e) {
            LOG.debug("HTTP exchange aborted: {}", e.toString());
        }
    }

    /** The body, or null when it is larger than the limit. */
    private byte[] readBody(HttpExchange exchange) throws IOException {
        String length = exchange.getRequestHeaders().getFirst("Content-Length");
        if (length != null) {
            try {
                if (Long.parseLong(length.trim()) > maxBodyBytes) {
                    return null;
                }
            } catch (NumberFormatException e) {
                return null;
            }
        }
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        byte[] buffer = new byte[8192];
        try (InputStream in = exchange.getRequestBody()) {
            int n;
            while ((n = in.read(buffer)) > 0) {
                out.write(buffer, 0, n);
                if (out.size() > maxBodyBytes) {
                    return null;
                }
            }
        }
        return out.toByteArray();
    }

    private static void send(HttpExchange exchange, Response response) throws IOException {
        exchange.getResponseHeaders().set("Content-Type", response.contentType());
        response.headers().forEach((name, value) -> exchange.getResponseHeaders().set(name, value));
        byte[] body = response.body();
        exchange.sendResponseHeaders(response.status(), body.length == 0 ? -1 : body.length);
        if (body.length > 0) {
            exchange.getResponseBody().write(body);
        }
    }

    /** Where to listen and how much to accept. */
    public static final class Builder {
        private String bindAddress = DEFAULT_BIND;
        private int port;
        private int maxBodyBytes = DEFAULT_MAX_BODY_BYTES;
        private Supplier<String> metrics;

        private Builder() {}

        /** An IP address or host name to bind (default 127.0.0.1; 0.0.0.0 for every interface). */
        public Builder bindAddress(String address) {
            if (address == null || address.isBlank()) {
                throw new IllegalArgumentException("http bind address must not be empty (default " + DEFAULT_BIND + ")");
            }
            this.bindAddress = address.strip();
            return this;
        }

        /** TCP port; 0 (the default) lets the system choose a free one, see {@link HttpEndpoint#port()}. */
        public Builder port(int port) {
            if (port < 0 || port > 65535) {
                throw new IllegalArgumentException("http port must lie between 0 and 65535, got " + port);
            }
            this.port = port;
            return this;
        }

        /** Largest request body accepted (default 64 KiB); larger ones get 413. */
        public Builder maxBodyBytes(int bytes) {
            if (bytes < 0) {
                throw new IllegalArgumentException("http max body bytes must be >= 0, got " + bytes);
            }
            this.maxBodyBytes = bytes;
            return this;
        }

        /** Serves {@code GET /metrics} with this Prometheus text (e.g. {@code meters::scrape}). */
        public Builder metrics(Supplier<String> scrape) {
            this.metrics = Objects.requireNonNull(scrape, "scrape");
            return this;
        }

        /**
         * Binds and starts serving.
         *
         * @throws UncheckedIOException when the address cannot be bound (in use, not local); the message names it
         */
        public HttpEndpoint start() {
            HttpEndpoint endpoint;
            try {
                endpoint = new HttpEndpoint(this);
            } catch (IOException e) {
                throw new UncheckedIOException("cannot listen on " + bindAddress + ":" + port + ": " + e.getMessage(), e);
            }
            endpoint.server.start();
            LOG.info("HTTP endpoint listening on {}", endpoint.uri());
            return endpoint;
        }
    }
}
