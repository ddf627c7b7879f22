package dev.interim.cli;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.PrintWriter;
import java.io.StringWriter;
import org.junit.jupiter.api.Test;
import picocli.CommandLine;

/**
 * The command's contract: help and version, and exit codes 0 (success), 2 (bad usage or input) and
 * 1 (failure). No statistical values here; the exit-code convention is common practice for
 * command-line tools (and the project's rule).
 */
class InterimCommandTest {

    @Test
    void helpOfTheTopCommandListsTheCommandsAndExitsZero() {
        Cli.Result r = Cli.run("--help");

        assertThat(r.exit()).isZero();
        assertThat(r.out()).contains("Usage: interim", "plan");
        assertThat(r.err()).isEmpty();
    }

    @Test
    void everyCommandHasHelpThatExitsZero() {
        CommandLine cli = Interim.commandLine();
        assertThat(cli.getSubcommands()).isNotEmpty();
        // picocli's tracer warns on System.err about a description it cannot format (an unescaped '%').
        java.io.PrintStream stderr = System.err;
        java.io.ByteArrayOutputStream traced = new java.io.ByteArrayOutputStream();
        System.setErr(new java.io.PrintStream(traced, true, java.nio.charset.StandardCharsets.UTF_8));
        try {
            for (String name : cli.getSubcommands().keySet()) {
                Cli.Result r = Cli.run(name, "--help");
                assertThat(r.exit()).as(name).isZero();
                assertThat(r.out()).as(name).contains("Usage: interim " + name);
            }
        } finally {
            System.setErr(stderr);
        }
        assertThat(traced.toString(java.nio.charset.StandardCharsets.UTF_8)).doesNotContain("picocli WARN");
    }

    @Test
    void versionIsPrinted() {
        Cli.Result r = Cli.run("--version");

        assertThat(r.exit()).isZero();
        assertThat(r.out().strip()).isEqualTo("interim 0.1.0");
    }

    @Test
    void noCommandIsAUsageError() {
        Cli.Result r = Cli.run();

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines()).singleElement().asString().startsWith("interim: ").contains("plan");
    }

    @Test
    void anUnknownCommandIsNamed() {
        Cli.Result r = Cli.run("forecast");

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines()).singleElement().asString()
                .startsWith("interim: unknown command 'forecast': use plan, check, run, demo")
                .endsWith("; see 'interim --help'");
    }

    @Test
    void anUnexpectedFailureExitsWithOneOnOneLine() {
        StringWriter err = new StringWriter();
        CommandLine cli = Interim.commandLine(new PrintWriter(new StringWriter()), new PrintWriter(err));

        int exit = new UserErrorHandler().handleExecutionException(new IllegalStateException("grid\nexhausted"), cli, null);

        assertThat(exit).isEqualTo(1);
        assertThat(err.toString().lines().toList()).singleElement().asString()
                .startsWith("interim: unexpected failure (IllegalStateException: grid exhausted)");
    }

    @Test
    void anIllegalArgumentFromTheStatisticsIsBadInput() {
        StringWriter err = new StringWriter();
        CommandLine cli = Interim.commandLine(new PrintWriter(new StringWriter()), new PrintWriter(err));

        int exit = new UserErrorHandler().handleExecutionException(
                new IllegalArgumentException("alpha must lie strictly between 0 and 1, got 2.0"), cli.getSubcommands().get("plan"), null);

        assertThat(exit).isEqualTo(2);
        assertThat(err.toString()).isEqualTo("interim: alpha must lie strictly between 0 and 1, got 2.0; see 'interim plan --help'"
                + System.lineSeparator());
    }

    /**
     * A value from the command line is quoted like a configuration value: cut at 80 characters with
     * its length, invisible and steering characters escaped (dev.interim.text.UserText), so a bad
     * argument cannot turn the error line into a screenful or reorder it on the terminal.
     */
    @Test
    void aBadArgumentIsQuotedCutAndEscaped() {
        String format = "x".repeat(5000) + "\u202E";
        Cli.Result r = Cli.run("plan", "--alpha", "0.05", "--looks", "3", "--format", format);

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.errLines()).singleElement().asString()
                .startsWith("interim: unknown --format '" + "x".repeat(80) + "…' (5001 characters): use ")
                .hasSizeLessThan(300);
        Cli.Result unknown = Cli.run("pl\u200Ban");
        assertThat(unknown.exit()).isEqualTo(2);
        assertThat(unknown.err()).contains("unknown command 'pl\\u200Ban'").doesNotContain("\u200B");
    }
}
