package dev.interim.http;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.LookPoint;
import dev.interim.http.HttpEndpoint.Request;
import dev.interim.http.HttpEndpoint.Response;
import dev.interim.signal.DecisionJson;
import dev.interim.stats.HistogramCounts;
import dev.interim.stats.RatioMoments;
import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.Comparator;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import java.util.function.Supplier;

/**
 * The JSON API over the experiments this instance decides:
 * <ul>
 *   <li>{@code GET /api/experiments} — every experiment with its state (how arms were assigned,
 *       {@code unit} or {@code event}; mode; hold; split; tallies) and each comparison's current
 *       decision and last look;</li>
 *   <li>{@code GET /api/experiments/{id}} — one experiment with every arm × metric look history
 *       (fraction, statistic, boundaries, α spent, estimate and interval, the relative change
 *       treatment/control − 1 and its interval, decision);</li>
 *   <li>{@code POST /api/experiments/{id}/hold} (optional JSON body {@code {"reason": "..."}}),
 *       {@code POST /api/experiments/{id}/resume}, {@code POST /api/experiments/{id}/acknowledge}
 *       (clears the paging signal until the next stop) and
 *       {@code POST /api/experiments/{id}/arms/{arm}/stop} (an operator's stop for harm of one arm,
 *       with the metrics' actions) — operator actions, which need
 *       {@code Authorization: Bearer <token>} with the token from the environment variable named by
 *       {@code http.admin_token_env}, compared in constant time. Without a configured token they are
 *       disabled.</li>
 * </ul>
 * While this instance holds no assignment in the judge group yet (it is connecting to the brokers,
 * joining the group or in a rebalance) it decides nothing it can show: {@code GET /api/experiments},
 * one experiment and the operator actions on a configured experiment answer 503 with the reason and
 * {@code Retry-After} (RFC 9110, section 10.2.3), never an empty list that reads as "no experiments".
 * Once assigned, the list holds the experiments decided here (with several daemons, possibly none),
 * and the header {@code Interim-Decided-Elsewhere} counts the configured ones decided by another
 * instance; one experiment or an action on one decided elsewhere is 404 (read) or 409 (action), naming
 * the instance that decides it when the group says so; an experiment not configured is 404.
 *
 * <p>Numbers that are not finite (an infinite boundary before any α is spent) are written as null; a
 * relative change that is undefined (a level not positive) has null value and ends. Tallies: a rate
 * shows {@code count} and {@code successes}; a mean {@code count}, {@code mean}, {@code sum},
 * {@code sd}; a ratio of per-unit sums {@code count} and {@code units} (the same number),
 * {@code numerator_mean}, {@code denominator_mean} (per unit) and {@code ratio}.
 */
public final class ExperimentApi {
    private static final ObjectMapper JSON = new ObjectMapper();

    /** What the API needs from the daemon. */
    public interface Operations {
        Map<String, ExperimentView> views();

        CompletableFuture<List<DecisionRecord>> hold(String experiment, String reason);

        CompletableFuture<List<DecisionRecord>> resume(String experiment);

        CompletableFuture<List<DecisionRecord>> forceStop(String experiment, String arm, String reason);

        CompletableFuture<List<DecisionRecord>> acknowledge(String experiment);

        /** Whether this instance holds its share of the work now and, when not, why. */
        default Ownership ownership() {
            return Ownership.ASSIGNED;
        }

        /** Every configured experiment id, decided here or not. */
        default Set<String> configured() {
            return views().keySet();
        }

        /** The instance that decides a configured experiment not decided here, when known. */
        default Optional<String> ownerOf(String experiment) {
            return Optional.empty();
        }
    }

    /**
     * Whether this instance holds its assignment in the judge group.
     *
     * @param reason why not, such as "joining the consumer group 'interim-judge'" (empty when assigned)
     */
    public record Ownership(boolean assigned, String reason) {
        public static final Ownership ASSIGNED = new Ownership(true, "");

        public static Ownership notYet(String reason) {
            return new Ownership(false, reason);
        }
    }

