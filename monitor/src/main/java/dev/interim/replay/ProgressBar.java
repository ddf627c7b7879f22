package dev.interim.replay;

import java.io.PrintWriter;
import java.util.Locale;

/**
 * The replay's progress on one terminal line, redrawn in place with a carriage return: events read,
 * events per second and the share of the file read, with a bar. Meant for a terminal only (a log
 * file would fill with redraws); {@link #clear} wipes the line before other output is written to
 * the same screen. Mutable, one owner.
 */
public final class ProgressBar {
    private static final int WIDTH = 24;

    private final PrintWriter err;
    private int drawn;

    public ProgressBar(PrintWriter err) {
        this.err = err;
    }

    /** Redraws the line; the last report ({@link ReplayListener.Progress#done()}) wipes it. */
    public void show(ReplayListener.Progress p) {
        if (p.done()) {
            clear();
            return;
        }
        String line = line(p);
        err.print("\r" + line + " ".repeat(Math.max(0, drawn - line.length())));
        err.flush();
        drawn = Math.max(drawn, line.length());
    }

    /** Wipes the line, if one is drawn. */
    public void clear() {
        if (drawn > 0) {
            err.print("\r" + " ".repeat(drawn) + "\r");
            err.flush();
            drawn = 0;
        }
    }

    /** The text of the line, such as {@code replay [#########...............]  38%  1,204,331 events  402,110 events/s}. */
    static String line(ReplayListener.Progress p) {
        double f = p.fractionRead();
        int full = (int) Math.floor(f * WIDTH);
        return "replay [" + "#".repeat(full) + ".".repeat(WIDTH - full) + "] "
                + String.format(Locale.ROOT, "%3d%%  %,d events  %,d events/s", (int) Math.floor(100 * f), p.events(),
                Math.round(p.eventsPerSecond()));
    }
}
