package dev.interim.simulate;

import java.io.PrintWriter;
import java.util.Locale;
import java.util.function.LongSupplier;

/**
 * A one-line progress bar redrawn in place with a carriage return, for a terminal's standard error:
 * {@code simulate [#########...........]  45%  45,056 of 100,000 runs  0.8 s}. Call
 * {@link #update} from one thread; {@link #finish} ends the line. The clock is passed in.
 */
public final class ProgressBar implements Progress {
    private static final int WIDTH = 30;

    private final PrintWriter err;
    private final LongSupplier nanoTime;
    private final long start;
    private int lastLength;

    /** A bar on {@code err}, timing with {@code nanoTime} (System::nanoTime outside tests). */
    public ProgressBar(PrintWriter err, LongSupplier nanoTime) {
        this.err = err;
        this.nanoTime = nanoTime;
        this.start = nanoTime.getAsLong();
    }

    @Override
    public void update(long done, long total) {
        String line = line(done, total, (nanoTime.getAsLong() - start) / 1e9);
        String pad = " ".repeat(Math.max(0, lastLength - line.length()));
        lastLength = line.length();
        err.print("\r" + line + pad);
        err.flush();
    }

    /** Ends the bar's line. */
    public void finish() {
        if (lastLength > 0) {
            err.println();
            err.flush();
        }
    }

    static String line(long done, long total, double seconds) {
        double share = total == 0 ? 1 : Math.min(1, (double) done / total);
        int filled = (int) Math.floor(share * WIDTH);
        return String.format(Locale.ROOT, "simulate [%s%s] %3d%%  %,d of %,d runs  %.1f s", "#".repeat(filled),
                ".".repeat(WIDTH - filled), (int) Math.floor(share * 100), done, total, seconds);
    }
}
