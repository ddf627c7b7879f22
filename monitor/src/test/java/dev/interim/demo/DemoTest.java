package dev.interim.demo;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.interim.experiment.Decision;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.LookPoint;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The README's main command, {@code interim demo}, in-process: real embedded broker, real daemon,
 * real signed webhook verified by the stand-in flag service. The invented harmful build must be
 * stopped for harm on a guardrail and switched off; the healthy one must not be stopped. The
 * harmful build slows a small share of its payments a lot: its p99 latency guardrail must stop it
 * for harm while its mean-latency guardrail, which sees the same values, does not stop it within
 * the demo. No statistical values here; the scenario's rates are made up (see DemoTraffic).
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class DemoTest {

    @Test
    @Timeout(300)
    void theDemoStopsTheHarmfulBuildAndNotTheHealthyOne(@TempDir Path dir) throws Exception {
        StringWriter out = new StringWriter();
        StringWriter err = new StringWriter();
        Path saved = dir.resolve("demo-events.ndjson");
        boolean ok = new Demo(new PrintWriter(out), new PrintWriter(err), dir.resolve("kafka"), Duration.ofMinutes(3), Demo.Ending.AFTER_VERDICT,
                saved).run();
        assertThat(ok).as(err.toString()).isTrue();
        List<JsonNode> records = new ArrayList<>();
        ObjectMapper json = new ObjectMapper();
        for (String line : out.toString().split("\n")) {
            if (line.startsWith("{")) {
                records.add(json.readTree(line));
            }
        }
        assertThat(records).anySatisfy(r -> {
            assertThat(r.path("arm").asText()).isEqualTo("candidate-b");
            assertThat(r.path("role").asText()).isEqualTo("guardrail");
            assertThat(r.path("decision").asText()).isEqualTo("stop-harm");
        });
        assertThat(records).noneSatisfy(r -> {
            assertThat(r.path("arm").asText()).isEqualTo("candidate-a");
            assertThat(r.path("decision").asText()).startsWith("stop");
        });
        assertThat(err.toString()).contains("signature verified; switching off build 'candidate-b'");
        assertThat(out.toString()).contains("Summary");

        // The tail: candidate-b slows 1% of its payments by about 400 ms (DemoTraffic). The p99
        // guardrail stops it for harm and pages; the mean-latency guardrail on the same values has not
        // stopped by the demo's end (on this scenario's traffic it does only at about 3.5 times the p99's).
        assertThat(records).as(out.toString()).anySatisfy(r -> {
            assertThat(r.path("arm").asText()).isEqualTo("candidate-b");
            assertThat(r.path("metric").asText()).isEqualTo("payment-latency-p99");
            assertThat(r.path("role").asText()).isEqualTo("guardrail");
            assertThat(r.path("decision").asText()).isEqualTo("stop-harm");
            assertThat(r.path("action").asText()).isEqualTo("page");
        });
        assertThat(records).as(out.toString()).noneSatisfy(r -> {
            assertThat(r.path("arm").asText()).isEqualTo("candidate-b");
            assertThat(r.path("metric").asText()).isEqualTo("payment-latency-ms");
            assertThat(r.path("decision").asText()).startsWith("stop");
        });
        assertThat(out.toString()).containsPattern("candidate-b +payment-latency-p99 +stop-harm");

        // The same events replayed offline, looks by event time: the same verdict.
        var result = new dev.interim.replay.Replay(DemoScenario.configuration().catalog()).run(saved, new dev.interim.replay.ReplayListener() { });
        var view = result.views().get(DemoTraffic.EXPERIMENT);
        assertThat(result.rejectedTotal()).isZero();
        assertThat(view.comparisons()).anySatisfy(c -> {
            assertThat(c.arm()).isEqualTo("candidate-b");
            assertThat(c.role()).isEqualTo("guardrail");
            assertThat(c.decision()).isEqualTo(dev.interim.experiment.Decision.STOP_HARM);
        });
        assertThat(view.comparisons()).filteredOn(c -> c.arm().equals("candidate-a"))
                .allSatisfy(c -> assertThat(c.decision().isFinal()).isFalse());

        // Replayed, the same: the p99 stops candidate-b for harm, the mean does not by the end. At the
        // p99's stopping look, the mean is below its boundary and its relative change is a small part
        // of the p99's (by the scenario's made-up rates about +2% against about +60%).
        ExperimentView.ComparisonView p99 = comparison(view, "candidate-b", "payment-latency-p99");
        ExperimentView.ComparisonView mean = comparison(view, "candidate-b", "payment-latency-ms");
        assertThat(p99.decision()).isEqualTo(Decision.STOP_HARM);
        assertThat(mean.decision().isFinal()).as("mean-latency guardrail of candidate-b: %s", mean.looks()).isFalse();
        LookPoint stop = p99.looks().stream().filter(l -> l.decision() == Decision.STOP_HARM).findFirst().orElseThrow();
        LookPoint meanThen = mean.looks().stream().filter(l -> !l.at().isAfter(stop.at()))
                .reduce((first, second) -> second).orElseThrow();
        assertThat(meanThen.statistic()).isLessThan(meanThen.upper());
        assertThat(stop.relative()).isGreaterThan(0);
        assertThat(meanThen.relative()).as("mean %s, p99 %s", meanThen, stop).isLessThan(stop.relative() / 4);
    }

    private static ExperimentView.ComparisonView comparison(ExperimentView view, String arm, String metric) {
        return view.comparisons().stream().filter(c -> c.arm().equals(arm) && c.metric().equals(metric)).findFirst()
                .orElseThrow(() -> new AssertionError("no comparison " + arm + " / " + metric + " in "
                        + view.comparisons()));
    }
}