    /** Seconds a client is asked to wait before it asks again while this instance owns nothing yet. */
    public static final int RETRY_AFTER_SECONDS = 5;
    /** Header of the list: how many configured experiments another instance decides. */
    public static final String ELSEWHERE_HEADER = "Interim-Decided-Elsewhere";

    private final Operations operations;
    private final Supplier<Optional<String>> adminToken;

    private ExperimentApi(Operations operations, Supplier<Optional<String>> adminToken) {
        this.operations = operations;
        this.adminToken = adminToken;
    }

    /** Adds the API's routes to {@code endpoint}. */
    public static void install(HttpEndpoint endpoint, Operations operations, Supplier<Optional<String>> adminToken) {
        ExperimentApi api = new ExperimentApi(operations, adminToken);
        endpoint.route("GET", "/api/experiments", api::list);
        endpoint.route("GET", "/api/experiments/{id}", api::one);
        endpoint.route("POST", "/api/experiments/{id}/hold", r -> api.act(r, Action.HOLD));
        endpoint.route("POST", "/api/experiments/{id}/resume", r -> api.act(r, Action.RESUME));
        endpoint.route("POST", "/api/experiments/{id}/acknowledge", r -> api.act(r, Action.ACKNOWLEDGE));
        endpoint.route("POST", "/api/experiments/{id}/arms/{arm}/stop", r -> api.act(r, Action.STOP));
    }

    private Response list(Request request) throws Exception {
        Ownership ownership = operations.ownership();
        if (!ownership.assigned()) {
            return notYet(ownership);
        }
        Map<String, ExperimentView> views = operations.views();
        ArrayNode out = JSON.createArrayNode();
        views.values().stream().sorted(Comparator.comparing(ExperimentView::id))
                .forEach(v -> out.add(summary(v, Detail.LAST_LOOK)));
        long elsewhere = operations.configured().stream().filter(id -> !views.containsKey(id)).count();
        return Response.json(200, JSON.writeValueAsBytes(out)).withHeader(ELSEWHERE_HEADER, Long.toString(elsewhere));
    }

    private Response one(Request request) throws Exception {
        ExperimentView v = operations.views().get(request.param("id"));
        if (v == null) {
            return notHere(request.param("id"), false);
        }
        return Response.json(200, JSON.writeValueAsBytes(summary(v, Detail.EVERY_LOOK)));
    }

    /** 503 with the reason and Retry-After: this instance owns nothing yet. */
    private static Response notYet(Ownership ownership) throws Exception {
        ObjectNode body = JSON.createObjectNode()
                .put("error", "this instance owns no experiments yet: " + ownership.reason())
                .put("retry_after_seconds", RETRY_AFTER_SECONDS);
        return Response.json(503, JSON.writeValueAsBytes(body)).withHeader("Retry-After", Integer.toString(RETRY_AFTER_SECONDS));
    }

    /** An experiment not decided here: not configured (404), not yet assigned (503), or decided elsewhere. */
    private Response notHere(String id, boolean action) throws Exception {
        String shown = dev.interim.text.UserText.quoted(id);
        if (!operations.configured().contains(id)) {
            return error(404, "no experiment " + shown + " is configured; GET /api/experiments lists the ones decided here");
        }
        Ownership ownership = operations.ownership();
        if (!ownership.assigned()) {
            return notYet(ownership);
        }
        String where = operations.ownerOf(id).map(o -> "another instance (" + o + ")").orElse("another instance");
        return action
                ? error(409, "experiment " + shown + " is decided by " + where + ", not this one; send the action there")
                : error(404, "experiment " + shown + " is decided by " + where + ", not this one; ask that instance");
    }

    private enum Action { HOLD, RESUME, ACKNOWLEDGE, STOP }

