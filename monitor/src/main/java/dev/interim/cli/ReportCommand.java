package dev.interim.cli;

import dev.interim.dashboard.DaemonClient;
import dev.interim.dashboard.Report;
import dev.interim.experiment.ExperimentView;
import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Path;
import java.time.Instant;
import java.util.concurrent.Callable;
import java.util.stream.Collectors;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/**
 * {@code interim report --experiment ID}: the post-mortem report of one experiment, fetched from a
 * running daemon's JSON API and written as one self-contained HTML file ({@link Report}). An
 * unreachable daemon or an unknown experiment is bad input: one line on stderr, exit code 2.
 */
@Command(name = "report",
        mixinStandardHelpOptions = true,
        version = Interim.VERSION,
        sortOptions = false,
        description = {
            "Write the post-mortem report of one experiment as a self-contained HTML file: its state, the outcome of "
                    + "every arm x metric (final decision, deciding look, effect with its repeated confidence interval), "
                    + "the design (alpha, sides, spending function) and the look-history chart and table of each.",
            "The experiment is read from a running daemon's JSON API (GET /api/experiments/ID).",
        },
        footerHeading = "%nExamples:%n",
        footer = {
            "  interim report --experiment quorvel-payments-2026-12",
            "  interim report --experiment checkout-canary --from http://10.0.4.7:8080 --out /tmp/canary.html",
        })
public final class ReportCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Option(names = "--experiment", paramLabel = "ID", required = true, description = "The experiment's id, as configured.")
    String experiment;

    @Option(names = "--from", paramLabel = "URL", defaultValue = DaemonClient.DEFAULT_ADDRESS,
            description = "The daemon's HTTP address (default: ${DEFAULT-VALUE}).")
    String from;

    @Option(names = "--out", paramLabel = "FILE",
            description = "Where to write the report (default: report-ID.html in the current directory).")
    Path out;

    @Override
    public Integer call() {
        DaemonClient daemon = DaemonClient.at(from);
        ExperimentView view = daemon.experiment(experiment);
        Path file = out != null ? out : Path.of(defaultFileName(experiment));
        try {
            Report.write(view, file, daemon.address(), Instant.now());
        } catch (IOException e) {
            throw new IllegalArgumentException("cannot write the report to " + file + " (" + e.getMessage() + ")", e);
        }
        PrintWriter stdout = spec.commandLine().getOut();
        stdout.println("report of " + view.id() + " written to " + file.toAbsolutePath());
        stdout.println("  " + view.comparisons().stream()
                .map(c -> c.arm() + " " + c.metric() + ": " + c.decision().label())
                .collect(Collectors.joining("; ")));
        stdout.flush();
        return Interim.OK;
    }

    /** {@code report-<id>.html}, with characters unsafe in a file name replaced by '_'. */
    static String defaultFileName(String id) {
        return "report-" + id.replaceAll("[^A-Za-z0-9._-]", "_") + ".html";
    }
}
