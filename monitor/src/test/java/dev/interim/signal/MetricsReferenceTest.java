package dev.interim.signal;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.experiment.ExperimentMonitor;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Set;
import java.util.TreeSet;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;

/**
 * The metrics reference (docs/metrics.md) and the alerting rules (config/alerts.yml) against the
 * meters actually scraped: every scraped name is documented, and every name the rules use is
 * scraped, so a renamed meter cannot silently break an alert.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class MetricsReferenceTest {
    private static final Pattern OUR_NAME = Pattern.compile("\\binterim_[a-z_]+\\b");

    @Test
    void everyScrapedMeterIsDocumentedAndEveryRuleUsesAScrapedMeter() throws IOException {
        Set<String> scraped = scrapedNames();
        Set<String> documented = names(Files.readString(file("docs/metrics.md")));
        Set<String> inRules = names(Files.readString(file("config/alerts.yml")));

        assertThat(scraped).hasSizeGreaterThan(15);
        assertThat(documented).containsAll(scraped);
        assertThat(scraped).as("meters used by config/alerts.yml").containsAll(inRules);
        assertThat(inRules).contains("interim_paging", "interim_decision", "interim_held", "interim_sample_ratio_mismatch",
                "interim_events_accepted_total", "interim_owned", "interim_assigned");
    }

    /** Sample names of a scrape in which every meter has a series, with the summary's suffixes folded. */
    private static Set<String> scrapedNames() {
        Meters meters = new Meters();
        ExperimentMonitor monitor = MetersTest.killOnHarm();
        meters.register(monitor);
        MetersTest.lookUntilStopped(monitor, meters);
        meters.eventRejected("not-json");
        meters.webhook(new DeliveryResult("x", DeliveryResult.Outcome.EXHAUSTED, 3, 503, null));
        Set<String> names = new TreeSet<>();
        for (Scrape.Sample s : Scrape.of(meters.scrape()).samples()) {
            names.add(s.name().replaceAll("_(count|sum)$", ""));
        }
        return names;
    }

    private static Set<String> names(String text) {
        Set<String> names = new TreeSet<>();
        Matcher m = OUR_NAME.matcher(text);
        while (m.find()) {
            names.add(m.group());
        }
        return names;
    }

    /** A file of the repository, found from the module directory the tests run in. */
    static Path file(String relative) {
        for (Path dir = Path.of("").toAbsolutePath(); dir != null; dir = dir.getParent()) {
            Path candidate = dir.resolve(relative);
            if (Files.isRegularFile(candidate)) {
                return candidate;
            }
        }
        throw new AssertionError(relative + " not found above " + Path.of("").toAbsolutePath());
    }
}