    private Response act(Request request, Action action) throws Exception {
        Optional<String> token = adminToken.get();
        if (token.isEmpty()) {
            return error(403, "operator actions are disabled: set http.admin_token_env to a variable holding a token");
        }
        if (!authorised(request, token.get())) {
            return error(401, "operator actions need the header 'Authorization: Bearer <token>' with the admin token");
        }
        String id = request.param("id");
        if (!operations.views().containsKey(id)) {
            return notHere(id, true);
        }
        String reason = "operator";
        if ((action == Action.HOLD || action == Action.STOP) && request.body().length > 0) {
            try {
                reason = JSON.readTree(request.body()).path("reason").asText("operator");
            } catch (java.io.IOException e) {
                return error(400, "the body must be JSON such as {\"reason\": \"incident 42\"}");
            }
            reason = reason.length() > 200 ? reason.substring(0, 200) : reason;
        }
        CompletableFuture<List<DecisionRecord>> done = switch (action) {
            case HOLD -> operations.hold(id, reason);
            case RESUME -> operations.resume(id);
            case ACKNOWLEDGE -> operations.acknowledge(id);
            case STOP -> operations.forceStop(id, request.param("arm"), reason);
        };
        List<DecisionRecord> records;
        try {
            records = done.get(30, TimeUnit.SECONDS);
        } catch (ExecutionException e) {
            return error(409, e.getCause() == null ? "the action failed" : e.getCause().getMessage());
        } catch (TimeoutException e) {
            return error(503, "the action was not committed within 30 s; it may still take effect");
        }
        ArrayNode out = JSON.createArrayNode();
        for (DecisionRecord d : records) {
            out.add(JSON.readTree(DecisionJson.write(d)));
        }
        return Response.json(200, JSON.writeValueAsBytes(out));
    }

    /** Compares the bearer token in constant time (digests of equal length, MessageDigest.isEqual). */
    static boolean authorised(Request request, String expected) {
        String header = request.headers().getFirst("Authorization");
        if (header == null || !header.regionMatches(true, 0, "Bearer ", 0, 7)) {
            return false;
        }
        return MessageDigest.isEqual(sha256(header.substring(7).trim()), sha256(expected));
    }

    private static byte[] sha256(String s) {
        try {
            return MessageDigest.getInstance("SHA-256").digest(s.getBytes(StandardCharsets.UTF_8));
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException("SHA-256 is part of every Java runtime", e);
        }
    }

    /** How much of each comparison's history an answer carries. */
    private enum Detail {
        /** The last look only (the list of experiments). */
        LAST_LOOK,
        /** Every kept look (one experiment). */
        EVERY_LOOK
    }

    private static ObjectNode summary(ExperimentView v, Detail detail) {
        ObjectNode n = JSON.createObjectNode();
        n.put("id", v.id());
        n.put("control", v.control());
        ArrayNode treatments = n.putArray("treatments");
        v.treatments().forEach(treatments::add);
        n.put("assignment", v.assignment().label());
        n.put("dry_run", v.dryRun());
        if (!v.run().isEmpty()) {
            n.put("run", v.run());
        }
        n.put("held", v.held());
        if (v.holdReason() != null) {
            n.put("hold_reason", v.holdReason());
        }
        ObjectNode srm = n.putObject("sample_ratio");
        number(srm, "p_value", v.sampleRatio().pValue());
        srm.put("mismatch", v.sampleRatio().mismatch());
        if (v.lastLook() != null) {
            n.put("last_look", v.lastLook().toString());
        }
        ObjectNode exposures = n.putObject("exposures");
        v.exposures().forEach(exposures::put);
        ObjectNode tallies = n.putObject("tallies");
        v.tallies().forEach((metric, byArm) -> {
            ObjectNode m = tallies.putObject(metric);
            byArm.forEach((arm, t) -> {
                ObjectNode a = m.putObject(arm);
                a.put("count", t.count());
                if (t instanceof dev.interim.experiment.Tally.Rate r) {
                    a.put("successes", r.counts().successes());
                } else if (t instanceof dev.interim.experiment.Tally.Mean mean && mean.moments().count() > 0) {
                    number(a, "mean", mean.moments().mean());
                    number(a, "sum", mean.moments().mean() * mean.moments().count());
                    number(a, "sd", mean.moments().standardDeviation());
                } else if (t instanceof dev.interim.experiment.Tally.Ratio ratio) {
                    RatioMoments rm = ratio.moments();
                    a.put("kind", "ratio");
                    a.put("units", rm.count());
                    number(a, "numerator_mean", rm.meanX());
                    number(a, "denominator_mean", rm.meanY());
                    number(a, "ratio", rm.ratio());
                } else if (t instanceof dev.interim.experiment.Tally.Quantile q) {
                    quantile(a, q.counts(), quantileOf(v, metric), detail);
                }
            });
        });
        ArrayNode comparisons = n.putArray("comparisons");
        for (ExperimentView.ComparisonView c : v.comparisons()) {
            ObjectNode cn = comparisons.addObject();
            cn.put("arm", c.arm());
            cn.put("metric", c.metric());
            cn.put("kind", c.kind());
            if (c.isQuantile()) {
                cn.put("quantile", c.quantile());
            }
            cn.put("role", c.role());
            cn.put("worse", c.worse());
            cn.put("action", c.action());
            cn.put("alpha", c.alpha());
            cn.put("alternative", c.alternative());
            cn.put("spending", c.spending());
            cn.put("decision", c.decision().label());
            if (c.skipped() != null) {
                cn.put("skipped", c.skipped());
            }
            List<LookPoint> looks = c.looks();
            if (!looks.isEmpty()) {
                cn.set("last", point(looks.get(looks.size() - 1)));
            }
            if (detail == Detail.EVERY_LOOK) {
                ArrayNode history = cn.putArray("looks");
                looks.forEach(p -> history.add(point(p)));
            }
        }
        return n;
    }

