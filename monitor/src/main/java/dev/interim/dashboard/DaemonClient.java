package dev.interim.dashboard;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.interim.experiment.ExperimentView;
import dev.interim.text.UserText;
import java.io.IOException;
import java.net.ConnectException;
import java.net.URI;
import java.net.URISyntaxException;
import java.net.URLEncoder;
import java.net.http.HttpClient;
import java.net.http.HttpConnectTimeoutException;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.net.http.HttpTimeoutException;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;

/**
 * Reads experiments from a running daemon's JSON API ({@code GET /api/experiments/{id}}). Every
 * failure a user can cause or fix — a malformed address, a daemon that is not there, an experiment
 * it does not decide — is an {@link IllegalArgumentException} whose message says what to do.
 */
public final class DaemonClient {
    /** Where {@code interim run} listens unless configured otherwise. */
    public static final String DEFAULT_ADDRESS = "http://127.0.0.1:8080";
    static final Duration CONNECT_TIMEOUT = Duration.ofSeconds(5);
    static final Duration REQUEST_TIMEOUT = Duration.ofSeconds(30);

    private static final ObjectMapper JSON = new ObjectMapper();
    private final URI base;
    private final HttpClient client;

    private DaemonClient(URI base) {
        this.base = base;
        this.client = HttpClient.newBuilder().connectTimeout(CONNECT_TIMEOUT).followRedirects(HttpClient.Redirect.NEVER).build();
    }

    /** A client of the daemon at {@code address}, e.g. {@code http://127.0.0.1:8080}. */
    public static DaemonClient at(String address) {
        String trimmed = address == null ? "" : address.strip();
        while (trimmed.endsWith("/")) {
            trimmed = trimmed.substring(0, trimmed.length() - 1);
        }
        URI uri;
        try {
            uri = new URI(trimmed);
        } catch (URISyntaxException e) {
            throw new IllegalArgumentException(badAddress(address));
        }
        if (uri.getHost() == null || !("http".equals(uri.getScheme()) || "https".equals(uri.getScheme()))
                || uri.getQuery() != null || uri.getFragment() != null) {
            throw new IllegalArgumentException(badAddress(address));
        }
        return new DaemonClient(uri);
    }

    private static String badAddress(String address) {
        return "the daemon's address must be http://HOST:PORT (for example " + DEFAULT_ADDRESS + "), got " + UserText.quoted(address);
    }

    /** The address as given (without a trailing slash). */
    public String address() {
        return base.toString();
    }

    /** The experiment {@code id} with its whole look history, as of the daemon's last look. */
    public ExperimentView experiment(String id) {
        if (id == null || id.isBlank()) {
            throw new IllegalArgumentException("name the experiment: --experiment ID");
        }
        String path = "/api/experiments/" + URLEncoder.encode(id, StandardCharsets.UTF_8).replace("+", "%20");
        HttpResponse<byte[]> response = get(path);
        String elsewhere = error(response);
        if (response.statusCode() == 404 && elsewhere != null && elsewhere.contains("decided by another instance")) {
            throw new IllegalArgumentException("the daemon at " + address() + ": " + elsewhere);
        }
        if (response.statusCode() == 404) {
            List<String> known = experimentIds();
            throw new IllegalArgumentException("the daemon at " + address() + " decides no experiment " + UserText.quoted(id) + "; "
                    + (known.isEmpty() ? "it decides none at the moment" : "it decides: " + String.join(", ", known)));
        }
        return ExperimentJson.read(json(path, response));
    }

    /** The ids of the experiments the daemon decides. */
    public List<String> experimentIds() {
        String path = "/api/experiments";
        List<String> ids = new ArrayList<>();
        for (JsonNode n : json(path, get(path))) {
            ids.add(n.path("id").asText());
        }
        return ids;
    }

    private HttpResponse<byte[]> get(String path) {
        URI uri = URI.create(base + path);
        HttpRequest request = HttpRequest.newBuilder(uri).timeout(REQUEST_TIMEOUT).header("Accept", "application/json").GET().build();
        try {
            return client.send(request, HttpResponse.BodyHandlers.ofByteArray());
        } catch (IOException e) {
            throw new IllegalArgumentException("cannot reach the daemon at " + address() + " (" + why(e) + "): start it, or give "
                    + "its HTTP address (the 'http' section of its configuration) with --from", e);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException("interrupted while asking the daemon at " + address(), e);
        }
    }

    private static String why(IOException e) {
        if (e instanceof HttpConnectTimeoutException) {
            return "no connection within " + CONNECT_TIMEOUT.toSeconds() + " s";
        }
        if (e instanceof HttpTimeoutException) {
            return "no answer within " + REQUEST_TIMEOUT.toSeconds() + " s";
        }
        if (e instanceof ConnectException) {
            return "connection refused";
        }
        return e.getMessage() == null || e.getMessage().isBlank() ? e.getClass().getSimpleName() : e.getMessage();
    }

    /** The {@code error} of a JSON error answer, or null. */
    private static String error(HttpResponse<byte[]> response) {
        if (response.statusCode() == 200) {
            return null;
        }
        try {
            JsonNode error = JSON.readTree(response.body()).path("error");
            return error.isTextual() ? error.asText() : null;
        } catch (IOException | RuntimeException e) {
            return null;
        }
    }

    private JsonNode json(String path, HttpResponse<byte[]> response) {
        if (response.statusCode() == 503 && error(response) != null) {
            // The daemon is up but owns nothing yet (it connects to Kafka or joins its group).
            throw new IllegalArgumentException("the daemon at " + address() + " is not ready: " + error(response)
                    + "; try again in a few seconds");
        }
        if (response.statusCode() != 200) {
            throw new IllegalArgumentException("the daemon at " + address() + " answered HTTP " + response.statusCode() + " to GET " + path
                    + "; is this the address of an Interim daemon?");
        }
        try {
            return JSON.readTree(response.body());
        } catch (IOException e) {
            throw new IllegalArgumentException("the answer of " + address() + " to GET " + path + " is not JSON; is this the address "
                    + "of an Interim daemon?", e);
        }
    }
}
