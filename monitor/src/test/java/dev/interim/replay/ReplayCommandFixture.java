package dev.interim.replay;

import java.io.IOException;
import java.nio.file.Path;
import java.time.Instant;

/** Lets tests of other packages write invented Mossglint traffic (MossglintTraffic is package-private). */
public final class ReplayCommandFixture {
    /** Writes about {@code events} upload events (and the shares after them) to {@code file}, gzip when it ends in .gz. */
    public long writeEvents(Path file, int events) throws IOException {
        return new MossglintTraffic(events, events / 4, Instant.parse("2031-03-04T09:00:07.315Z"), 25, 20310306L)
                .write(file, file.toString().endsWith(".gz"));
    }
}