    /**
     * A quantile tally: {@code kind} "quantile", the probability, the arm's quantile of the values
     * counted so far in the metric's units ({@code value}, null before any value: shown as soon as
     * there are values, even before the test may use it), and, with the whole look history, the
     * non-empty histogram buckets as [value inside the bucket, count] pairs, from which a reader
     * rebuilds the arm's quantiles.
     */
    private static void quantile(ObjectNode a, HistogramCounts counts, double p, Detail detail) {
        a.put("kind", "quantile");
        if (Double.isNaN(p)) {
            return;
        }
        a.put("quantile", p);
        number(a, "value", counts.count() == 0 ? Double.NaN : counts.quantile(p));
        if (detail == Detail.EVERY_LOOK) {
            ArrayNode buckets = a.putArray("buckets");
            for (HistogramCounts.Bucket b : counts.buckets()) {
                buckets.addArray().add(b.value()).add(b.count());
            }
        }
    }

    /** The probability of quantile metric {@code metric}, from its comparisons; NaN when none names it. */
    private static double quantileOf(ExperimentView v, String metric) {
        for (ExperimentView.ComparisonView c : v.comparisons()) {
            if (c.metric().equals(metric) && c.isQuantile()) {
                return c.quantile();
            }
        }
        return Double.NaN;
    }

    private static ObjectNode point(LookPoint p) {
        ObjectNode n = JSON.createObjectNode();
        n.put("look", p.look());
        n.put("at", p.at().toString());
        number(n, "fraction", p.fraction());
        number(n, "statistic", p.statistic());
        number(n, "upper", p.upper());
        number(n, "lower", p.lower());
        number(n, "alpha_spent", p.alphaSpent());
        ObjectNode estimate = n.putObject("estimate");
        number(estimate, "value", p.estimate());
        number(estimate, "lower", p.intervalLower());
        number(estimate, "upper", p.intervalUpper());
        ObjectNode relative = n.putObject("relative");
        number(relative, "value", p.relative());
        number(relative, "lower", p.relativeLower());
        number(relative, "upper", p.relativeUpper());
        n.put("decision", p.decision().label());
        return n;
    }

    private static void number(ObjectNode n, String field, double value) {
        if (Double.isFinite(value)) {
            n.put(field, value);
        } else {
            n.putNull(field);
        }
    }

    private static Response error(int status, String message) throws Exception {
        return Response.json(status, JSON.writeValueAsBytes(JSON.createObjectNode().put("error", message)));
    }
}
