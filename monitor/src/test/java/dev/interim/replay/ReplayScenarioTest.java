package dev.interim.replay;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.experiment.Decision;
import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.ExperimentView;
import dev.interim.experiment.LookPoint;
import dev.interim.experiment.LookReport;
import dev.interim.experiment.Tally;
import dev.interim.stats.ProportionCounts;
import dev.interim.stats.RatioMoments;
import java.io.IOException;



import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The replay over the invented Mossglint rollout (MossglintTraffic): encoder-b fails about 9% of
 * uploads against 3%, and must be stopped for harm at a look on the configured schedule of event
 * time; and everything the replay decides must be what an {@link ExperimentMonitor} decides when it
 * is given, at the same instants, tallies computed here from the file by other code (a JSON tree
 * per line, exact integer sums for the latencies).
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class ReplayScenarioTest {
    private static final String ID = MossglintTraffic.EXPERIMENT;
    private static final long MINUTE = 60_000;
    private static final ObjectMapper JSON = new ObjectMapper();

    private static InterimConfig config;
    private static Recorded plain;

    @TempDir
    Path dir;

    /** What a replay told its listener, and its result. */
    record Recorded(List<LookReport> looks, List<DecisionRecord> decisions, ReplayResult result) {}

    static Recorded replay(InterimConfig config, Path events) throws IOException {
        List<LookReport> looks = new ArrayList<>();
        List<DecisionRecord> decisions = new ArrayList<>();
        ReplayResult result = new Replay(config.catalog()).run(events, new ReplayListener() {
            @Override
            public void looked(LookReport report) {
                looks.add(report);
            }

            @Override
            public void decided(DecisionRecord record) {
                decisions.add(record);
            }
        });
        return new Recorded(looks, decisions, result);
    }

    @BeforeAll
    static void replayTheScenario() throws IOException {
        config = Scenario.loaded();
        plain = replay(config, Scenario.events());
    }

    /** The scenario's events as a JSON tree each, read here independently of the replay. */
    private static List<JsonNode> events() throws IOException {
        List<JsonNode> events = new ArrayList<>();
        for (String line : Files.readAllLines(Scenario.events())) {
            events.add(JSON.readTree(line));
        }
        return events;
    }

    private static long time(JsonNode event) {
        return Instant.parse(event.get("at").textValue()).toEpochMilli();
    }

    @Test
    void theHarmfulEncoderIsStoppedForHarmAtALookOnTheSchedule() throws IOException {
        List<JsonNode> events = events();
        long t0 = time(events.get(0));
        long last = time(events.get(events.size() - 1));

        List<DecisionRecord> stops = plain.decisions().stream().filter(d -> d.decision().startsWith("stop")).toList();
        assertThat(stops).hasSize(1);
        DecisionRecord stop = stops.get(0);
        assertThat(stop.arm()).isEqualTo("encoder-b");
        assertThat(stop.metric()).isEqualTo("upload-failures");
        assertThat(stop.decision()).isEqualTo(Decision.STOP_HARM.label());
        long sinceStart = stop.at().toEpochMilli() - t0;
        assertThat(sinceStart).as("the stop is k whole minutes (look_every) after the first event").isPositive();
        assertThat(sinceStart % MINUTE).isZero();
        assertThat(stop.at()).isBefore(Instant.ofEpochMilli(last));

        // Every look on the schedule, in order, the last one the first due instant after the last event.
        List<Long> at = plain.looks().stream().map(r -> r.at().toEpochMilli()).toList();
        for (int i = 0; i < at.size(); i++) {
            assertThat((at.get(i) - t0) % MINUTE).as("look %d at %s", i, Instant.ofEpochMilli(at.get(i))).isZero();
            assertThat(at.get(i)).isGreaterThan(i == 0 ? t0 : at.get(i - 1));
        }
        assertThat(at.get(at.size() - 1)).isEqualTo(t0 + ((last - t0) / MINUTE + 1) * MINUTE);

        ReplayResult r = plain.result();
        assertThat(r.events()).isEqualTo(events.size());
        assertThat(r.accepted()).isEqualTo(events.size());
        assertThat(r.rejected()).isEmpty();
        assertThat(r.looks()).isEqualTo(plain.looks().size());
        assertThat(r.decisions()).isEqualTo(plain.decisions());
    }

    @Test
    void theHealthyEncoderIsNotStoppedAndNothingElseChanges() {
        assertThat(plain.decisions()).extracting(DecisionRecord::arm).doesNotContain("encoder-c");
        ExperimentOutcome e = plain.result().experiments().get(0);
        for (ComparisonOutcome c : e.comparisons()) {
            boolean harmful = c.arm().equals("encoder-b") && c.metric().equals("upload-failures");
            assertThat(c.decision()).as(c.arm() + " " + c.metric()).isEqualTo(harmful ? Decision.STOP_HARM : Decision.CONTINUE);
            assertThat(c.last()).as("every comparison looked at least once").isNotNull();
        }
    }

    @Test
    void decisionsAndLooksEqualAMonitorFedIndependentlyComputedTalliesAtTheSameInstants() throws IOException {
        List<JsonNode> events = events();
        Independent expected = new Independent(new ExperimentMonitor(config.experiment(ID).orElseThrow().definition()));
        long t0 = time(events.get(0));
        long next = t0 + MINUTE;
        for (JsonNode e : events) {
            long t = time(e);
            assertThat(t).as("the scenario is in time order").isGreaterThanOrEqualTo(t0);
            if (t >= next) {
                expected.look(next);
                next = t0 + ((t - t0) / MINUTE + 1) * MINUTE;   // the first due instant after t
            }
            expected.add(e);
        }
        expected.look(next);

        assertThat(plain.looks()).extracting(LookReport::at).containsExactlyElementsOf(expected.instants);
        assertThat(plain.decisions()).hasSameSizeAs(expected.decisions).isNotEmpty();
        for (int i = 0; i < expected.decisions.size(); i++) {
            DecisionRecord want = expected.decisions.get(i);
            DecisionRecord got = plain.decisions().get(i);
            assertThat(got.decisionId()).isEqualTo(want.decisionId());
            assertThat(List.of(got.arm(), got.metric(), got.decision(), got.previous(), got.look(), got.at()))
                    .isEqualTo(List.of(want.arm(), want.metric(), want.decision(), want.previous(), want.look(), want.at()));
            // 1e-9: the replay's Welford moments and the exact sums here differ in the last bits only.
            assertThat(got.fraction()).isCloseTo(want.fraction(), within(1e-9));
            assertThat(got.statistic()).isCloseTo(want.statistic(), within(1e-9));
            assertThat(got.boundary()).isCloseTo(want.boundary(), within(1e-9));
            assertThat(got.estimate()).isCloseTo(want.estimate(), within(1e-9));
        }
        // Every look of every comparison, not only those that changed a decision.
        ExperimentView replayed = plain.result().views().get(ID);
        ExperimentView recomputed = expected.monitor.view();
        assertThat(replayed.exposures()).isEqualTo(recomputed.exposures());
        assertThat(replayed.lastLook()).isEqualTo(recomputed.lastLook());
        assertThat(replayed.comparisons()).hasSameSizeAs(recomputed.comparisons());
        for (int c = 0; c < recomputed.comparisons().size(); c++) {
            List<LookPoint> want = recomputed.comparisons().get(c).looks();
            List<LookPoint> got = replayed.comparisons().get(c).looks();
            assertThat(got).as(recomputed.comparisons().get(c).arm() + " " + recomputed.comparisons().get(c).metric())
                    .hasSameSizeAs(want).hasSizeGreaterThan(10);
            for (int k = 0; k < want.size(); k++) {
                assertThat(got.get(k).at()).isEqualTo(want.get(k).at());
                assertThat(got.get(k).decision()).isEqualTo(want.get(k).decision());
                assertThat(got.get(k).fraction()).isCloseTo(want.get(k).fraction(), within(1e-9));
                assertThat(got.get(k).statistic()).isCloseTo(want.get(k).statistic(), within(1e-9));
                assertThat(got.get(k).upper()).isCloseTo(want.get(k).upper(), within(1e-9));
            }
        }
    }

    /**
     * The tallies of the configuration's three metrics, computed from the JSON trees. Arms are
     * assigned per user (events.unit is set), so upload-failures and upload-ms are ratios of per-user
     * sums (failed uploads over uploads, milliseconds over uploads), their moments computed here in two
     * passes over the users; shared and the exposures per user; a user belongs to the arm of its first
     * event (docs/configuration.md, metric kinds and assignment).
     */
    private static final class Independent {
        final ExperimentMonitor monitor;
        final List<Instant> instants = new ArrayList<>();
        final List<DecisionRecord> decisions = new ArrayList<>();
        final Map<String, long[]> perUser = new HashMap<>();       // user → {failed, uploads, Σms}
        final Map<String, String> armOfUser = new HashMap<>();
        final Set<String> sharers = new HashSet<>();

        Independent(ExperimentMonitor monitor) {
            this.monitor = monitor;
        }

        void add(JsonNode e) {
            String arm = e.get("encoder").textValue();
            String user = e.get("user").textValue();
            armOfUser.putIfAbsent(user, arm);
            JsonNode upload = e.get("upload");
            if (upload != null) {
                String status = upload.get("status").textValue();
                long[] u = perUser.computeIfAbsent(user, x -> new long[3]);
                u[0] += status.equals("failed") || status.equals("timeout") ? 1 : 0;
                u[1]++;
                u[2] += upload.get("ms").longValue();
            }
            if (e.has("step") && e.get("step").textValue().equals("shared")) {
                sharers.add(user);
            }
        }

        void look(long at) {
            Map<String, Long> exposures = new LinkedHashMap<>();
            Map<String, Tally> failed = new HashMap<>();
            Map<String, Tally> ms = new HashMap<>();
            Map<String, Tally> shared = new HashMap<>();
            for (String arm : MossglintTraffic.ARMS) {
                long users = armOfUser.values().stream().filter(arm::equals).count();
                long sharing = armOfUser.entrySet().stream()
                        .filter(u -> u.getValue().equals(arm) && sharers.contains(u.getKey())).count();
                exposures.put(arm, users);
                if (users > 0) {
                    shared.put(arm, new Tally.Rate(new ProportionCounts(sharing, users)));
                }
                List<long[]> sums = armOfUser.entrySet().stream().filter(u -> u.getValue().equals(arm))
                        .map(u -> perUser.getOrDefault(u.getKey(), new long[3])).toList();
                if (sums.stream().anyMatch(u -> u[1] > 0)) {
                    failed.put(arm, new Tally.Ratio(twoPass(sums, 0, 1)));
                    ms.put(arm, new Tally.Ratio(twoPass(sums, 2, 1)));
                }
            }
            Instant instant = Instant.ofEpochMilli(at);
            LookReport report = monitor.look(instant, exposures,
                    Map.of("upload-failures", failed, "upload-ms", ms, "shared", shared));
            instants.add(instant);
            decisions.addAll(report.decisions());
        }

        /** Ratio moments of (u[x], u[y]) over the users: means first, then the deviations' sums. */
        private static RatioMoments twoPass(List<long[]> users, int x, int y) {
            double n = users.size();
            double mx = users.stream().mapToDouble(u -> u[x]).sum() / n;
            double my = users.stream().mapToDouble(u -> u[y]).sum() / n;
            double sxx = 0;
            double syy = 0;
            double sxy = 0;
            for (long[] u : users) {
                sxx += (u[x] - mx) * (u[x] - mx);
                syy += (u[y] - my) * (u[y] - my);
                sxy += (u[x] - mx) * (u[y] - my);
            }
            return new RatioMoments(users.size(), mx, my, sxx, syy, sxy);
        }
    }

    @Test
    void gzipInputIsRecognisedByNameOrByItsMagicBytesAndGivesTheSameReplay() throws IOException {
        Path named = Scenario.gzip(Scenario.events(), dir.resolve("mossglint.ndjson.gz"));
        Path unnamed = Scenario.gzip(Scenario.events(), dir.resolve("mossglint-events"));
        assertThat(Files.size(named)).isLessThan(Files.size(Scenario.events()) / 3);

        for (Path gz : List.of(named, unnamed)) {
            Recorded r = replay(config, gz);
            assertThat(r.decisions()).as(gz.getFileName().toString()).isEqualTo(plain.decisions());
            assertThat(r.looks()).extracting(LookReport::at).isEqualTo(plain.looks().stream().map(LookReport::at).toList());
            assertThat(r.result().accepted()).isEqualTo(plain.result().accepted());
        }
    }

    @Test
    void aFileNamedGzThatIsNotGzipIsBadInput() throws IOException {
        Path fake = Files.copy(Scenario.events(), dir.resolve("mossglint.ndjson.gz"));
        assertThatThrownBy(() -> replay(config, fake)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("mossglint.ndjson.gz").hasMessageContaining("not gzip");
    }

    @Test
    void aTruncatedGzipIsBadInputNamingWhereItStopped() throws IOException {
        Path gz = Scenario.gzip(Scenario.events(), dir.resolve("whole.ndjson.gz"));
        byte[] bytes = Files.readAllBytes(gz);
        Path cut = Files.write(dir.resolve("cut.ndjson.gz"), java.util.Arrays.copyOf(bytes, bytes.length / 2));
        assertThatThrownBy(() -> replay(config, cut)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("cut.ndjson.gz").hasMessageContaining("corrupt or truncated after line");
    }

    @Test
    void badLinesAreCountedByReasonAndNeverStopTheReplay() throws IOException {
        ReplayResult r = replay(config, Scenario.resource("bad-lines.ndjson")).result();

        // Read off bad-lines.ndjson: 16 lines, one blank; lines 1, 12 (epoch milliseconds) and 14 (+02:00) are good.
        assertThat(r.events()).isEqualTo(15);
        assertThat(r.accepted()).isEqualTo(3);
        assertThat(r.rejected()).containsExactly(
                Map.entry("not-json", 3L),            // lines 2, 11 (an array), 16 (cut short)
                Map.entry("missing-field", 2L),       // line 5 (no time), line 10 (no arm)
                Map.entry("wrong-type", 4L),          // lines 6 (prose), 8 (no offset), 9 ("fast" ms), 12 (time true)
                Map.entry("not-finite", 1L),          // line 13 (1e400)
                Map.entry("unknown-experiment", 1L),  // line 4
                Map.entry("unknown-arm", 1L));        // line 3
        assertThat(r.rejectedTotal()).isEqualTo(12);
        assertThat(r.firstRejections().get("missing-field")).isEqualTo("line 5: no time at /at");
        assertThat(r.firstRejections().get("wrong-type")).startsWith("line 6: time at /at 'yesterday afternoon'");
        assertThat(r.firstRejections().get("unknown-arm")).startsWith("line 3: ");
        assertThat(r.experiments().get(0).events()).isEqualTo(3);
        assertThat(r.views().get(ID).exposures()).containsEntry("current", 1L).containsEntry("encoder-b", 1L)
                .containsEntry("encoder-c", 1L);
    }

    @Test
    void badLinesMixedIntoTheScenarioChangeNothingButTheCounts() throws IOException {
        List<String> lines = Files.readAllLines(Scenario.events());
        List<String> mixed = new ArrayList<>();
        for (int i = 0; i < lines.size(); i++) {
            mixed.add(lines.get(i));
            if (i % 97 == 0) {
                mixed.add("{\"at\":\"not a time\",\"rollout\":\"" + ID + "\",\"encoder\":\"current\",\"user\":\"u99999\"}");
                mixed.add("{truncated");
            }
        }
        Path file = Files.write(dir.resolve("mixed.ndjson"), mixed);
        Recorded r = replay(config, file);

        long added = 2L * ((lines.size() - 1) / 97 + 1);
        assertThat(r.result().events()).isEqualTo(lines.size() + added);
        assertThat(r.result().rejected()).containsExactly(Map.entry("not-json", added / 2), Map.entry("wrong-type", added / 2));
        assertThat(r.decisions()).isEqualTo(plain.decisions());
    }

    @Test
    void aLineAboveTheEventSizeLimitIsRefusedAsTooLargeAndTheReplayGoesOn() throws IOException {
        List<String> lines = new ArrayList<>(Files.readAllLines(Scenario.events()));
        String big = "{\"at\":\"2031-03-04T09:00:09Z\",\"pad\":\"" + "x".repeat(1_200_000) + "\"}";
        lines.add(5, big);
        Path file = Files.write(dir.resolve("big-line.ndjson"), lines);
        Recorded r = replay(config, file);

        assertThat(r.result().rejected()).containsExactly(Map.entry("too-large", 1L));
        assertThat(r.result().firstRejections().get("too-large"))
                .isEqualTo("line 6: event of " + big.length() + " bytes, above 1048576");
        assertThat(r.decisions()).isEqualTo(plain.decisions());
    }

    @Test
    void lateEventsCountAtTheNextLookAndAreReported() throws IOException {
        List<String> lines = new ArrayList<>(Files.readAllLines(Scenario.events()));
        // An event stamped at the very start, placed after ten minutes of traffic.
        String early = lines.get(0).replace("\"user\":\"", "\"user\":\"late-");
        int at = 0;
        while (time(JSON.readTree(lines.get(at))) < time(JSON.readTree(lines.get(0))) + 10 * MINUTE) {
            at++;
        }
        lines.add(at, early);
        Recorded r = replay(config, Files.write(dir.resolve("late.ndjson"), lines));

        assertThat(r.result().experiments().get(0).late()).isEqualTo(1);
        assertThat(r.result().accepted()).isEqualTo(lines.size());
        assertThat(r.looks()).extracting(LookReport::at).isEqualTo(plain.looks().stream().map(LookReport::at).toList());
    }

    @Test
    void theFinalViewsAreThereForAPostMortem() {
        Map<String, ExperimentView> views = plain.result().views();
        assertThat(views).containsOnlyKeys(ID);
        ExperimentView v = views.get(ID);
        assertThat(v.lastLook()).isEqualTo(plain.looks().get(plain.looks().size() - 1).at());
        ExperimentView.ComparisonView harmful = v.comparisons().stream()
                .filter(c -> c.arm().equals("encoder-b") && c.metric().equals("upload-failures")).findFirst().orElseThrow();
        assertThat(harmful.decision()).isEqualTo(Decision.STOP_HARM);
        LookPoint stop = harmful.looks().get(harmful.looks().size() - 1);
        assertThat(stop.decision()).isEqualTo(Decision.STOP_HARM);
        assertThat(stop.statistic()).isGreaterThanOrEqualTo(stop.upper());
        assertThat(stop.at()).isEqualTo(plain.decisions().get(0).at());
    }

    @Test
    void aConfigurationWithoutEventTimeIsRefusedWithAClearMessage() throws IOException {
        Path without = Scenario.configWith(dir, "  time: /at\n", "");
        InterimConfig c = ConfigLoader.loadWithoutSecrets(without);
        assertThatThrownBy(() -> new Replay(c.catalog())).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("events.time").hasMessageContaining("JSON Pointer");
    }

    @Test
    void aMissingEventsFileIsBadInput() {
        Path missing = dir.resolve("nothing-here.ndjson");
        assertThatThrownBy(() -> replay(config, missing)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("nothing-here.ndjson: no such file");
    }

    @Test
    void anEmptyFileReplaysToNothing() throws IOException {
        ReplayResult r = replay(config, Files.write(dir.resolve("empty.ndjson"), new byte[0])).result();
        assertThat(r.events()).isZero();
        assertThat(r.looks()).isZero();
        assertThat(r.experiments().get(0).firstEvent()).isNull();
    }
}
