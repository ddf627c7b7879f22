package dev.interim.cli;

import dev.interim.demo.Demo;
import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/** {@code interim demo}: the whole daemon on an invented rollout, with an embedded Kafka broker. */
@Command(name = "demo",
        mixinStandardHelpOptions = true,
        version = Interim.VERSION,
        description = {
            "Run the daemon on an invented rollout: an embedded Kafka broker, synthetic shoppers of a fictional "
                    + "checkout service on three builds (stable, a healthy candidate-a, a harmful candidate-b), and a "
                    + "local stand-in for a feature-flag service that verifies each signed kill webhook.",
            "Prints each decision record as one JSON line on stdout as it happens, progress on stderr, and a "
                    + "summary at the end. Exits 0 when candidate-b was stopped for harm and candidate-a was not.",
        })
public final class DemoCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Option(names = "--keep-running", description = "Keep the daemon and the traffic going until interrupted (Ctrl-C), "
            + "for exploring /metrics.")
    boolean keepRunning;

    @Option(names = "--minutes", paramLabel = "M", defaultValue = "4",
            description = "Give up after this many minutes if nothing was decided (default: ${DEFAULT-VALUE}).")
    double minutes;

    @Option(names = "--save-events", paramLabel = "FILE",
            description = "Also write every event sent to FILE, one JSON line each, to replay later: "
                    + "interim replay --demo --events FILE.")
    Path saveEvents;

    @Option(names = "--data-dir", paramLabel = "DIR",
            description = "Where the embedded broker keeps its data (default: a new temporary directory).")
    Path dataDir;

    @Override
    public Integer call() throws Exception {
        if (!(minutes > 0 && minutes <= 600)) {
            throw new IllegalArgumentException("--minutes must lie between 0 and 600, got " + minutes);
        }
        Path dir = dataDir != null ? dataDir : Files.createTempDirectory("interim-demo-");
        PrintWriter out = spec.commandLine().getOut();
        PrintWriter err = spec.commandLine().getErr();
        Demo demo = new Demo(out, err, dir, Duration.ofMillis((long) (minutes * 60_000)),
                keepRunning ? Demo.Ending.KEEP_RUNNING : Demo.Ending.AFTER_VERDICT, saveEvents);
        return demo.run() ? Interim.OK : Interim.FAILURE;
    }
}
