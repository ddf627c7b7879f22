package dev.interim.daemon;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.Tally;
import dev.interim.stream.BadEventCorpus;
import dev.interim.stream.JsonEventReader;
import dev.interim.stream.TallyStage;
import java.math.BigDecimal;
import java.math.MathContext;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.security.MessageDigest;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Base64;
import java.util.Collections;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.Random;
import java.util.Set;
import java.util.SplittableRandom;
import java.util.TreeMap;
import java.util.TreeSet;
import java.util.function.Supplier;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.header.Header;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * Bad input through the whole daemon, on a real in-process broker: valid events of the invented
 * configuration {@code tile-events.yaml} interleaved with the curated corpus ({@code bad-events.txt}),
 * a few thousand records of random bytes and a few records without a value. Every bad record must
 * land once on the dead-letter topic with its reason header and be counted by reason in
 * {@code interim_events_rejected_total}; every valid event around them must be tallied exactly (the
 * observation gauges after a look, and the successes and means of the experiment views, against
 * ground truth kept by the test); and the daemon must go on reading what comes after.
 *
 * <p>The corpus's records above {@link JsonEventReader#MAX_BYTES} are left to BadEventCorpusTest:
 * the broker's default limit (1 MiB) keeps them off the input topic.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class BadInputDaemonTest {
    /** The fixed random stream the invented events and random bytes are drawn from. */
    private static final long RANDOM_STREAM = 6_2026L;
    private static final String TOPIC = "tiles.events";
    private static final int VALID = 4_000;
    private static final int RANDOM_RECORDS = 3_000;
    private static final int NO_VALUE = 5;

    /** One record to write, and the reason it must get (null: a valid event). */
    private record Sent(byte[] key, byte[] value, String reason) {}

    @Test
    @Timeout(180)
    void badRecordsAreDeadLetteredAndCountedAndEveryValidEventAroundThemIsTallied(@TempDir Path dir) throws Exception {
        InterimConfig config = ConfigLoader.parseWithoutSecrets(BadEventCorpus.text(BadEventCorpus.CONFIG_RESOURCE));
        SplittableRandom random = new SplittableRandom(RANDOM_STREAM);
        Truth truth = new Truth();
        List<Sent> records = new ArrayList<>();
        for (int i = 0; i < VALID; i++) {
            records.add(truth.validEvent(random));
        }
        int bad = 0;
        for (BadEventCorpus.Entry e : BadEventCorpus.entries()) {
            if (e.bytes().length <= JsonEventReader.MAX_BYTES) {
                records.add(new Sent(("corpus-" + e.line()).getBytes(StandardCharsets.UTF_8), e.bytes(), e.reason()));
                bad++;
            }
        }
        for (int i = 0; i < RANDOM_RECORDS; i++) {
            records.add(new Sent(("random-" + i).getBytes(StandardCharsets.UTF_8), notJson(random), "not-json"));
        }
        for (int i = 0; i < NO_VALUE; i++) {
            records.add(new Sent(("no-value-" + i).getBytes(StandardCharsets.UTF_8), null, "missing-field"));
        }
        assertThat(bad).as("corpus records small enough for the broker").isGreaterThan(120);
        Collections.shuffle(records, new Random(random.nextLong()));

        try (Daemon daemon = Daemon.start(config, new Daemon.Options(dir.resolve("kafka"), null, null))) {
            write(daemon, records);
            Map<String, Long> rejected = new TreeMap<>();
            records.stream().filter(r -> r.reason() != null).forEach(r -> rejected.merge(r.reason(), 1L, Long::sum));
            awaitExactly(daemon, truth, rejected);

            // (a) each bad record once on the dead-letter topic, with its reason header
            Map<String, Long> expectedLetters = new TreeMap<>();
            // Dead letters keep at most TallyStage.DEAD_LETTER_MAX_BYTES of a refused record (the rest is cut).
            records.stream().filter(r -> r.reason() != null).forEach(r -> expectedLetters.merge(letter(r.reason(),
                    r.value() != null && r.value().length > TallyStage.DEAD_LETTER_MAX_BYTES
                            ? java.util.Arrays.copyOf(r.value(), TallyStage.DEAD_LETTER_MAX_BYTES) : r.value()), 1L, Long::sum));
            Map<String, Long> letters = new TreeMap<>();
            Map<String, Long> lettersByReason = new TreeMap<>();
            for (ConsumerRecord<byte[], byte[]> r : DaemonIntegrationTest.records(daemon.bootstrapServers(),
                    config.kafka().deadLetterTopic())) {
                Header h = r.headers().lastHeader(TallyStage.REASON_HEADER);
                String reason = h == null ? "(no reason)" : new String(h.value(), StandardCharsets.UTF_8);
                letters.merge(letter(reason, r.value()), 1L, Long::sum);
                lettersByReason.merge(reason, 1L, Long::sum);
            }
            assertThat(lettersByReason).as("dead letters by reason").isEqualTo(rejected);
            Set<String> missing = new TreeSet<>(expectedLetters.keySet());
            missing.removeAll(letters.keySet());
            Set<String> unexpected = new TreeSet<>(letters.keySet());
            unexpected.removeAll(expectedLetters.keySet());
            assertThat(letters.equals(expectedLetters)).as("each bad record dead-lettered once with its reason; "
                    + "%d missing, %d unexpected (reason and SHA-256 of the bytes), e.g. %s %s", missing.size(), unexpected.size(),
                    missing.stream().limit(3).toList(), unexpected.stream().limit(3).toList()).isTrue();

            // (b), (c) counted by reason; every valid event tallied exactly
            assertExactly(daemon, truth, rejected);

            // (d) the daemon goes on: events after all that are counted too
            List<Sent> more = new ArrayList<>();
            for (int i = 0; i < 300; i++) {
                more.add(truth.validEvent(random));
            }
            more.add(new Sent("late-bad".getBytes(StandardCharsets.UTF_8), "{}xyz".getBytes(StandardCharsets.UTF_8), "not-json"));
            rejected.merge("not-json", 1L, Long::sum);
            write(daemon, more);
            awaitExactly(daemon, truth, rejected);
            assertExactly(daemon, truth, rejected);
        }
    }

    /** Random bytes that cannot begin a JSON text: the first is none of JSON's first characters, whitespace or a BOM's. */
    private static byte[] notJson(SplittableRandom random) {
        byte[] b = new byte[1 + random.nextInt(300)];
        for (int i = 0; i < b.length; i++) {
            b[i] = (byte) random.nextInt(256);
        }
        String starts = "{[\"-0123456789tfn \t\r\n";
        while (starts.indexOf(b[0] & 0xff) >= 0 || (b[0] & 0xff) == 0xEF) {
            b[0] = (byte) random.nextInt(256);
        }
        return b;
    }

    private static void write(Daemon daemon, List<Sent> records) {
        Properties p = new Properties();
        p.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, daemon.bootstrapServers());
        p.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
        p.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, ByteArraySerializer.class.getName());
        p.put(ProducerConfig.LINGER_MS_CONFIG, 5);
        try (KafkaProducer<byte[], byte[]> producer = new KafkaProducer<>(p)) {
            for (Sent r : records) {
                producer.send(new ProducerRecord<>(TOPIC, r.key(), r.value()));
            }
            producer.flush();
        }
    }

    /** A dead letter as a comparable token: its reason and a digest of its bytes. */
    private static String letter(String reason, byte[] value) {
        if (value == null) {
            return reason + " (no value)";
        }
        try {
            return reason + " " + Base64.getEncoder().encodeToString(MessageDigest.getInstance("SHA-256").digest(value));
        } catch (java.security.NoSuchAlgorithmException e) {
            throw new IllegalStateException(e);
        }
    }

    // ---- reading the daemon ------------------------------------------------------------------------

    private static final Pattern SERIES = Pattern.compile("^(\\w+)\\{([^}]*)\\} (\\S+)$", Pattern.MULTILINE);
    private static final Pattern LABEL = Pattern.compile("(\\w+)=\"([^\"]*)\"");

    /** The series of one meter in a scrape: labels joined by '/' in the order asked → value. */
    private static Map<String, Long> series(String scrape, String name, String... labels) {
        Map<String, Long> out = new TreeMap<>();
        Matcher m = SERIES.matcher(scrape);
        while (m.find()) {
            if (!m.group(1).equals(name)) {
                continue;
            }
            Map<String, String> l = new HashMap<>();
            Matcher lm = LABEL.matcher(m.group(2));
            while (lm.find()) {
                l.put(lm.group(1), lm.group(2));
            }
            List<String> key = new ArrayList<>();
            for (String label : labels) {
                key.add(l.get(label));
            }
            out.put(String.join("/", key), (long) Double.parseDouble(m.group(3)));
        }
        return out;
    }

    /** What the scrape shows now: rejected by reason, accepted by experiment, observations by experiment/arm/metric. */
    private static List<Map<String, Long>> counters(Daemon daemon) {
        String scrape = daemon.meters().scrape();
        Map<String, Long> rejected = series(scrape, "interim_events_rejected_total", "reason");
        rejected.values().removeIf(v -> v == 0);
        return List.of(rejected, series(scrape, "interim_events_accepted_total", "experiment"),
                series(scrape, "interim_observations", "experiment", "arm", "metric"));
    }

    private static void awaitExactly(Daemon daemon, Truth truth, Map<String, Long> rejected) throws InterruptedException {
        Supplier<Boolean> done = () -> counters(daemon).equals(List.of(rejected, truth.accepted, truth.observations()));
        long deadline = System.nanoTime() + Duration.ofSeconds(90).toNanos();
        while (!done.get() && System.nanoTime() < deadline) {
            Thread.sleep(250);
        }
        Thread.sleep(1_500);   // another look (look_every: 1s) and commit: a count made twice would show now
    }

    private static void assertExactly(Daemon daemon, Truth truth, Map<String, Long> rejected) {
        List<Map<String, Long>> now = counters(daemon);
        assertThat(now.get(0)).as("interim_events_rejected_total by reason").isEqualTo(rejected);
        assertThat(now.get(1)).as("interim_events_accepted_total by experiment").isEqualTo(truth.accepted);
        assertThat(now.get(2)).as("interim_observations after a look").isEqualTo(truth.observations());
        truth.assertViews(daemon.views());
    }

    // ---- the invented events and their ground truth -------------------------------------------------

    /**
     * Valid events of the two invented experiments, and what they add up to. tile-cache events carry
     * a unit ("c-N", each unit in one arm); tile-format events none. Values are short decimals, so
     * the exact sums are BigDecimal sums of what was written.
     */
    private static final class Truth {
        final Map<String, Long> accepted = new TreeMap<>();
        final Map<String, Long> exposures = new TreeMap<>();
        /** experiment/arm/metric → {successes, trials} of the event rates. */
        final Map<String, long[]> rates = new TreeMap<>();
        /** experiment/arm/metric → the values of the event means. */
        final Map<String, List<BigDecimal>> means = new TreeMap<>();
        /** unit → its arm, whether it had a hit, its byte total. */
        final Map<String, String> unitArm = new TreeMap<>();
        final Set<String> hitUnits = new HashSet<>();
        final Map<String, BigDecimal> unitBytes = new HashMap<>();

        Sent validEvent(SplittableRandom random) {
            boolean cache = random.nextInt(5) < 3;
            StringBuilder b = new StringBuilder();
            String key;
            if (cache) {
                int n = random.nextInt(600);
                String unit = "c-" + n;
                String arm = List.of("lru", "arc", "tinylfu").get(n % 3);
                key = unit;
                accepted.merge("tile-cache", 1L, Long::sum);
                if (unitArm.put(unit, arm) == null) {
                    exposures.merge("tile-cache/" + arm, 1L, Long::sum);
                    unitBytes.put(unit, BigDecimal.ZERO);
                }
                b.append("{\"exp\":\"tile-cache\",\"arm\":\"").append(arm).append("\",\"session\":\"").append(unit).append('"');
                if (random.nextInt(10) < 9) {
                    int status = random.nextInt(50) == 0 ? 503 : 200;
                    b.append(",\"status\":").append(status);
                    rate("tile-cache/" + arm + "/errors", status >= 500);
                }
                if (random.nextInt(10) < 8) {
                    String ms = decimal(5 + 100 * random.nextDouble());
                    b.append(",\"timing\":{\"ms\":").append(ms).append(",\"dns\":1}");
                    means.computeIfAbsent("tile-cache/" + arm + "/latency", k -> new ArrayList<>()).add(new BigDecimal(ms));
                }
                if (random.nextBoolean()) {
                    boolean hit = random.nextInt(3) > 0;
                    b.append(",\"cache\":\"").append(hit ? "hit" : "miss").append('"');
                    if (hit) {
                        hitUnits.add(unit);
                    }
                }
                if (random.nextInt(10) < 6) {
                    int bytes = random.nextInt(50_000);
                    b.append(",\"bytes\":").append(bytes);
                    unitBytes.merge(unit, BigDecimal.valueOf(bytes), BigDecimal::add);
                }
            } else {
                String arm = random.nextBoolean() ? "png" : "webp";
                key = "f-" + random.nextInt(1000);
                accepted.merge("tile-format", 1L, Long::sum);
                exposures.merge("tile-format/" + arm, 1L, Long::sum);
                b.append("{\"arm\":\"").append(arm).append("\",\"exp\":\"tile-format\"");
                if (random.nextInt(10) < 9) {
                    boolean ok = random.nextInt(40) > 0;
                    b.append(",\"result\":\"").append(ok ? "ok" : "error").append('"');
                    rate("tile-format/" + arm + "/failed", !ok);
                }
                if (random.nextInt(10) < 9) {
                    String kb = decimal(1 + 500 * random.nextDouble());
                    b.append(",\"kb\":").append(kb);
                    means.computeIfAbsent("tile-format/" + arm + "/size", k -> new ArrayList<>()).add(new BigDecimal(kb));
                }
            }
            b.append('}');
            return new Sent(key.getBytes(StandardCharsets.UTF_8), b.toString().getBytes(StandardCharsets.UTF_8), null);
        }

        private void rate(String key, boolean success) {
            long[] c = rates.computeIfAbsent(key, k -> new long[2]);
            c[0] += success ? 1 : 0;
            c[1]++;
        }

        private static String decimal(double v) {
            return BigDecimal.valueOf(Math.round(v * 100), 2).toPlainString();
        }

        /** Per-unit metrics, from the units: hit (a rate over units) and bytes (the mean of unit totals). */
        private Map<String, long[]> unitRates() {
            Map<String, long[]> out = new TreeMap<>();
            unitArm.forEach((unit, arm) -> {
                long[] c = out.computeIfAbsent("tile-cache/" + arm + "/hit", k -> new long[2]);
                c[0] += hitUnits.contains(unit) ? 1 : 0;
                c[1]++;
            });
            return out;
        }

        private Map<String, List<BigDecimal>> unitTotals() {
            Map<String, List<BigDecimal>> out = new TreeMap<>();
            unitArm.forEach((unit, arm) -> out.computeIfAbsent("tile-cache/" + arm + "/bytes", k -> new ArrayList<>())
                    .add(unitBytes.get(unit)));
            return out;
        }

        /** Observations by experiment/arm/metric, as the gauges count them (events, or units for per-unit metrics). */
        Map<String, Long> observations() {
            Map<String, Long> out = new TreeMap<>();
            rates.forEach((k, c) -> out.put(k, c[1]));
            means.forEach((k, v) -> out.put(k, (long) v.size()));
            unitRates().forEach((k, c) -> out.put(k, c[1]));
            unitTotals().forEach((k, v) -> out.put(k, (long) v.size()));
            return out;
        }

        /** The views' tallies: exact successes and trials; means within 1e-9 relative (rounding of sums in another order; common practice). */
        void assertViews(Map<String, ExperimentView> views) {
            Map<String, long[]> allRates = new TreeMap<>(rates);
            allRates.putAll(unitRates());
            Map<String, List<BigDecimal>> allMeans = new TreeMap<>(means);
            allMeans.putAll(unitTotals());
            allRates.forEach((key, c) -> {
                Tally.Rate t = (Tally.Rate) tally(views, key);
                assertThat(t.counts().successes()).as("successes of %s", key).isEqualTo(c[0]);
                assertThat(t.counts().trials()).as("trials of %s", key).isEqualTo(c[1]);
            });
            allMeans.forEach((key, values) -> {
                Tally.Mean t = (Tally.Mean) tally(views, key);
                double mean = values.stream().reduce(BigDecimal.ZERO, BigDecimal::add)
                        .divide(BigDecimal.valueOf(values.size()), MathContext.DECIMAL128).doubleValue();
                assertThat(t.moments().count()).as("count of %s", key).isEqualTo(values.size());
                assertThat(t.moments().mean()).as("mean of %s", key).isCloseTo(mean, within(1e-9 * Math.abs(mean)));
            });
            exposures.forEach((key, n) -> {
                String[] k = key.split("/");
                assertThat(views.get(k[0]).exposures().get(k[1])).as("exposures of %s", key).isEqualTo(n);
            });
        }

        private static Tally tally(Map<String, ExperimentView> views, String key) {
            String[] k = key.split("/");
            assertThat(views).as("views").containsKey(k[0]);
            Tally t = views.get(k[0]).tallies().getOrDefault(k[2], Map.of()).get(k[1]);
            assertThat(t).as("tally of %s", key).isNotNull();
            return t;
        }
    }
}
