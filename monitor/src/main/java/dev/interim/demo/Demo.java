package dev.interim.demo;

import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.daemon.Daemon;
import dev.interim.experiment.Comparison;
import dev.interim.experiment.Decision;
import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.LookResult;
import dev.interim.signal.DecisionJson;
import dev.interim.signal.SigningKey;
import dev.interim.text.Numbers;
import java.io.IOException;
import java.io.PrintWriter;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.security.SecureRandom;
import java.time.Duration;
import java.util.Base64;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Properties;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.StringSerializer;

/**
 * The demonstration: the embedded broker, the invented "quorvel" rollout (three builds, synthetic
 * shoppers), a local stand-in for the flag service that receives and verifies kill webhooks, and the
 * daemon. Prints every decision record as one JSON line as it happens, and a summary at the end. It
 * ends once the harmful build has been switched off and the rest have had a few more looks, or
 * after a time limit; with {@link Ending#KEEP_RUNNING} it goes on until interrupted.
 */
public final class Demo {
    private final PrintWriter out;
    private final PrintWriter err;
    private final Path dataDir;
    private final Duration limit;
    private final Ending ending;
    private final Path saveEvents;

    /** When the demo ends. */
    public enum Ending {
        /** Shortly after the verdicts, or at the time limit. */
        AFTER_VERDICT,
        /** When interrupted (Ctrl-C), so that the dashboard can be explored. */
        KEEP_RUNNING
    }

    public Demo(PrintWriter out, PrintWriter err, Path dataDir, Duration limit, Ending ending) {
        this(out, err, dataDir, limit, ending, null);
    }

    /** With {@code saveEvents}, every event the demo sends is also written there, one JSON line each, for replay. */
    public Demo(PrintWriter out, PrintWriter err, Path dataDir, Duration limit, Ending ending, Path saveEvents) {
        this.out = out;
        this.err = err;
        this.dataDir = dataDir;
        this.limit = limit;
        this.ending = ending;
        this.saveEvents = saveEvents;
    }

    /** Runs the scenario; returns true when the harmful build was stopped for harm and the healthy one was not. */
    public boolean run() throws IOException, InterruptedException {
        byte[] key = new byte[32];
        new SecureRandom().nextBytes(key);
        String secret = SigningKey.PREFIX + Base64.getEncoder().encodeToString(key);
        try (FlagServiceStandIn flags = new FlagServiceStandIn(SigningKey.parse(secret), this::say)) {
            String yaml = DemoScenario.yaml(0, flags.url().toString());
            InterimConfig config = ConfigLoader.parse(yaml, Map.of("DEMO_WEBHOOK_KEY", secret));
            say("starting the embedded Kafka broker and the daemon (data in " + dataDir + ")");
            try (Daemon daemon = Daemon.start(config, new Daemon.Options(dataDir, null, this::print));
                 KafkaProducer<String, String> producer = producer(daemon.bootstrapServers());
                 java.io.BufferedWriter saved = saveEvents == null ? null
                         : java.nio.file.Files.newBufferedWriter(saveEvents, StandardCharsets.UTF_8)) {
                say("metrics at http://127.0.0.1:" + daemon.httpPort() + "/metrics; shoppers arriving for "
                        + String.join(", ", DemoTraffic.BUILDS));
                DemoTraffic traffic = new DemoTraffic(20261202);
                long start = System.nanoTime();
                long decidedAt = -1;
                while (ending == Ending.KEEP_RUNNING || System.nanoTime() - start < limit.toNanos()) {
                    traffic.shoppers(400, System.currentTimeMillis(), (shopper, json) -> {
                        producer.send(new ProducerRecord<>(config.kafka().inputTopics().get(0), shopper, json));
                        if (saved != null) {
                            try {
                                saved.write(json);
                                saved.newLine();
                            } catch (IOException e) {
                                throw new java.io.UncheckedIOException(e);
                            }
                        }
                    });
                    producer.flush();
                    Thread.sleep(250);
                    if (decidedAt < 0 && !flags.kills().isEmpty()) {
                        decidedAt = System.nanoTime();
                    }
                    if (ending == Ending.AFTER_VERDICT && decidedAt > 0 && System.nanoTime() - decidedAt > Duration.ofSeconds(8).toNanos()) {
                        break;
                    }
                }
                return summary(daemon.experiments());
            }
        }
    }

    private boolean summary(List<ExperimentMonitor> experiments) {
        out.println();
        out.println("Summary");
        out.printf(Locale.ROOT, "  %-12s %-20s %-14s %5s %8s %8s %8s%n", "build", "metric", "decision", "look", "fraction", "z", "boundary");
        boolean harmStopped = false;
        boolean healthyStopped = false;
        for (ExperimentMonitor m : experiments) {
            for (Comparison c : m.comparisons()) {
                LookResult last = c.last();
                out.printf(Locale.ROOT, "  %-12s %-20s %-14s %5s %8s %8s %8s%n", c.arm(), c.metric().name(), c.decision().label(),
                        last == null ? Numbers.NONE : last.look().number(), last == null ? Numbers.NONE : Numbers.fixed(last.look().fraction(), 3),
                        last == null ? Numbers.NONE : Numbers.fixed(last.estimate().z(), 3),
                        last == null ? Numbers.NONE : Numbers.fixed(last.boundary(), 3));
                if (c.arm().equals("candidate-b") && c.decision() == Decision.STOP_HARM) {
                    harmStopped = true;
                }
                if (c.arm().equals("candidate-a") && c.decision() == Decision.STOP_HARM) {
                    healthyStopped = true;
                }
            }
        }
        out.println();
        out.println(harmStopped && !healthyStopped
                ? "candidate-b was stopped for harm and switched off; candidate-a was not stopped."
                : "the scenario did not end as expected: candidate-b stopped " + harmStopped + ", candidate-a stopped " + healthyStopped);
        out.flush();
        return harmStopped && !healthyStopped;
    }

    private void print(DecisionRecord d) {
        synchronized (out) {
            out.println(DecisionJson.writeString(d));
            out.flush();
        }
    }

    private void say(String line) {
        synchronized (err) {
            err.println("demo: " + line);
            err.flush();
        }
    }

    private static KafkaProducer<String, String> producer(String bootstrap) {
        Properties p = new Properties();
        p.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrap);
        p.put(ProducerConfig.KEY_SERIALIZER_CLASS_CONFIG, StringSerializer.class.getName());
        p.put(ProducerConfig.VALUE_SERIALIZER_CLASS_CONFIG, StringSerializer.class.getName());
        p.put(ProducerConfig.LINGER_MS_CONFIG, 10);
        return new KafkaProducer<>(p);
    }
}
