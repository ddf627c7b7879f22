package dev.interim.cli;

import java.io.PrintWriter;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Spec;

/**
 * The {@code interim} command line. Each subcommand is one class, listed once in {@code subcommands}.
 *
 * <p>Exit codes: 0 success, 2 bad usage, bad input or an ordinary problem of the environment (one
 * line on stderr starting with {@code "interim: "}), 1 an unexpected failure. See {@link UserErrorHandler}.
 */
@Command(name = "interim",
        mixinStandardHelpOptions = true,
        version = Interim.VERSION,
        description = "Monitors live A/B experiments and rollouts with group-sequential statistics.",
        subcommands = {
            PlanCommand.class,
            CheckCommand.class,
            RunCommand.class,
            DemoCommand.class,
            ReplayCommand.class,
            SimulateCommand.class,
            ReportCommand.class,
        },
        exitCodeListHeading = "%nExit codes:%n",
        exitCodeList = {
            "0:success",
            "1:unexpected failure (please report it)",
            "2:bad usage, bad input, or an ordinary problem of the environment (a port in use, brokers out of reach)",
        })
public final class Interim implements Callable<Integer> {
    public static final String VERSION = "interim 0.1.0";
    public static final int OK = 0;
    public static final int FAILURE = 1;
    public static final int BAD_INPUT = 2;

    @Spec
    CommandSpec spec;

    public static void main(String[] args) {
        System.exit(commandLine().execute(args));
    }

    /**
     * The configured command line writing to the process's standard output and error, in UTF-8
     * whatever the locale (the output has ∞, – and ≥; a C locale would print them as '?').
     */
    public static CommandLine commandLine() {
        CommandLine cli = configured();
        cli.setOut(new PrintWriter(new java.io.OutputStreamWriter(System.out, java.nio.charset.StandardCharsets.UTF_8), true));
        cli.setErr(new PrintWriter(new java.io.OutputStreamWriter(System.err, java.nio.charset.StandardCharsets.UTF_8), true));
        return cli;
    }

    private static CommandLine configured() {
        CommandLine cli = new CommandLine(new Interim());
        UserErrorHandler errors = new UserErrorHandler();
        cli.setParameterExceptionHandler(errors);
        cli.setExecutionExceptionHandler(errors);
        return cli;
    }

    /** The same command line writing to the given streams (tests, embedding). */
    public static CommandLine commandLine(PrintWriter out, PrintWriter err) {
        CommandLine cli = configured();
        cli.setOut(out);
        cli.setErr(err);
        return cli;
    }

    /** {@code interim} without a command is a usage error. */
    @Override
    public Integer call() {
        throw new CommandLine.ParameterException(spec.commandLine(),
                "name a command: " + String.join(", ", spec.subcommands().keySet()));
    }
}
