package dev.interim.dashboard;

import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.ExperimentView.ComparisonView;
import java.time.Instant;
import java.util.Collection;
import java.util.Comparator;
import java.util.List;

/**
 * The dashboard as HTML: {@link #page} is the whole document (inline style, a small inline script,
 * nothing fetched from elsewhere); {@link #fragment} is its changing part, which the script fetches
 * from {@code dashboard/fragment} every {@value #REFRESH_SECONDS} seconds and swaps in. Without
 * script the page reloads itself at the same pace.
 */
final class DashboardPage {
    static final int REFRESH_SECONDS = 5;

    private DashboardPage() {}

    /** The whole page. */
    static String page(Collection<ExperimentView> views, Instant now) {
        String fragment = fragment(views, now);
        return """
                <!DOCTYPE html>
                <html lang="en">
                <head>
                <meta charset="utf-8">
                <meta name="viewport" content="width=device-width, initial-scale=1">
                <meta http-equiv="Content-Security-Policy" content="%s">
                <noscript><meta http-equiv="refresh" content="%d"></noscript>
                <link rel="icon" href="data:,">
                <title>Interim dashboard · %s</title>
                <style>
                %s</style>
                </head>
                <body data-refreshes="0">
                <div class="band"><h1>Interim</h1><span class="what">live decisions of the group-sequential monitor</span>
                <span class="refresh" id="refresh-status" aria-live="polite">as of %s · refreshes every %d s</span></div>
                <main id="experiments">
                %s</main>
                <div class="page"><div class="guide">
                <p><strong>Reading a chart.</strong> Z is the treatment minus control over its standard error, recomputed on all
                data at every look and plotted against the information fraction (1 = the planned maximum). The dashed and dotted
                lines are the boundaries of the design: crossing one stops the arm — for harm, benefit or futility, as the label
                at its end says. Boundaries start high and come down as information accrues and α is spent, so that looking
                often still stops falsely at most α of the time. The ringed point is the current look.</p>
                <p>A held experiment makes no automated decision: its split does not match the configuration (sample-ratio
                mismatch) or an operator held it. The effect is treatment minus control (percentage points for rates) with its
                repeated confidence interval, which covers the true effect at every look at once with the stated level.</p>
                </div></div>
                <script>
                %s</script>
                </body>
                </html>
                """.formatted(Style.contentSecurityPolicy(true), REFRESH_SECONDS, summary(views), Style.CSS,
                Wording.time(now), REFRESH_SECONDS, fragment, SCRIPT);
    }

    /** The experiments, sorted by id: what the page refreshes. */
    static String fragment(Collection<ExperimentView> views, Instant now) {
        StringBuilder out = new StringBuilder(16384);
        List<ExperimentView> sorted = views.stream().sorted(Comparator.comparing(ExperimentView::id)).toList();
        out.append("<div id=\"content\" data-as-of=\"").append(now).append("\" data-summary=\"").append(summary(views)).append("\">\n");
        out.append("<p class=\"overview\">").append(summary(views)).append(" · as of ").append(Wording.time(now)).append("</p>\n");
        if (sorted.isEmpty()) {
            out.append("<p class=\"empty\">No experiment is decided by this instance yet. Experiments appear here once "
                    + "the daemon owns them (another instance with the same consumer groups may own some).</p>\n");
        }
        for (int i = 0; i < sorted.size(); i++) {
            out.append(ExperimentSection.html(sorted.get(i), i, now));
        }
        return out.append("</div>\n").toString();
    }

    /** e.g. "2 experiments · 1 arm stopped for harm · 1 held". */
    static String summary(Collection<ExperimentView> views) {
        long harmed = views.stream().flatMap(v -> v.comparisons().stream()).filter(c -> c.decision() == Decision.STOP_HARM)
                .map(ComparisonView::arm).count();
        long held = views.stream().filter(ExperimentView::held).count();
        StringBuilder s = new StringBuilder();
        s.append(views.size()).append(views.size() == 1 ? " experiment" : " experiments");
        s.append(" · ").append(harmed == 0 ? "no stop for harm" : harmed + (harmed == 1 ? " stop for harm" : " stops for harm"));
        if (held > 0) {
            s.append(" · ").append(held).append(" held");
        }
        return s.toString();
    }

    /**
     * Fetches the fragment and swaps it in; on failure keeps what is shown and says so. Counts
     * successful refreshes in {@code body[data-refreshes]} (the browser test reads it). Written
     * without '<' and '&' so that the page's body stays well-formed XML (the tests parse it).
     */
    static final String SCRIPT = """
            (function () {
              var status = document.getElementById('refresh-status');
              var every = %d * 1000;
              var done = 0;
              function two(n) { return ('0' + n).slice(-2); }
              function clock(d) { return two(d.getHours()) + ':' + two(d.getMinutes()) + ':' + two(d.getSeconds()); }
              function refresh() {
                fetch('dashboard/fragment', { cache: 'no-store' })
                  .then(function (r) {
                    if (!r.ok) { throw new Error('HTTP ' + r.status); }
                    return r.text();
                  })
                  .then(function (html) {
                    document.getElementById('experiments').innerHTML = html;
                    var content = document.getElementById('content');
                    if (content) { document.title = 'Interim dashboard · ' + content.getAttribute('data-summary'); }
                    done += 1;
                    document.body.setAttribute('data-refreshes', String(done));
                    status.className = 'refresh';
                    status.textContent = 'updated ' + clock(new Date()) + ' · refreshes every %d s';
                  })
                  .catch(function (e) {
                    status.className = 'refresh stale';
                    status.textContent = 'cannot reach the daemon (' + e.message + ') at ' + clock(new Date())
                        + '; showing the last data, retrying';
                  })
                  .then(function () { setTimeout(refresh, every); });
              }
              setTimeout(refresh, every);
            })();
            """.formatted(REFRESH_SECONDS, REFRESH_SECONDS);
}
