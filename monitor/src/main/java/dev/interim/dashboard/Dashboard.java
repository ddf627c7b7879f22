package dev.interim.dashboard;

import dev.interim.experiment.ExperimentView;
import dev.interim.http.HttpEndpoint;
import dev.interim.http.HttpEndpoint.Response;
import java.nio.charset.StandardCharsets;
import java.time.Clock;
import java.util.Map;
import java.util.Objects;
import java.util.function.Supplier;

/**
 * The dashboard's routes on the daemon's HTTP endpoint: {@code GET /dashboard}, the page, and
 * {@code GET /dashboard/fragment}, the part it refreshes by itself every few seconds. Both render the
 * immutable experiment views of the moment; nothing is cached or fetched from elsewhere.
 */
public final class Dashboard {
    static final String HTML = "text/html; charset=utf-8";

    private Dashboard() {}

    /**
     * Adds the dashboard's routes to {@code endpoint}, showing {@code views} (e.g. {@code judge::views}),
     * dated by {@code clock} ("as of", "ago"): the daemon passes the clock its judge looks by.
     */
    public static void install(HttpEndpoint endpoint, Supplier<Map<String, ExperimentView>> views, Clock clock) {
        Objects.requireNonNull(views, "views");
        Objects.requireNonNull(clock, "clock");
        endpoint.route("GET", "/dashboard", r -> html(DashboardPage.page(views.get().values(), clock.instant())));
        endpoint.route("GET", "/dashboard/fragment", r -> html(DashboardPage.fragment(views.get().values(), clock.instant())));
    }

    private static Response html(String page) {
        return new Response(200, HTML, page.getBytes(StandardCharsets.UTF_8));
    }
}
