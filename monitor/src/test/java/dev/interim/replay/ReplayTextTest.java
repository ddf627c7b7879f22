package dev.interim.replay;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.SampleRatio;
import java.io.IOException;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The replay summary's table on a small invented experiment whose numbers are known by
 * construction: the relative column of a comparison that looked, and the reason a comparison that
 * never looked gives.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class ReplayTextTest {
    private static final String CONFIG = """
            kafka:
              input_topics: [brisling.events]
            events:
              experiment: /exp
              arm: /arm
              time: /at
            experiments:
              - id: brisling-thumbs
                control: a
                treatments: [b]
                look_every: 1m
                min_per_arm: 100
                metrics:
                  - name: render-ms
                    kind: event-mean
                    role: guardrail
                    worse: higher
                    field: /ms
                    max_per_arm: 200
                  - name: crashes
                    kind: event-rate
                    role: guardrail
                    worse: higher
                    field: /crash
                    counts_if: {equals: true}
                    max_per_arm: 200
            """;

    @TempDir
    Path dir;

    /**
     * 150 events per arm, one a second, arms alternating. Control's render times alternate 50 and
     * 160 ms (mean 105), the treatment's 55 and 165 ms (mean 110): the relative change, computed by
     * hand, is 110/105 − 1 = +4.76% (3 significant digits). Only the first 20 events of each arm
     * carry /crash, below min_per_arm = 100, so crashes never has a look.
     */
    @Test
    void theSummaryShowsTheRelativeChangeAndWhyAComparisonNeverLooked() throws IOException {
        InterimConfig config = ConfigLoader.parse(CONFIG, Map.of());
        Instant t0 = Instant.parse("2031-05-02T10:00:00Z");
        List<String> lines = new ArrayList<>();
        for (int i = 0; i < 300; i++) {
            boolean control = i % 2 == 0;
            int k = i / 2;
            int ms = (control ? 50 : 55) + (k % 2 == 0 ? 0 : 110);
            lines.add("{\"exp\":\"brisling-thumbs\",\"arm\":\"" + (control ? "a" : "b") + "\",\"at\":\"" + t0.plusSeconds(i)
                    + "\",\"ms\":" + ms + (k < 20 ? ",\"crash\":false" : "") + "}");
        }
        Path events = Files.write(dir.resolve("brisling.ndjson"), lines);
        ReplayResult result = new Replay(config.catalog()).run(events, new ReplayListener() {});
        StringWriter text = new StringWriter();
        new ReplayText(config.catalog()).summary(result, "brisling.ndjson", new PrintWriter(text));
        List<String> out = text.toString().lines().toList();

        assertThat(out).anyMatch(l -> l.startsWith("  exposures: a 150, b 150; sample ratio p = ") && l.endsWith("; arms assigned per event"));
        String header = out.stream().filter(l -> l.startsWith("  arm ")).findFirst().orElseThrow();
        assertThat(header).endsWith("interval" + " ".repeat(header.indexOf("relative") - header.indexOf("interval") - 8) + "relative");
        String render = out.stream().filter(l -> l.startsWith("  b    render-ms")).findFirst().orElseThrow();
        assertThat(render).contains(" +4.76% [");
        assertThat(render.substring(header.indexOf("relative"))).startsWith("+4.76% [").endsWith(", ∞)");
        String crashes = out.stream().filter(l -> l.startsWith("  b    crashes")).findFirst().orElseThrow();
        assertThat(crashes).endsWith("too few observations: each arm needs min_per_arm = 100, has 20 and 20 (control)")
                .doesNotContain("too few observations to look");
    }

    /** A comparison without a look and without a reason (e.g. held before any look) keeps the old words. */
    @Test
    void anOutcomeWithoutAReasonKeepsTheOldWords() {
        InterimConfig config = ConfigLoader.parse(CONFIG, Map.of());
        Instant t0 = Instant.parse("2031-05-02T10:00:00Z");
        ExperimentView view = new ExperimentView("brisling-thumbs", "a", List.of("b"), true, true, "operator",
                new SampleRatio(0.5, false), t0, Map.of("a", 10L, "b", 10L), Map.of(), List.of());
        ExperimentOutcome outcome = new ExperimentOutcome("brisling-thumbs", 20, 0, 1, Duration.ofMinutes(1), t0, view,
                List.of(new ComparisonOutcome("b", "crashes", "guardrail", Decision.HELD, null)));
        ReplayResult result = new ReplayResult(20, 20, Map.of(), Map.of(), 1, List.of(), List.of(outcome), Duration.ofSeconds(1));
        StringWriter text = new StringWriter();
        new ReplayText(config.catalog()).summary(result, "brisling.ndjson", new PrintWriter(text));
        assertThat(text.toString().lines().filter(l -> l.startsWith("  b    crashes")).findFirst().orElseThrow())
                .endsWith("too few observations to look");
    }

    /**
     * A tiny sample-ratio p-value reads like a number, not a row of zeros; the same words as the
     * dashboard and the report ({@code dev.interim.text.Numbers.pValue}). Common practice.
     */
    @Test
    void aTinySampleRatioPValueIsWrittenWithAnExponent() {
        InterimConfig config = ConfigLoader.parse(CONFIG, Map.of());
        Instant t0 = Instant.parse("2031-05-02T10:00:00Z");
        ExperimentView view = new ExperimentView("brisling-thumbs", "a", List.of("b"), true, true, "sample-ratio mismatch",
                new SampleRatio(2.62e-24, true), t0, Map.of("a", 9_000L, "b", 7_000L), Map.of(), List.of());
        ExperimentOutcome outcome = new ExperimentOutcome("brisling-thumbs", 16_000, 0, 1, Duration.ofMinutes(1), t0, view,
                List.of(new ComparisonOutcome("b", "crashes", "guardrail", Decision.HELD, null)));
        ReplayResult result = new ReplayResult(16_000, 16_000, Map.of(), Map.of(), 1, List.of(), List.of(outcome), Duration.ofSeconds(1));
        StringWriter text = new StringWriter();
        new ReplayText(config.catalog()).summary(result, "brisling.ndjson", new PrintWriter(text));
        assertThat(text.toString()).contains("; sample ratio p = 2.6e-24; ").doesNotContain("0.0000");
    }
}
