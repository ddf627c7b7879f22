package dev.interim.http;

import com.sun.net.httpserver.Headers;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.net.BindException;
import java.net.Inet4Address;
import java.net.Inet6Address;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.NetworkInterface;
import java.net.URI;
import java.net.URLDecoder;
import java.nio.ByteBuffer;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.Collection;
import java.util.Collections;
import java.util.HashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Objects;
import java.util.Set;
import java.util.TreeSet;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import java.util.function.Supplier;
import java.util.regex.Pattern;
import org.eclipse.jetty.http.HttpField;
import org.eclipse.jetty.http.HttpHeader;
import org.eclipse.jetty.http.HttpParser;
import org.eclipse.jetty.http.HttpStatus;
import org.eclipse.jetty.http.HttpVersion;
import org.eclipse.jetty.io.Content;
import org.eclipse.jetty.io.EndPoint;
import org.eclipse.jetty.server.HttpConfiguration;
import org.eclipse.jetty.server.HttpConnectionFactory;
import org.eclipse.jetty.server.NetworkConnectionLimit;
import org.eclipse.jetty.server.Server;
import org.eclipse.jetty.server.ServerConnector;
import org.eclipse.jetty.server.internal.HttpConnection;
import org.eclipse.jetty.util.Callback;
import org.eclipse.jetty.util.thread.QueuedThreadPool;
import org.eclipse.jetty.util.thread.ScheduledExecutorScheduler;
import org.eclipse.jetty.util.thread.Scheduler;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The daemon's HTTP server, embedded Jetty on its core API: {@code GET /health} and, given a scrape,
 * {@code GET /metrics}; more routes are one {@link #route} call each, before or after the start.
 * Paths match exactly; an unknown path is 404, a known path with another method 405 (with
 * {@code Allow}), a request body above the limit 413 (refused from its {@code Content-Length} when it
 * has one, else once the limit is read), a handler's exception 500 with a plain message (the
 * exception is logged, never echoed). {@code HEAD} is answered wherever {@code GET} is.
 *
 * <p>Binds to 127.0.0.1 unless told otherwise: exposing the endpoint beyond the host is a decision
 * for the operator. Requests whose {@code Host} is not a name of this endpoint are refused with 421
 * (DNS rebinding, see {@link Builder#allowedHosts}).
 *
 * <p>Idle clients cannot hold it: reading is asynchronous (a connection waiting for bytes holds no
 * thread), a request's header and then its body must each arrive within the read timeout, a
 * connection idle between requests is closed after the idle timeout, and connections, threads, the
 * accept queue and header sizes are bounded (DEVELOPERS.md, "The HTTP endpoint", gives the figures
 * and the reasons).
 */
public final class HttpEndpoint implements AutoCloseable {
    /** The Prometheus text exposition format, version 0.0.4. */
    public static final String PROMETHEUS_TEXT = "text/plain; version=0.0.4; charset=utf-8";
    public static final String DEFAULT_BIND = "127.0.0.1";
    public static final int DEFAULT_MAX_BODY_BYTES = 64 * 1024;
    /** How long a connection may stay open with no request in progress and no bytes arriving. */
    public static final Duration DEFAULT_IDLE_TIMEOUT = Duration.ofSeconds(30);
    /** How long a request's header may take to arrive, counted from the connection's opening or its first byte; its body gets as long again. */
    public static final Duration DEFAULT_READ_TIMEOUT = Duration.ofSeconds(5);
    /** Largest request line plus header fields, in bytes; larger is 431 (Jetty's default, common practice). */
    static final int MAX_REQUEST_HEADER_BYTES = 8 * 1024;
    /** Worker threads at most (Jetty's acceptor and selector run on two of them). */
    static final int MAX_THREADS = 16;
    /** Open connections at most; beyond, new ones wait in the accept queue until one closes. */
    static final int MAX_CONNECTIONS = 256;
    /** The listen backlog: connections the kernel holds before they are accepted. */
    static final int ACCEPT_QUEUE = 64;

    private static final Logger LOG = LoggerFactory.getLogger(HttpEndpoint.class);
    private static final String TEXT = "text/plain; charset=utf-8";

    /** path → method → handler. */
    private final Map<String, Map<String, Handler>> routes = new ConcurrentHashMap<>();
    private final int maxBodyBytes;
    private final InetAddress bound;
    private final HostCheck hosts;
    private final long readTimeoutNanos;
    private final Server server;
    private final ServerConnector connector;
    private final Scheduler scheduler;
    /** Read-timeout bookkeeping: the connections caught waiting for a request at the last sweep (sweeper thread only). */
    private Map<EndPoint, Waiting> waiting = new HashMap<>();

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
            return new Response(status, TEXT, text.getBytes(StandardCharsets.UTF_8));
        }

        public static Response json(int status, byte[] json) {
            return new Response(status, "application/json", json);
        }
    }

    private HttpEndpoint(Builder b) throws IOException {
        this.maxBodyBytes = b.maxBodyBytes;
        this.bound = InetAddress.getByName(b.bindAddress);
        this.hosts = HostCheck.of(b.bindAddress, bound, b.allowedHosts);
        this.readTimeoutNanos = b.readTimeout.toNanos();

        QueuedThreadPool pool = new QueuedThreadPool(MAX_THREADS, 2, 60_000);
        // The task queue stays unbounded, as Jetty advises (a bounded one can refuse its internal tasks):
        // an HTTP/1.1 connection has at most one task in it, and connections are bounded below.
        pool.setName("interim-http");
        pool.setDaemon(true);
        scheduler = new ScheduledExecutorScheduler("interim-http-timer", true);
        server = new Server(pool, scheduler, null);
        server.setStopTimeout(0);

        HttpConfiguration config = new HttpConfiguration();
        config.setRequestHeaderSize(MAX_REQUEST_HEADER_BYTES);
        config.setSendServerVersion(false);
        config.setSendXPoweredBy(false);
        connector = new ServerConnector(server, 1, 1, new HttpConnectionFactory(config));
        connector.setHost(bound.getHostAddress());
        connector.setPort(b.port);
        connector.setIdleTimeout(b.idleTimeout.toMillis());
        connector.setAcceptQueueSize(ACCEPT_QUEUE);
        server.addConnector(connector);
        server.addBean(new NetworkConnectionLimit(MAX_CONNECTIONS, connector));
        server.setErrorHandler(HttpEndpoint::jettyError);
        server.setHandler(new Dispatch());

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
     * as a parameter ({@link Request#param}); exact paths win over templates. A {@code GET} route
     * answers {@code HEAD} too, unless a {@code HEAD} route of its own is given.
     */
    public HttpEndpoint route(String method, String path, Handler handler) {
        Objects.requireNonNull(handler, "handler");
        if (path == null || !path.startsWith("/") || method == null || method.isBlank()) {
            throw new IllegalArgumentException("a route needs a method and a path starting with '/', got " + method + " " + path);
        }
        routes.computeIfAbsent(path, p -> new ConcurrentHashMap<>()).put(method.toUpperCase(Locale.ROOT), handler);
        return this;
    }

    /** The routes of the template that matches {@code rawPath}, with its (decoded) parameters; null when none does. */
    private Map<String, Handler> template(String rawPath, Map<String, String> params) {
        String[] segments = rawPath.split("/", -1);
        for (Map.Entry<String, Map<String, Handler>> e : routes.entrySet()) {
            String template = e.getKey();
            if (!template.contains("{")) {
                continue;
            }
            String[] parts = template.split("/", -1);
            if (parts.length != segments.length) {
                continue;
            }
            Map<String, String> found = new HashMap<>();
            boolean match = true;
            for (int i = 0; i < parts.length && match; i++) {
                if (parts[i].startsWith("{") && parts[i].endsWith("}")) {
                    match = !segments[i].isEmpty();
                    found.put(parts[i].substring(1, parts[i].length() - 1), decodeSegment(segments[i]));
                } else {
                    match = parts[i].equals(decodeSegment(segments[i]));
                }
            }
            if (match) {
                params.putAll(found);
                return e.getValue();
            }
        }
        return null;
    }

    /** Percent-decodes one path segment ('+' stays '+' in a path, RFC 3986 §2.1). */
    private static String decodeSegment(String segment) {
        return URLDecoder.decode(segment.replace("+", "%2B"), StandardCharsets.UTF_8);
    }

    /** The bound port (the one chosen by the system when built with port 0). */
    public int port() {
        return connector.getLocalPort();
    }

    public InetSocketAddress address() {
        return new InetSocketAddress(bound, port());
    }

    /** {@code http://host:port} of the bound address. */
    public URI uri() {
        String host = bound.getHostAddress();
        return URI.create("http://" + (host.contains(":") ? "[" + host + "]" : host) + ":" + port());
    }

    /** Stops at once: requests in progress are cut off. */
    @Override
    public void close() {
        try {
            server.stop();
        } catch (Exception e) {
            LOG.warn("stopping the HTTP endpoint failed: {}", e.toString());
        }
    }

    // ---- requests ----

    /** Routes each request: Host check, route and method, body within the limit, then the handler. */
    private final class Dispatch extends org.eclipse.jetty.server.Handler.Abstract {
        Dispatch() {
            super(InvocationType.BLOCKING);
        }

        @Override
        public boolean handle(org.eclipse.jetty.server.Request request, org.eclipse.jetty.server.Response response,
                              Callback callback) {
            String method = request.getMethod();
            // RFC 9112 §3.2: an HTTP/1.1 request without Host is answered 400. An HTTP/1.0 one may lack it
            // (Jetty then takes the authority from the local address, which the check below accepts).
            boolean hasHost = request.getHeaders().contains(HttpHeader.HOST);
            if (!hasHost && request.getConnectionMetaData().getHttpVersion() == HttpVersion.HTTP_1_1) {
                send(request, response, callback, Response.text(400, "an HTTP/1.1 request needs a Host header"), true);
                return true;
            }
            String host = request.getHttpURI().getHost();
            if (!hosts.accepts(host)) {
                // RFC 9110 §15.5.20: 421 Misdirected Request, the server will not answer for this authority.
                send(request, response, callback, Response.text(421, "host '" + printable(host) + "' is not a name of this "
                        + "endpoint (DNS rebinding guard); list it in http.allowed_hosts"), true);
                return true;
            }
            String rawPath = request.getHttpURI().getPath();
            String path = request.getHttpURI().getDecodedPath();
            Map<String, String> params = new HashMap<>();
            Map<String, Handler> byMethod = routes.get(path);
            if (byMethod == null) {
                byMethod = template(rawPath, params);
            }
            if (byMethod == null) {
                send(request, response, callback, Response.text(404, "not found"), false);
                return true;
            }
            Handler handler = byMethod.get(method);
            if (handler == null && method.equals("HEAD")) {
                handler = byMethod.get("GET"); // RFC 9110 §9.3.2: HEAD is GET without the content
            }
            if (handler == null) {
                // RFC 9110 §15.5.6: a 405 carries Allow with the methods the resource supports (§10.2.1).
                Set<String> allowed = new TreeSet<>(byMethod.keySet());
                if (allowed.contains("GET")) {
                    allowed.add("HEAD");
                }
                response.getHeaders().put(HttpHeader.ALLOW, String.join(", ", allowed));
                send(request, response, callback, Response.text(405, "method not allowed"), false);
                return true;
            }
            long length = request.getLength();
            if (length > maxBodyBytes) {
                // Refused from Content-Length before reading a byte (RFC 9110 §15.5.14: 413 Content Too Large).
                tooLarge(request, response, callback);
                return true;
            }
            Handler chosen = handler;
            Map<String, String> found = Map.copyOf(params);
            readBody(request, response, callback, new ByteArrayOutputStream(), body -> {
                Response answer;
                try {
                    answer = chosen.handle(new Request(method, path, request.getHttpURI().getQuery(), headers(request), body, found));
                } catch (Exception e) {
                    LOG.error("handler of {} {} failed", method, path, e);
                    answer = Response.text(500, "internal error");
                }
                send(request, response, callback, answer, false);
            });
            return true;
        }
    }

    /** What to do with a body read within the limit. */
    private interface BodyConsumer {
        void accept(byte[] body);
    }

    /**
     * Reads the body without holding a thread while it arrives (Jetty's demand/read loop), then hands it
     * on; above the limit the answer is 413 (a chunked body has no length to refuse it by).
     */
    private void readBody(org.eclipse.jetty.server.Request request, org.eclipse.jetty.server.Response response,
                          Callback callback, ByteArrayOutputStream into, BodyConsumer then) {
        while (true) {
            Content.Chunk chunk = request.read();
            if (chunk == null) {
                request.demand(() -> readBody(request, response, callback, into, then));
                return;
            }
            if (Content.Chunk.isFailure(chunk)) {
                // The client went away, or the read timed out: there is no one left to answer.
                callback.failed(chunk.getFailure());
                return;
            }
            int n = chunk.remaining();
            if (into.size() + (long) n > maxBodyBytes) {
                chunk.release();
                tooLarge(request, response, callback);
                return;
            }
            if (n > 0) {
                ByteBuffer bytes = chunk.getByteBuffer();
                byte[] copy = new byte[n];
                bytes.get(copy);
                into.write(copy, 0, n);
            }
            boolean last = chunk.isLast();
            chunk.release();
            if (last) {
                then.accept(into.toByteArray());
                return;
            }
        }
    }

    private void tooLarge(org.eclipse.jetty.server.Request request, org.eclipse.jetty.server.Response response, Callback callback) {
        send(request, response, callback, Response.text(413, "request body larger than " + maxBodyBytes + " bytes"), true);
    }

    /**
     * Writes a complete answer with its Content-Length; for HEAD, Jetty sends the same header fields and
     * no content (RFC 9110 §9.3.2). {@code close} ends the connection after it (Connection: close,
     * RFC 9112 §9.6) when the rest of the request is not worth reading.
     */
    private static void send(org.eclipse.jetty.server.Request request, org.eclipse.jetty.server.Response response,
                             Callback callback, Response answer, boolean close) {
        response.setStatus(answer.status());
        response.getHeaders().put(HttpHeader.CONTENT_TYPE, answer.contentType());
        answer.headers().forEach((name, value) -> response.getHeaders().put(name, value));
        byte[] body = answer.body();
        if (answer.status() != 204 && answer.status() != 304) {
            response.getHeaders().put(HttpHeader.CONTENT_LENGTH, body.length);
        }
        if (close) {
            response.getHeaders().put(HttpHeader.CONNECTION, "close");
        }
        response.write(true, ByteBuffer.wrap(body), callback);
    }

    /** Jetty's own refusals (400 malformed, 431 header too large, 414, ...): the status and its reason, one line. */
    private static boolean jettyError(org.eclipse.jetty.server.Request request, org.eclipse.jetty.server.Response response,
                                      Callback callback) {
        int status = response.getStatus();
        byte[] body = (status + " " + HttpStatus.getMessage(status)).toLowerCase(Locale.ROOT).getBytes(StandardCharsets.UTF_8);
        response.getHeaders().put(HttpHeader.CONTENT_TYPE, TEXT);
        response.getHeaders().put(HttpHeader.CONTENT_LENGTH, body.length);
        response.write(true, ByteBuffer.wrap(body), callback);
        return true;
    }

    private static Headers headers(org.eclipse.jetty.server.Request request) {
        Headers headers = new Headers();
        for (HttpField field : request.getHeaders()) {
            headers.add(field.getName(), field.getValue());
        }
        return headers;
    }

    /** A client-supplied value fit for a one-line message: at most 100 characters, controls escaped. */
    private static String printable(String value) {
        if (value == null) {
            return "";
        }
        StringBuilder out = new StringBuilder();
        for (int i = 0; i < value.length() && out.length() < 100; i++) {
            char c = value.charAt(i);
            out.append(c < 0x20 || c > 0x7e ? String.format("\\u%04x", (int) c) : String.valueOf(c));
        }
        return value.length() > 100 ? out + "…" : out.toString();
    }

    // ---- the read timeout ----

    /** A connection waiting for a request's header or body: which request, since when. */
    private record Waiting(long requests, boolean body, long sinceNanos) {}

    /**
     * Closes connections whose request header, or then body, has not fully arrived within the read
     * timeout (a request line sent in part and then nothing, or dribbled a byte at a time: the idle
     * timeout alone restarts with every byte). A connection that has sent nothing since it opened gets
     * the same time. Jetty has no such limit of its own; the parser state is read from its HTTP/1.1
     * connection ({@code server.internal.HttpConnection}, public but not API: a Jetty upgrade that moves
     * it fails the build here).
     */
    private void sweep() {
        try {
            long now = System.nanoTime();
            Map<EndPoint, Waiting> next = new HashMap<>();
            for (EndPoint endPoint : connector.getConnectedEndPoints()) {
                if (!(endPoint.getConnection() instanceof HttpConnection connection) || !endPoint.isOpen()) {
                    continue;
                }
                HttpParser.State state = connection.getParser().getState();
                long requests = connection.getMessagesIn();
                boolean header = state.ordinal() > HttpParser.State.START.ordinal()
                        && state.ordinal() <= HttpParser.State.HEADER.ordinal();
                boolean body = state.ordinal() >= HttpParser.State.CONTENT.ordinal()
                        && state.ordinal() < HttpParser.State.END.ordinal();
                boolean nothingYet = state == HttpParser.State.START && requests == 0;
                if (!header && !body && !nothingYet) {
                    continue; // between requests (the idle timeout's business) or answering one
                }
                long age;
                if (requests == 0 && !body) {
                    age = TimeUnit.MILLISECONDS.toNanos(System.currentTimeMillis() - endPoint.getCreatedTimeStamp());
                } else {
                    Waiting w = waiting.get(endPoint);
                    if (w == null || w.requests() != requests || w.body() != body) {
                        w = new Waiting(requests, body, now);
                    }
                    next.put(endPoint, w);
                    age = now - w.sinceNanos();
                }
                if (age >= readTimeoutNanos) {
                    LOG.debug("closing {}: request {} not received within {} ms", endPoint.getRemoteSocketAddress(),
                            body ? "body" : "header", TimeUnit.NANOSECONDS.toMillis(readTimeoutNanos));
                    next.remove(endPoint);
                    endPoint.close(new TimeoutException("request " + (body ? "body" : "header") + " not received in time"));
                }
            }
            waiting = next;
        } catch (RuntimeException e) {
            LOG.warn("the HTTP read-timeout sweep failed: {}", e.toString());
        } finally {
            if (server.isRunning()) {
                scheduleSweep();
            }
        }
    }

    private void scheduleSweep() {
        long period = Math.max(20, Math.min(1000, TimeUnit.NANOSECONDS.toMillis(readTimeoutNanos) / 5));
        scheduler.schedule(this::sweep, period, TimeUnit.MILLISECONDS);
    }

    // ---- the Host check ----

    /**
     * Which {@code Host} values are answered: against DNS rebinding, where a page of another site gets
     * its name resolved to this address and the browser then sends that name as Host. Accepted: any IP
     * address literal and {@code localhost} (neither can be a name an outside site controls), the bind
     * address, the machine's own names when bound to every interface, and the configured names;
     * {@code *} among them turns the check off.
     */
    static final class HostCheck {
        private static final Pattern IPV4 = Pattern.compile("(25[0-5]|2[0-4]\\d|1\\d\\d|[1-9]?\\d)(\\.(25[0-5]|2[0-4]\\d|1\\d\\d|[1-9]?\\d)){3}");
        private static final Pattern IPV6 = Pattern.compile("[0-9a-f:.]*:[0-9a-f:.]*(%[0-9a-z._~-]+)?");

        private final boolean off;
        private final Set<String> names;

        private HostCheck(boolean off, Set<String> names) {
            this.off = off;
            this.names = names;
        }

        static HostCheck of(String bindAddress, InetAddress bound, Collection<String> allowed) {
            Set<String> names = new LinkedHashSet<>();
            names.add("localhost");
            names.add(normalise(bindAddress));
            if (bound.isAnyLocalAddress()) {
                names.addAll(machineNames());
            }
            boolean off = false;
            for (String name : allowed) {
                off |= name.strip().equals("*");
                names.add(normalise(name));
            }
            return new HostCheck(off, Collections.unmodifiableSet(names));
        }

        boolean accepts(String host) {
            if (off) {
                return true;
            }
            if (host == null || host.isBlank()) {
                return false;
            }
            String h = normalise(host);
            return names.contains(h) || IPV4.matcher(h).matches() || IPV6.matcher(h).matches();
        }

        Set<String> names() {
            return names;
        }

        /** Lower case, without IPv6 brackets or the trailing dot of a fully qualified name. */
        static String normalise(String host) {
            String h = host.strip().toLowerCase(Locale.ROOT);
            if (h.startsWith("[") && h.endsWith("]")) {
                h = h.substring(1, h.length() - 1);
            }
            return h.endsWith(".") ? h.substring(0, h.length() - 1) : h;
        }

        /** The host name (short and canonical) and every interface address of this machine. */
        private static Set<String> machineNames() {
            Set<String> names = new LinkedHashSet<>();
            try {
                InetAddress local = InetAddress.getLocalHost();
                names.add(normalise(local.getHostName()));
                names.add(normalise(local.getCanonicalHostName()));
            } catch (IOException e) {
                LOG.debug("the machine's host name is unknown: {}", e.toString());
            }
            try {
                for (NetworkInterface nic : Collections.list(NetworkInterface.getNetworkInterfaces())) {
                    for (InetAddress a : Collections.list(nic.getInetAddresses())) {
                        if (a instanceof Inet4Address || a instanceof Inet6Address) {
                            names.add(normalise(a.getHostAddress()));
                        }
                    }
                }
            } catch (IOException e) {
                LOG.debug("the machine's addresses are unknown: {}", e.toString());
            }
            return names;
        }
    }

    // ---- building ----

    /** Where to listen and how much to accept. */
    public static final class Builder {
        private String bindAddress = DEFAULT_BIND;
        private int port;
        private int maxBodyBytes = DEFAULT_MAX_BODY_BYTES;
        private Supplier<String> metrics;
        private List<String> allowedHosts = List.of();
        private Duration idleTimeout = DEFAULT_IDLE_TIMEOUT;
        private Duration readTimeout = DEFAULT_READ_TIMEOUT;

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
         * Host names answered besides IP addresses, {@code localhost}, the bind address and (bound to
         * every interface) the machine's own names: the names a proxy forwards or clients use.
         * {@code *} answers any Host.
         */
        public Builder allowedHosts(Collection<String> names) {
            this.allowedHosts = List.copyOf(names);
            return this;
        }

        /** Closes a connection with no request in progress after this long without a byte (default 30 s). */
        public Builder idleTimeout(Duration timeout) {
            this.idleTimeout = positive(timeout, "idle");
            return this;
        }

        /** Time for a request's header to arrive, and then for its body (default 5 s); then the connection is closed. */
        public Builder readTimeout(Duration timeout) {
            this.readTimeout = positive(timeout, "read");
            return this;
        }

        private static Duration positive(Duration timeout, String what) {
            if (timeout == null || timeout.isNegative() || timeout.isZero()) {
                throw new IllegalArgumentException("http " + what + " timeout must be positive, got " + timeout);
            }
            return timeout;
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
            try {
                endpoint.server.start();
            } catch (Exception e) {
                endpoint.close();
                IOException cause = rootIo(e);
                String reason = cause != null && cause.getMessage() != null ? cause.getMessage() : e.toString();
                throw new UncheckedIOException("cannot listen on " + bindAddress + ":" + port + ": " + reason,
                        cause != null ? cause : new IOException(e));
            }
            endpoint.scheduleSweep();
            LOG.info("HTTP endpoint listening on {}", endpoint.uri());
            return endpoint;
        }

        /** The innermost IOException (a BindException when the port is taken), or null. */
        private static IOException rootIo(Throwable e) {
            IOException found = null;
            for (Throwable t = e; t != null && t.getCause() != t; t = t.getCause()) {
                if (t instanceof IOException io) {
                    found = io;
                    if (io instanceof BindException) {
                        break;
                    }
                }
            }
            return found;
        }
    }
}
