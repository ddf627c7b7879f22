package dev.interim.cli;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.experiment.DecisionRecord;
import dev.interim.signal.DecisionJson;
import java.io.IOException;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.net.URISyntaxException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import picocli.CommandLine;

/**
 * {@code interim replay} on the invented Mossglint rollout (test resources dev/interim/replay/): the
 * timeline, the summary, the JSON lines, the progress line, and exit code 2 for bad input. What the
 * replay decides is checked in ReplayScenarioTest; here, what the command makes of it.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class ReplayCommandTest {
    @TempDir
    Path dir;

    private static Path resource(String name) {
        try {
            return Path.of(ReplayCommandTest.class.getResource("/dev/interim/replay/" + name).toURI());
        } catch (URISyntaxException e) {
            throw new AssertionError(e);
        }
    }

    private static final String CONFIG = resource("mossglint.yaml").toString();
    private static final String EVENTS = resource("mossglint.ndjson").toString();

    /** The real command line, with replay told whether stderr is a terminal. */
    private static Cli.Result replay(boolean terminal, String... options) {
        StringWriter out = new StringWriter();
        StringWriter err = new StringWriter();
        CommandLine.IFactory factory = new CommandLine.IFactory() {
            @Override
            public <K> K create(Class<K> type) throws Exception {
                if (type == ReplayCommand.class) {
                    ReplayCommand c = new ReplayCommand();
                    c.terminal = terminal;
                    return type.cast(c);
                }
                return CommandLine.defaultFactory().create(type);
            }
        };
        CommandLine cli = new CommandLine(new Interim(), factory);
        UserErrorHandler errors = new UserErrorHandler();
        cli.setParameterExceptionHandler(errors);
        cli.setExecutionExceptionHandler(errors);
        cli.setOut(new PrintWriter(out, true));
        cli.setErr(new PrintWriter(err, true));
        String[] args = new String[options.length + 1];
        args[0] = "replay";
        System.arraycopy(options, 0, args, 1, options.length);
        return new Cli.Result(cli.execute(args), out.toString(), err.toString());
    }

    @Test
    void printsTheTimelineThenTheSummary() {
        Cli.Result r = replay(false, "--config", CONFIG, "--events", EVENTS);

        assertThat(r.err()).isEmpty();
        assertThat(r.exit()).isZero();
        List<String> lines = r.out().lines().toList();
        // The stop as ReplayScenarioTest finds it (one decision); its numbers are the summary's.
        assertThat(lines.get(0)).matches("2031-03-04T\\d\\d:\\d\\d:07\\.315Z  mossglint-uploads-2031-03  encoder-b  "
                + "upload-failures  stop-harm      look \\d+  fraction 0\\.\\d{3}  z \\d\\.\\d{3}  boundary \\d\\.\\d{3}");
        assertThat(r.out()).contains("Replay of " + EVENTS + ": 2,660 events in ")
                .contains("  accepted  2,660\n", "  rejected  0\n", "decisions 1\n")
                .contains("mossglint-uploads-2031-03: 2,660 events from 2031-03-04T09:00:07.315Z; ")
                .contains("exposures: current ", "sample ratio p = ");
        String stopRow = lines.stream().filter(l -> l.startsWith("  encoder-b  upload-failures")).findFirst().orElseThrow();
        assertThat(stopRow).contains("guardrail", "stop-harm", ", ∞) 97.5%");
        String look = lines.get(0).replaceAll(".*  look (\\d+)  .*", "$1");
        assertThat(stopRow.split("\\s+")[5]).isEqualTo(look);
        assertThat(lines.stream().filter(l -> l.startsWith("  encoder-")).count()).as("2 arms x 3 metrics").isEqualTo(6);
    }

    /** A replay can leave the same post-mortem report a running daemon gives (invented scenario; no statistical values). */
    @Test
    void writesAPostMortemReportPerExperiment(@org.junit.jupiter.api.io.TempDir java.nio.file.Path dir) throws IOException {
        Cli.Result r = replay(false, "--config", CONFIG, "--events", EVENTS, "--report-dir", dir.toString());

        assertThat(r.exit()).isZero();
        java.nio.file.Path report = dir.resolve("report-mossglint-uploads-2031-03.html");
        assertThat(r.err()).contains("wrote " + report);
        String html = java.nio.file.Files.readString(report);
        assertThat(html).contains("mossglint-uploads-2031-03", "encoder-b", "<svg");
    }

    @Test
    void jsonLinesAreDecisionRecordsAndTheSummaryGoesToStderr() {
        Cli.Result r = replay(false, "--config", CONFIG, "--events", EVENTS, "--format", "jsonl");

        assertThat(r.exit()).isZero();
        List<String> lines = r.out().lines().toList();
        assertThat(lines).hasSize(1);
        DecisionRecord d = DecisionJson.read(lines.get(0).getBytes(StandardCharsets.UTF_8));
        assertThat(d.arm()).isEqualTo("encoder-b");
        assertThat(d.decision()).isEqualTo("stop-harm");
        assertThat(d.dryRun()).as("dry_run defaults to true").isTrue();
        assertThat(r.err()).contains("Replay of ", "accepted  2,660");
    }

    @Test
    void onATerminalAProgressLineIsDrawnOnStderrAndWipedAtTheEnd() throws IOException {
        Path big = dir.resolve("many.ndjson.gz");
        new dev.interim.replay.ReplayCommandFixture().writeEvents(big, 120_000);
        Cli.Result r = replay(true, "--config", CONFIG, "--events", big.toString());

        assertThat(r.exit()).isZero();
        assertThat(r.err()).startsWith("\rreplay [").contains("events/s").doesNotContain("\n");
        assertThat(r.err()).endsWith("\r");
        assertThat(r.out()).contains("stop-harm").doesNotContain("\r");
    }

    @Test
    void withoutEventTimeTheConfigurationIsBadInput() throws IOException {
        Path config = Files.writeString(dir.resolve("no-time.yaml"), Files.readString(Path.of(CONFIG)).replace("  time: /at\n", ""));
        Cli.Result r = replay(false, "--config", config.toString(), "--events", EVENTS);

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.out()).isEmpty();
        assertThat(r.errLines()).singleElement().asString()
                .startsWith("interim: " + config + ": replay needs each event's time")
                .contains("events.time", "such as time: /timestamp")
                .endsWith("; see 'interim replay --help'");
    }

    @Test
    void aMissingEventsFileIsBadInput() {
        Cli.Result r = replay(false, "--config", CONFIG, "--events", dir.resolve("gone.ndjson").toString());
        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines()).singleElement().asString().contains("gone.ndjson: no such file");
    }

    @Test
    void anInvalidConfigurationIsBadInput() throws IOException {
        Path config = Files.writeString(dir.resolve("bad.yaml"), Files.readString(Path.of(CONFIG)).replace("look_every: 1m", "look_every: 0s"));
        Cli.Result r = replay(false, "--config", config.toString(), "--events", EVENTS);
        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines()).singleElement().asString().contains("bad.yaml", "look_every");
    }

    @Test
    void anUnknownFormatOrAMissingOptionIsBadUsage() {
        Cli.Result format = replay(false, "--config", CONFIG, "--events", EVENTS, "--format", "csv");
        assertThat(format.exit()).isEqualTo(2);
        assertThat(format.errLines()).singleElement().asString().contains("unknown --format 'csv': use text or jsonl");

        Cli.Result missing = replay(false, "--config", CONFIG);
        assertThat(missing.exit()).isEqualTo(2);
        assertThat(missing.errLines()).singleElement().asString().contains("--events");
    }
}
