package dev.interim.replay;

import dev.interim.events.MappedExperiment;
import dev.interim.events.EventCatalog;
import dev.interim.experiment.Comparison;
import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.LookReport;
import dev.interim.stream.BadEventException;
import dev.interim.stream.BadEventException.Reason;
import dev.interim.stream.JsonEventReader;
import dev.interim.stream.OfflineTally;
import java.io.EOFException;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.zip.ZipException;

/**
 * The daemon's engine over a file of past events, without Kafka: the same event reader
 * ({@link JsonEventReader}), the same tallies (the tally stage's partition state, through
 * {@link OfflineTally}) and the same decisions ({@link ExperimentMonitor}), with looks on each
 * experiment's {@code look_every} schedule of event time ({@link LookSchedule} has the rule).
 *
 * <p>Input: NDJSON, one event per line, plain or gzip; events are taken in file order. Every event
 * needs a time at {@code events.time}. A line that cannot be read — not JSON, an unknown experiment
 * or arm, a bad field, no readable time — is refused with the reason the daemon would give its dead
 * letter, counted, and never stops the replay. Blank lines are skipped.
 *
 * <p>A {@code Replay} holds only the configuration: each {@link #run} starts from nothing. Nothing is
 * sent anywhere (no Kafka, no webhook); the listener hears every look and decision as it happens.
 */
public final class Replay {
    /** How often progress is reported, at most. */
    private static final long PROGRESS_NANOS = 250_000_000L;

    private final EventCatalog config;

    /**
     * @throws IllegalArgumentException when the configuration has no {@code events.time}: looks go
     *     by event time, so every event must carry one
     */
    public Replay(EventCatalog config) {
        if (config.mapping().time().isEmpty()) {
            throw new IllegalArgumentException(missingTime());
        }
        this.config = config;
    }

    /** The message for a configuration without {@code events.time}. */
    public static String missingTime() {
        return "replay needs each event's time, and the configuration has no events.time: set it to the JSON "
                + "Pointer of the time (epoch milliseconds or ISO-8601 text with an offset), such as time: /timestamp";
    }

    /**
     * Replays {@code events} (NDJSON, plain or gzip).
     *
     * @throws IllegalArgumentException when the file is missing or unreadable as a whole (not gzip
     *     though named .gz, corrupt or truncated gzip): bad input
     * @throws IOException when reading fails for another reason
     */
    public ReplayResult run(Path events, ReplayListener listener) throws IOException {
        if (!Files.isRegularFile(events)) {
            throw new IllegalArgumentException(events + ": " + (Files.exists(events) ? "is not a regular file"
                    : "no such file") + "; give the path of an NDJSON file of events (.ndjson or .ndjson.gz)");
        }
        if (!Files.isReadable(events)) {
            throw new IllegalArgumentException(events + ": cannot be read: permission denied");
        }
        return new Run(listener).over(events);
    }

    /** One replay's state. */
    private final class Run {
        private final ReplayListener listener;
        private final JsonEventReader reader = new JsonEventReader(config);
        private final EventTime time = new EventTime(config.mapping().time().orElseThrow());
        private final EventBuffer buffer = new EventBuffer();
        private final OfflineTally tally;
        private final Map<String, Experiment> experiments = new LinkedHashMap<>();
        /** The same experiments by catalog index, as the reader names them. */
        private final Experiment[] byIndex = new Experiment[config.catalog().size()];
        private final long[] rejected = new long[Reason.values().length];
        private final Map<Reason, String> firstRejections = new HashMap<>();
        private final List<DecisionRecord> decisions = new ArrayList<>();
        private long events;
        private long accepted;
        private long looks;

        Run(ReplayListener listener) {
            this.listener = listener;
            for (MappedExperiment e : config.experiments()) {
                Experiment x = new Experiment(e.definition());
                experiments.put(e.definition().id(), x);
                byIndex[config.catalog().index(e.definition().id())] = x;
            }
            this.tally = new OfflineTally(config.catalog());
        }

