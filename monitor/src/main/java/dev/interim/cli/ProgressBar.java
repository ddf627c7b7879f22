package dev.interim.cli;

import dev.interim.text.Numbers;
import java.io.PrintWriter;
import java.util.function.LongSupplier;

/**
 * A command's progress on one terminal line of standard error, redrawn in place with a carriage
 * return: {@code simulate [##########..............]  45%  45,056 of 100,000 runs  56,320 runs/s}
 * or, without a known total, {@code replay [#########...............]  37%  250,000 events  500,000 events/s}.
 * The command names itself and what it counts; the rate is measured on the clock passed in
 * ({@code System::nanoTime} outside tests) from when the bar was made. Meant for a terminal only (a
 * log file would fill with redraws); {@link #clear} wipes the line before other output goes to the
 * same screen, and at the end. Mutable, one owner thread.
 */
final class ProgressBar {
    private static final int WIDTH = 24;

    private final PrintWriter err;
    private final String label;
    private final String unit;
    private final LongSupplier nanoTime;
    private final long start;
    private int drawn;

    /**
     * @param label    the command, first on the line ({@code replay})
     * @param unit     what is counted, plural ({@code events})
     * @param nanoTime the clock, in nanoseconds
     */
    ProgressBar(PrintWriter err, String label, String unit, LongSupplier nanoTime) {
        this.err = err;
        this.label = label;
        this.unit = unit;
        this.nanoTime = nanoTime;
        this.start = nanoTime.getAsLong();
    }

    /** Redraws the line with {@code done} of {@code total} (the share done is their ratio; 100% when total is 0). */
    void show(long done, long total) {
        draw(total <= 0 ? 1 : (double) done / total, done, total);
    }

    /** Redraws the line with {@code done} counted so far and a {@code share} of the work done (0 to 1), the total unknown. */
    void show(double share, long done) {
        draw(share, done, -1);
    }

    /** Wipes the line, if one is drawn. */
    void clear() {
        if (drawn > 0) {
            err.print("\r" + " ".repeat(drawn) + "\r");
            err.flush();
            drawn = 0;
        }
    }

    private void draw(double share, long done, long total) {
        String line = line(label, unit, share, done, total, (nanoTime.getAsLong() - start) / 1e9);
        err.print("\r" + line + " ".repeat(Math.max(0, drawn - line.length())));
        err.flush();
        drawn = Math.max(drawn, line.length());
    }

    /** The text of the line; {@code total} below 0 when unknown, the rate 0 before any time has passed. */
    static String line(String label, String unit, double share, long done, long total, double seconds) {
        double f = Math.max(0, Math.min(1, share));
        int full = (int) Math.floor(f * WIDTH);
        String percent = String.valueOf((int) Math.floor(100 * f));
        return label + " [" + "#".repeat(full) + ".".repeat(WIDTH - full) + "] " + " ".repeat(3 - percent.length())
                + percent + "%  " + Numbers.count(done) + (total >= 0 ? " of " + Numbers.count(total) : "") + " " + unit
                + "  " + Numbers.count(seconds > 0 ? Math.round(done / seconds) : 0) + " " + unit + "/s";
    }
}
