package dev.interim.replay;

import static org.assertj.core.api.Assertions.assertThat;

import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.Locale;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.condition.EnabledIfSystemProperty;
import org.junit.jupiter.api.io.TempDir;

/**
 * Measures the replay's speed on a large invented file; never part of the ordinary test run, and it
 * asserts no time (speed is reported, not tested). Run it with
 * {@code mvn -o -pl monitor test -Dtest=ReplaySpeedCheck -Dinterim.replay.speed=true}: it writes
 * about 1.1 million Mossglint events (1,000,000 uploads by 250,000 users over 11 hours, gzip), replays
 * them twice (the first run warms the JIT) under two designs, and prints events per second.
 */
@EnabledIfSystemProperty(named = "interim.replay.speed", matches = "true")
class ReplaySpeedCheck {
    @TempDir
    Path dir;

    @Test
    void replaysAMillionEvents() throws IOException {
        Path events = dir.resolve("mossglint-1m.ndjson.gz");
        long lines = new MossglintTraffic(1_000_000, 250_000, Instant.parse("2031-03-04T00:00:00Z"), 40, 20310305L)
                .write(events, true);
        assertThat(lines).isGreaterThan(1_000_000);
        // As configured, every comparison is decided within minutes; with large horizons, every look computes.
        Path longer = Scenario.configWith(dir, "max_per_arm: 650", "max_per_arm: 100000");   // users: 250,000 in all
        for (Path config : new Path[] {Scenario.config(), longer}) {
            InterimConfig c = ConfigLoader.loadWithoutSecrets(config);
            for (int run = 1; run <= 2; run++) {
                ReplayResult r = new Replay(c.catalog()).run(events, ReplayListener.NONE);
                assertThat(r.accepted()).isEqualTo(lines);
                double seconds = r.elapsed().toNanos() / 1e9;
                System.out.printf(Locale.ROOT, "replay speed: %s run %d: %,d events, %,d looks in %.2f s: %,.0f events/s "
                        + "(%,.0f per minute); file %,d bytes%n", config.getFileName(), run, r.events(), r.looks(), seconds,
                        r.events() / seconds, 60 * r.events() / seconds, Files.size(events));
            }
        }
    }
}
