package dev.interim.demo;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
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
 * stopped for harm on a guardrail and switched off; the healthy one must not be stopped. No
 * statistical values here; the scenario's rates are made up (see DemoTraffic).
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
    }
}
