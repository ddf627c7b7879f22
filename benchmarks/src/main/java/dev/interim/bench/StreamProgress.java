package dev.interim.bench;

import java.io.PrintStream;

/**
 * The progress line on stderr: on a terminal one line redrawn in place (with {@code \r}) a few
 * times a second; in a pipe or a file one line every few seconds, so that a log stays short.
 */
final class StreamProgress {
    private static final long TERMINAL_EVERY_NANOS = 200_000_000L;
    private static final long PIPE_EVERY_NANOS = 5_000_000_000L;

    private final PrintStream out;
    private final boolean terminal;
    private long lastShown = System.nanoTime();
    private int drawn;

    StreamProgress(PrintStream out, boolean terminal) {
        this.out = out;
        this.terminal = terminal;
    }

    /** Whether a line is due now: call {@link #show} only then, so that the line is built rarely. */
    boolean due() {
        return System.nanoTime() - lastShown >= (terminal ? TERMINAL_EVERY_NANOS : PIPE_EVERY_NANOS);
    }

    void show(String line) {
        lastShown = System.nanoTime();
        if (terminal) {
            out.print("\r" + line + " ".repeat(Math.max(0, drawn - line.length())));
            drawn = Math.max(drawn, line.length());
        } else {
            out.println(line);
        }
        out.flush();
    }

    /** Ends the progress of a phase: wipes the line on a terminal, and prints {@code line} (if any) for good. */
    void done(String line) {
        if (terminal && drawn > 0) {
            out.print("\r" + " ".repeat(drawn) + "\r");
            drawn = 0;
        }
        if (line != null) {
            out.println(line);
        }
        out.flush();
        lastShown = System.nanoTime();
    }
}