        ReplayResult over(Path file) throws IOException {
            long start = System.nanoTime();
            long nextProgress = start + PROGRESS_NANOS;
            try (EventLines lines = EventLines.open(file, JsonEventReader.MAX_BYTES)) {
                try {
                    for (byte[] line; (line = lines.next()) != null; ) {
                        if (line == EventLines.OVERSIZED) {
                            events++;
                            refuse(new BadEventException(Reason.TOO_LARGE, "event of " + lines.oversizedLength()
                                    + " bytes, above " + JsonEventReader.MAX_BYTES), lines.lineNumber());
                            continue;
                        }
                        if (blank(line)) {
                            continue;
                        }
                        events++;
                        take(line, lines.lineNumber());
                        if ((events & 1023) == 0) {
                            long now = System.nanoTime();
                            if (now >= nextProgress) {
                                nextProgress = now + PROGRESS_NANOS;
                                listener.progressed(new ReplayListener.Progress(events, lines.bytesRead(), lines.size(),
                                        now - start, false));
                            }
                        }
                    }
                } catch (ZipException | EOFException e) {
                    throw new IllegalArgumentException(file + ": the gzip data is corrupt or truncated after line "
                            + lines.lineNumber() + " (" + e.getMessage() + ")");
                }
                for (Experiment e : experiments.values()) {
                    if (e.schedule.started()) {
                        look(e, e.schedule.finalLook());
                    }
                }
                listener.progressed(new ReplayListener.Progress(events, lines.bytesRead(), lines.size(),
                        System.nanoTime() - start, true));
            }
            return result(Duration.ofNanos(System.nanoTime() - start));
        }

        /** One event: read, timed, then counted after any look due before it. */
        private void take(byte[] line, long lineNumber) {
            buffer.clear();
            try {
                reader.read(line, buffer);
                long at = time.millis(line);
                Experiment e = byIndex[buffer.experiment()];
                long due = e.schedule.lookBefore(at);
                if (due != LookSchedule.NONE) {
                    look(e, due);
                }
                if (e.schedule.late(at)) {
                    e.late++;
                }
                buffer.applyTo(tally);
                e.events++;
                accepted++;
            } catch (BadEventException bad) {
                refuse(bad, lineNumber);
            }
        }

        private void look(Experiment e, long at) {
            OfflineTally.Snapshot s = tally.snapshot(e.definition.id());
            LookReport report = e.monitor.look(Instant.ofEpochMilli(at), s.exposures(), s.tallies());
            looks++;
            e.looks++;
            listener.looked(report);
            for (DecisionRecord d : report.decisions()) {
                decisions.add(d);
                listener.decided(d);
            }
        }

        private void refuse(BadEventException bad, long lineNumber) {
            Reason reason = bad.reason();
            if (rejected[reason.ordinal()]++ == 0) {
                firstRejections.put(reason, "line " + lineNumber + ": " + bad.getMessage());
            }
        }

        private ReplayResult result(Duration elapsed) {
            Map<String, Long> byReason = new LinkedHashMap<>();
            Map<String, String> first = new LinkedHashMap<>();
            for (Reason r : Reason.values()) {
                if (rejected[r.ordinal()] > 0) {
                    byReason.put(r.label(), rejected[r.ordinal()]);
                    first.put(r.label(), firstRejections.get(r));
                }
            }
            List<ExperimentOutcome> outcomes = new ArrayList<>();
            for (Experiment e : experiments.values()) {
                List<ComparisonOutcome> comparisons = new ArrayList<>();
                for (Comparison c : e.monitor.comparisons()) {
                    comparisons.add(new ComparisonOutcome(c.arm(), c.metric().name(),
                            c.metric().role().name().toLowerCase(Locale.ROOT), c.decision(), c.last(), c.skipped()));
                }
                outcomes.add(new ExperimentOutcome(e.definition.id(), e.events, e.late, e.looks, e.definition.lookEvery(),
                        e.schedule.started() ? Instant.ofEpochMilli(e.schedule.origin()) : null, e.monitor.view(),
                        comparisons));
            }
            return new ReplayResult(events, accepted, byReason, first, looks, decisions, outcomes, elapsed);
        }
    }

    /** One experiment's monitor, schedule and counts during a run. */
    private static final class Experiment {
        final ExperimentDefinition definition;
        final ExperimentMonitor monitor;
        final LookSchedule schedule;
        long events;
        long late;
        long looks;

        Experiment(ExperimentDefinition definition) {
            this.definition = definition;
            this.monitor = new ExperimentMonitor(definition);
            this.schedule = new LookSchedule(definition.lookEvery().toMillis());
        }
    }

    private static boolean blank(byte[] line) {
        for (byte b : line) {
            if (b != ' ' && b != '\t' && b != '\r') {
                return false;
            }
        }
        return true;
    }
}
