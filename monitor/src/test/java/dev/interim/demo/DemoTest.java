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
class DemoTest {

    @Test
    @Timeout(300)
    void theDemoStopsTheHarmfulBuildAndNotTheHealthyOne(@TempDir Path dir) throws Exception {
        StringWriter out = new StringWriter();
        StringWriter err = new StringWriter();
        boolean ok = new Demo(new PrintWriter(out), new PrintWriter(err), dir, Duration.ofMinutes(3), false).run();
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
    }
}
