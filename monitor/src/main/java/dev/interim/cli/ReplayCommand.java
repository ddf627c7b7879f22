package dev.interim.cli;

import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.experiment.DecisionRecord;
import dev.interim.replay.Replay;
import dev.interim.replay.ReplayListener;
import dev.interim.replay.ReplayResult;
import dev.interim.replay.ReplayText;
import dev.interim.signal.DecisionJson;
import dev.interim.text.UserText;
import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.Locale;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/**
 * {@code interim replay}: the daemon's engine over a file of past events, looking on each
 * experiment's schedule of event time (see {@link Replay}). Prints the decision timeline as it
 * happens and a summary; a progress line on stderr when on a terminal. Nothing is sent anywhere.
 */
@Command(name = "replay",
        mixinStandardHelpOptions = true,
        version = Interim.VERSION,
        sortOptions = false,
        description = {
            "Replay a file of past events through the same engine as the daemon, without Kafka: the same reading, "
                    + "tallies, boundaries and decisions, with each experiment looking every look_every of EVENT time "
                    + "(the time at events.time, which replay requires).",
            "Prints every decision as it happens and a summary: events read, accepted and refused by reason, looks, "
                    + "and per experiment, arm and metric the final decision with its look, fraction, z, boundary and "
                    + "estimate. No webhook is called and nothing is written to Kafka.",
        },
        footerHeading = "%nLook timing:%n",
        footer = {
            "  An experiment's first event starts its clock t0; its looks are due at",
            "  t0 + k * look_every. When an event stamped at or after the next due",
            "  instant arrives, that look runs first, at the due instant, then the event",
            "  counts. At the end of the file a final look runs at the instant then due.",
            "",
            "Examples:",
            "  interim replay --config interim.yaml --events yesterday.ndjson.gz",
            "  interim replay --config interim.yaml --events day.ndjson --format jsonl",
        })
public final class ReplayCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Option(names = "--config", paramLabel = "FILE",
            description = "The YAML configuration (as for run); it must set events.time. Secrets are not read.")
    Path config;

    @Option(names = "--demo", description = "Replay with the demo scenario's configuration (events saved by "
            + "'interim demo --save-events FILE') instead of --config.")
    boolean demo;

    @Option(names = "--events", paramLabel = "FILE", required = true,
            description = "The events: one JSON event per line (NDJSON), in the order they happened; gzip-compressed "
                    + "when the name ends in .gz or the content starts with the gzip magic bytes.")
    Path events;

    @Option(names = "--format", paramLabel = "text|jsonl", defaultValue = "text",
            description = "The timeline on stdout: a readable line per decision (text, the default), or each decision "
                    + "record as one line of JSON as the daemon publishes it (jsonl; the summary then goes to stderr).")
    String format;

    @Option(names = "--report-dir", paramLabel = "DIR",
            description = "Also write a post-mortem report (as 'interim report' makes from a running daemon) for each "
                    + "experiment, as DIR/report-<experiment>.html.")
    Path reportDir;

    /** Whether stderr is a terminal; null: ask {@link System#console()}. Tests set it. */
    Boolean terminal;

    @Override
    public Integer call() throws Exception {
        boolean jsonl = jsonl(format);
        if (demo == (config != null)) {
            throw new IllegalArgumentException(demo ? "give either --config or --demo, not both"
                    : "give --config FILE (a YAML configuration with events.time), or --demo");
        }
        InterimConfig c = demo ? dev.interim.demo.DemoScenario.configuration() : ConfigLoader.loadWithoutSecrets(config);
        if (c.events().time().isEmpty()) {
            throw new IllegalArgumentException((demo ? "the demo scenario" : config.toString()) + ": " + Replay.missingTime());
        }
        PrintWriter out = spec.commandLine().getOut();
        PrintWriter err = spec.commandLine().getErr();
        ReplayText text = new ReplayText(c.catalog());
        ProgressBar bar = (terminal != null ? terminal : System.console() != null) ? new ProgressBar(err, "replay", "events", System::nanoTime) : null;
        ReplayResult result = new Replay(c.catalog()).run(events, new ReplayListener() {
            @Override
            public void decided(DecisionRecord d) {
                if (bar != null) {
                    bar.clear();
                }
                out.println(jsonl ? DecisionJson.writeString(d) : text.line(d));
                out.flush();
            }

            @Override
            public void progressed(Progress p) {
                if (bar != null && p.done()) {
                    bar.clear();
                } else if (bar != null) {
                    bar.show(p.fractionRead(), p.events());
                }
            }
        });
        text.summary(result, events.toString(), jsonl ? err : out);
        if (reportDir != null) {
            java.nio.file.Files.createDirectories(reportDir);
            for (var view : result.views().values()) {
                Path file = reportDir.resolve("report-" + view.id() + ".html");
                dev.interim.dashboard.Report.write(view, file, "replay of " + events.getFileName(), java.time.Instant.now());
                err.println("interim: wrote " + file);
            }
            err.flush();
        }
        return Interim.OK;
    }

    private static boolean jsonl(String format) {
        String f = format.strip().toLowerCase(Locale.ROOT);
        if (!f.equals("text") && !f.equals("jsonl")) {
            throw new IllegalArgumentException("unknown --format " + UserText.quoted(format) + ": use text or jsonl");
        }
        return f.equals("jsonl");
    }
}
