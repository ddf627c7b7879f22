package dev.interim.cli;

import dev.interim.config.ConfigException;
import dev.interim.daemon.EnvironmentException;
import dev.interim.text.UserText;
import java.io.PrintWriter;
import picocli.CommandLine;
import picocli.CommandLine.IExecutionExceptionHandler;
import picocli.CommandLine.IParameterExceptionHandler;
import picocli.CommandLine.ParameterException;
import picocli.CommandLine.ParseResult;
import picocli.CommandLine.UnmatchedArgumentException;

/**
 * Turns every failure into one line on stderr and an exit code. Bad usage (picocli's parameter
 * errors) and bad input (an {@link IllegalArgumentException} from the statistics, whose messages are
 * written for users) exit with 2 and point at the command's help; an ordinary problem of the
 * environment ({@link EnvironmentException}: a port in use, brokers out of reach, ...) exits with 2
 * and its message, which says what to do; anything else is a bug and exits with 1. Set the
 * environment variable {@code INTERIM_DEBUG} to also get the stack trace of a bug.
 *
 * <p>A configuration with several problems gets one line per problem (file, key path, rule), then a
 * line counting them. Lines are escaped by {@link UserText} (no control, bidirectional or zero-width
 * character from the input reaches the terminal) and kept to one line each.
 */
final class UserErrorHandler implements IParameterExceptionHandler, IExecutionExceptionHandler {
    static final String PREFIX = "interim: ";

    @Override
    public int handleParseException(ParameterException ex, String[] args) {
        CommandLine command = ex.getCommandLine();
        if (ex instanceof UnmatchedArgumentException unmatched && !command.getSubcommands().isEmpty()
                && !unmatched.isUnknownOption() && !unmatched.getUnmatched().isEmpty()) {
            return badInput(command, "unknown command " + UserText.quoted(unmatched.getUnmatched().get(0)) + ": use "
                    + String.join(", ", command.getSubcommands().keySet()));
        }
        return badInput(command, ex.getMessage());
    }

    @Override
    public int handleExecutionException(Exception ex, CommandLine command, ParseResult parsed) {
        if (ex instanceof ConfigException config && config.problems().size() > 1) {
            PrintWriter err = command.getErr();
            for (ConfigException problem : config.problems()) {
                err.println(PREFIX + oneLine(problem.getMessage()));
            }
            err.flush();
            return badInput(command, config.problems().size() + " problems"
                    + (config.file() == null ? "" : " in " + config.file()) + ", each on a line above");
        }
        if (ex instanceof IllegalArgumentException) {
            return badInput(command, ex.getMessage());
        }
        if (ex instanceof EnvironmentException) {
            PrintWriter err = command.getErr();
            String what = ex.getMessage() == null || ex.getMessage().isBlank() ? "the environment is not as configured"
                    : oneLine(ex.getMessage());
            err.println(PREFIX + what);
            err.flush();
            return Interim.BAD_INPUT;
        }
        PrintWriter err = command.getErr();
        err.println(PREFIX + "unexpected failure (" + ex.getClass().getSimpleName()
                + (ex.getMessage() == null ? "" : ": " + oneLine(ex.getMessage()))
                + "); please report it, with the command you ran");
        if (System.getenv("INTERIM_DEBUG") != null) {
            ex.printStackTrace(err);
        }
        err.flush();
        return Interim.FAILURE;
    }

    private static int badInput(CommandLine command, String message) {
        String what = message == null || message.isBlank() ? "invalid input" : oneLine(message);
        if (what.endsWith(".")) {
            what = what.substring(0, what.length() - 1);
        }
        PrintWriter err = command.getErr();
        err.println(PREFIX + what + "; see '" + command.getCommandSpec().qualifiedName() + " --help'");
        err.flush();
        return Interim.BAD_INPUT;
    }

    private static String oneLine(String text) {
        return UserText.escaped(text.strip().replaceAll("\\s*\\R\\s*", " "));
    }
}
