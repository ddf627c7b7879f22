package dev.interim.replay;

import java.io.BufferedWriter;
import java.io.IOException;
import java.io.OutputStream;
import java.io.OutputStreamWriter;
import java.io.Writer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.SplittableRandom;
import java.util.zip.GZIPOutputStream;

/**
 * An invented rollout, made up for these tests: "Mossglint", a fictional photo-sharing app, tries two
 * new image encoders for its uploads beside the current one. {@code encoder-b} fails about 9% of
 * uploads instead of 3%; {@code encoder-c} behaves like {@code current}. Users are assigned to an
 * arm once, in equal shares, upload now and then, and sometimes share a photo afterwards (the
 * {@code shared} unit-rate). Upload latency is 450 ms plus an exponential tail (mean 350 ms), the
 * same on every arm. Events arrive in time order, gaps exponential.
 *
 * <p>It wrote {@code mossglint.ndjson} (the arguments of {@link #SCENARIO}) and writes the large files
 * of the speed check. Events look like:
 * <pre>{"at":"2031-03-04T09:00:01.482Z","rollout":"mossglint-uploads-2031-03","encoder":"encoder-b","user":"u00412","upload":{"status":"ok","ms":812}}</pre>
 */
final class MossglintTraffic {
    static final String EXPERIMENT = "mossglint-uploads-2031-03";
    static final String[] ARMS = {"current", "encoder-b", "encoder-c"};
    private static final double[] FAILURE = {0.03, 0.09, 0.03};
    private static final double SHARE = 0.12;

    /** The arguments that wrote the test resource mossglint.ndjson. */
    static final MossglintTraffic SCENARIO = new MossglintTraffic(2400, 600, Instant.parse("2031-03-04T09:00:07.315Z"), 1250,
            20310304L);

    private final int events;
    private final int users;
    private final Instant start;
    private final double meanGapMillis;
    private final long stream;

    /**
     * @param events upload events to write (share events come on top)
     * @param users distinct users
     * @param start the time of the first event
     * @param meanGapMillis mean time between events
     * @param stream the random stream's starting value (same value, same file)
     */
    MossglintTraffic(int events, int users, Instant start, double meanGapMillis, long stream) {
        this.events = events;
        this.users = users;
        this.start = start;
        this.meanGapMillis = meanGapMillis;
        this.stream = stream;
    }

    /** Writes the events to {@code file}, gzip-compressed when {@code gzip}; returns the number of lines. */
    long write(Path file, boolean gzip) throws IOException {
        try (OutputStream raw = Files.newOutputStream(file);
             OutputStream o = gzip ? new GZIPOutputStream(raw, 1 << 16) : raw;
             Writer w = new BufferedWriter(new OutputStreamWriter(o, StandardCharsets.UTF_8), 1 << 16)) {
            return write(w);
        }
    }

    long write(Writer out) throws IOException {
        SplittableRandom random = new SplittableRandom(stream);
        int[] armOf = new int[users];
        for (int u = 0; u < users; u++) {
            armOf[u] = random.nextInt(ARMS.length);
        }
        long lines = 0;
        double t = start.toEpochMilli();
        StringBuilder line = new StringBuilder(160);
        for (int i = 0; i < events; i++) {
            int user = random.nextInt(users);
            int arm = armOf[user];
            boolean failed = random.nextDouble() < FAILURE[arm];
            String status = failed ? (random.nextDouble() < 0.3 ? "timeout" : "failed") : "ok";
            long ms = 450 + Math.round(-350 * Math.log(1 - random.nextDouble()));
            line.setLength(0);
            head(line, (long) t, arm, user);
            line.append(",\"upload\":{\"status\":\"").append(status).append("\",\"ms\":").append(ms).append("}}\n");
            out.append(line);
            lines++;
            if (!failed && random.nextDouble() < SHARE) {
                t += 1 + random.nextInt(400);
                line.setLength(0);
                head(line, (long) t, arm, user);
                line.append(",\"step\":\"shared\"}\n");
                out.append(line);
                lines++;
            }
            t += -meanGapMillis * Math.log(1 - random.nextDouble());
        }
        return lines;
    }

    private static void head(StringBuilder line, long millis, int arm, int user) {
        line.append("{\"at\":\"").append(Instant.ofEpochMilli(millis)).append("\",\"rollout\":\"").append(EXPERIMENT)
                .append("\",\"encoder\":\"").append(ARMS[arm]).append("\",\"user\":\"u");
        String id = Integer.toString(user);
        for (int pad = id.length(); pad < 5; pad++) {
            line.append('0');
        }
        line.append(id).append('"');
    }

    /** Writes the scenario: {@code MossglintTraffic FILE} (the resource), or {@code FILE EVENTS USERS} for a large file. */
    public static void main(String[] args) throws IOException {
        Path file = Path.of(args[0]);
        MossglintTraffic traffic = args.length == 1 ? SCENARIO
                : new MossglintTraffic(Integer.parseInt(args[1]), Integer.parseInt(args[2]),
                        Instant.parse("2031-03-04T00:00:00Z"), 40, 20310305L);
        long lines = traffic.write(file, file.toString().endsWith(".gz"));
        System.out.println(file + ": " + lines + " lines");
    }
}
