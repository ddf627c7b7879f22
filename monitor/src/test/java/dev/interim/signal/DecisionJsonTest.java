package dev.interim.signal;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.StopAction;
import java.nio.charset.StandardCharsets;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

/**
 * The JSON layout of decision records (docs/decision-record.md) and the reading of nulls. Expected
 * texts are written out by hand from that document, not produced by the writer.
 */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class DecisionJsonTest {

    @Test
    void aStopForHarmIsWrittenInTheDocumentedLayout() {
        String json = DecisionJson.writeString(Fixtures.stopForHarm("6f1c0b0e-0d57-3d0b-9a41-2f0f1a0c5e11", false));
        assertThat(json).isEqualTo("{\"type\":\"interim.decision\",\"experiment\":\"basket-v7\",\"arm\":\"candidate\","
                + "\"metric\":\"failed_payments\",\"role\":\"guardrail\",\"decision\":\"stop-harm\",\"previous\":\"continue\","
                + "\"look\":4,\"fraction\":0.375,\"statistic\":3.912,\"boundary\":3.471,\"alpha_spent\":0.00211,"
                + "\"estimate\":{\"value\":0.0184,\"lower\":0.0071,\"upper\":null,\"level\":0.95},"
                + "\"relative\":{\"value\":null,\"lower\":null,\"upper\":null,\"level\":null},"
                + "\"at\":\"2026-03-01T00:04:00Z\",\"decision_id\":\"6f1c0b0e-0d57-3d0b-9a41-2f0f1a0c5e11\","
                + "\"dry_run\":false,\"action\":\"kill\"}");
    }

    /**
     * A record with a relative change: the control fails 1.00% of payments, the candidate 1.05%.
     * The value is computed by hand: 0.0105 / 0.0100 − 1 = 0.05; the interval's ends are invented
     * (any finite numbers around it do), open above as a guardrail's one-sided interval is.
     */
    @Test
    void anAcknowledgementIsWrittenInTheDocumentedLayoutAndTypedApart() {
        byte[] json = DecisionJson.write(new dev.interim.experiment.Acknowledgement("basket-v7", Fixtures.T0,
                List.of(new dev.interim.experiment.Acknowledgement.Stop("candidate", "failed_payments")), "a-1", false));
        assertThat(new String(json, StandardCharsets.UTF_8)).isEqualTo("{\"type\":\"interim.acknowledgement\","
                + "\"experiment\":\"basket-v7\",\"stops\":[{\"arm\":\"candidate\",\"metric\":\"failed_payments\"}],"
                + "\"at\":\"" + Fixtures.T0 + "\",\"id\":\"a-1\",\"dry_run\":false}");
        assertThat(DecisionJson.type(json)).isEqualTo(DecisionJson.ACKNOWLEDGEMENT_TYPE);
        assertThat(DecisionJson.type(DecisionJson.write(Fixtures.stopForHarm("x", false)))).isEqualTo(DecisionJson.TYPE);
        assertThat(DecisionJson.type("not json".getBytes(StandardCharsets.UTF_8))).isNull();
    }

    @Test
    void aRelativeChangeIsWrittenAfterTheEstimateAndReadsBack() {
        DecisionRecord r = new DecisionRecord("basket-v7", "candidate", "failed_payments", "guardrail", "continue", "continue",
                3, 0.25, 1.2, 3.9, 0.0004, 0.0005, -0.0003, Double.POSITIVE_INFINITY, 0.95, Fixtures.T0, "r-1", false, "kill",
                0.0105 / 0.0100 - 1, -0.021, Double.POSITIVE_INFINITY);
        String json = DecisionJson.writeString(r);
        assertThat(json).contains("\"estimate\":{\"value\":5.0E-4,\"lower\":-3.0E-4,\"upper\":null,\"level\":0.95},"
                + "\"relative\":{\"value\":" + (0.0105 / 0.0100 - 1) + ",\"lower\":-0.021,\"upper\":null,\"level\":0.95},"
                + "\"at\":");
        DecisionRecord back = DecisionJson.read(json.getBytes(StandardCharsets.UTF_8));
        assertThat(back).isEqualTo(r);
        assertThat(back.relative()).isCloseTo(0.05, within(1e-12));
        assertThat(back.relativeUpper()).isEqualTo(Double.POSITIVE_INFINITY);
    }

    /** A record written before the member existed (no "relative") reads back with NaN: no relative change. */
    @Test
    void aRecordWithoutRelativeReadsAsNoRelativeChange() {
        String old = DecisionJson.writeString(Fixtures.stopForHarm("o", false))
                .replace("\"relative\":{\"value\":null,\"lower\":null,\"upper\":null,\"level\":null},", "");
        assertThat(old).doesNotContain("relative");
        DecisionRecord back = DecisionJson.read(old.getBytes(StandardCharsets.UTF_8));
        assertThat(back).isEqualTo(Fixtures.stopForHarm("o", false));
        assertThat(back.relative()).isNaN();
        assertThat(back.relativeLower()).isNaN();
        assertThat(back.relativeUpper()).isNaN();
        String nullRelative = old.replace("\"at\":", "\"relative\":null,\"at\":");
        assertThat(DecisionJson.read(nullRelative.getBytes(StandardCharsets.UTF_8))).isEqualTo(Fixtures.stopForHarm("o", false));
        assertThatThrownBy(() -> DecisionJson.read(old.replace("\"at\":", "\"relative\":{\"value\":\"5%\",\"level\":0.95},\"at\":")
                .getBytes(StandardCharsets.UTF_8))).hasMessageContaining("'relative.value'");
    }

    @Test
    void aFiniteRecordReadsBackEqual() {
        DecisionRecord r = new DecisionRecord("basket-v7", "candidate", "conversion", "primary", "stop-benefit", "continue",
                9, 0.8125, -2.75, -2.41, 0.0307, -0.0123, -0.0219, -0.0027, 0.95,
                Instant.parse("2026-03-01T09:15:30.123456789Z"), "0b8e6c2a-4f1e-3c55-8d0a-6a7e2b9c1d40", true, "none");
        assertThat(DecisionJson.read(DecisionJson.write(r))).isEqualTo(r);
    }

    @Test
    void aOneSidedIntervalReadsBackWithItsInfiniteEnd() {
        DecisionRecord harm = Fixtures.stopForHarm("a", false);
        assertThat(DecisionJson.read(DecisionJson.write(harm))).isEqualTo(harm);
        DecisionRecord lowerOpen = new DecisionRecord("basket-v7", "candidate", "revenue", "guardrail", "continue", "held",
                2, 0.2, -0.4, -4.2, 0.0001, -0.31, Double.NEGATIVE_INFINITY, 0.88, 0.95, Fixtures.T0, "b", false, "page");
        assertThat(DecisionJson.read(DecisionJson.write(lowerOpen))).isEqualTo(lowerOpen);
    }

    /** A hold before any look: NaN everywhere but α spent; nulls in JSON; NaN again when read. */
    @Test
    void aHoldBeforeAnyLookReadsBackAsNaN() {
        double nan = Double.NaN;
        DecisionRecord hold = new DecisionRecord("basket-v7", "candidate", "failed_payments", "guardrail", "held", "continue",
                0, nan, nan, nan, 0, nan, nan, nan, nan, Fixtures.T0, "c-1a2b3c4d", false, "kill");
        String json = DecisionJson.writeString(hold);
        assertThat(json).contains("\"fraction\":null,\"statistic\":null,\"boundary\":null,\"alpha_spent\":0.0,"
                + "\"estimate\":{\"value\":null,\"lower\":null,\"upper\":null,\"level\":null}");
        assertThat(DecisionJson.read(json.getBytes(StandardCharsets.UTF_8))).isEqualTo(hold);
    }

    @Test
    void anInfiniteStatisticReadsBackWithTheSignOfTheEstimate() {
        DecisionRecord r = new DecisionRecord("e", "a", "m", "guardrail", "stop-harm", "continue", 3, 0.5,
                Double.NEGATIVE_INFINITY, -3.2, 0.004, -12.5, Double.NEGATIVE_INFINITY, -9.0, 0.95, Fixtures.T0, "d", false, "none");
        assertThat(DecisionJson.read(DecisionJson.write(r)).statistic()).isEqualTo(Double.NEGATIVE_INFINITY);
    }

    /** The documented lossy case: an infinite boundary has no direction in JSON and reads back as NaN. */
    @Test
    void anInfiniteBoundaryIsWrittenAsNullAndReadAsNaN() {
        DecisionRecord r = new DecisionRecord("e", "a", "m", "guardrail", "continue", "held", 1, 0.01, 0.3,
                Double.POSITIVE_INFINITY, 0, 0.001, -0.002, Double.POSITIVE_INFINITY, 0.95, Fixtures.T0, "f", false, "none");
        assertThat(DecisionJson.writeString(r)).contains("\"boundary\":null");
        assertThat(DecisionJson.read(DecisionJson.write(r)).boundary()).isNaN();
    }

    @Test
    void recordsOfARealMonitorReadBackEqual() {
        ExperimentMonitor monitor = new ExperimentMonitor(Fixtures.basketRollout(List.of("candidate"), false,
                Fixtures.failedPayments(StopAction.KILL)));
        List<DecisionRecord> records = new ArrayList<>(monitor.hold(Fixtures.T0, "incident"));
        records.addAll(monitor.resume(Fixtures.T0.plusSeconds(30)));
        for (int look = 1; look <= 30 && records.size() < 3; look++) {
            long n = 1000L * look;
            records.addAll(monitor.look(Fixtures.T0.plusSeconds(60L * look), Map.of("current", n, "candidate", n),
                    Fixtures.rates("failed_payments", Map.of("current", new long[] {n / 100, n}, "candidate", new long[] {n * 3 / 100, n})))
                    .decisions());
        }
        assertThat(records).extracting(DecisionRecord::decision).containsExactly("held", "continue", "stop-harm");
        for (DecisionRecord r : records) {
            assertThat(DecisionJson.read(DecisionJson.write(r))).isEqualTo(r);
        }
    }

    @Test
    void readingNamesWhatIsWrong() {
        String good = DecisionJson.writeString(Fixtures.stopForHarm("g", false));
        assertThatThrownBy(() -> DecisionJson.read(good.replace(",\"dry_run\":false", "").getBytes(StandardCharsets.UTF_8)))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("'dry_run'");
        assertThatThrownBy(() -> DecisionJson.read(good.replace("\"value\":0.0184", "\"value\":\"0.0184\"").getBytes(StandardCharsets.UTF_8)))
                .hasMessageContaining("'estimate.value'");
        assertThatThrownBy(() -> DecisionJson.read(good.replace("\"at\":\"2026-03-01T00:04:00Z\"", "\"at\":\"yesterday\"")
                .getBytes(StandardCharsets.UTF_8))).hasMessageContaining("'at'");
        assertThatThrownBy(() -> DecisionJson.read("not json".getBytes(StandardCharsets.UTF_8)))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("must be JSON");
        assertThatThrownBy(() -> DecisionJson.read("[1]".getBytes(StandardCharsets.UTF_8))).hasMessageContaining("JSON object");
    }

    @Test
    void unknownMembersAreIgnored() {
        String json = DecisionJson.writeString(Fixtures.stopForHarm("h", false)).replace("{\"type\"", "{\"schema\":2,\"type\"");
        assertThat(DecisionJson.read(json.getBytes(StandardCharsets.UTF_8))).isEqualTo(Fixtures.stopForHarm("h", false));
    }

    /**
     * A p99 latency guardrail's stop: the record names the kind and the quantile, and its levels are
     * the arms' 99th percentiles in ms (treatment 412.5, control 380.25; the estimate their
     * difference, 32.25, and the relative change 412.5 / 380.25 − 1, by hand). The layout as
     * docs/decision-record.md shows it.
     */
    @Test
    void aQuantileRecordNamesItsQuantileAndCarriesTheLevels() {
        DecisionRecord r = new DecisionRecord("basket-v7", "candidate", "checkout-ms", "guardrail", "stop-harm", "continue",
                5, 0.5, 3.5, 3.25, 0.001, 32.25, 11.5, Double.POSITIVE_INFINITY, 0.95, Fixtures.T0, "q-1", true, "kill",
                412.5 / 380.25 - 1, 0.03, Double.POSITIVE_INFINITY, "event-quantile", 0.99, 412.5, 380.25);
        String json = DecisionJson.writeString(r);
        assertThat(json).startsWith("{\"type\":\"interim.decision\",\"experiment\":\"basket-v7\",\"arm\":\"candidate\","
                + "\"metric\":\"checkout-ms\",\"role\":\"guardrail\",\"kind\":\"event-quantile\",\"quantile\":0.99,"
                + "\"decision\":\"stop-harm\",")
                .contains("\"estimate\":{\"value\":32.25,\"lower\":11.5,\"upper\":null,\"level\":0.95},\"relative\":{")
                .contains("\"level\":0.95},\"levels\":{\"treatment\":412.5,\"control\":380.25},\"at\":");
        DecisionRecord back = DecisionJson.read(json.getBytes(StandardCharsets.UTF_8));
        assertThat(back).isEqualTo(r);
        assertThat(back.quantile()).isEqualTo(0.99);
        assertThat(back.treatmentLevel() - back.controlLevel()).isEqualTo(back.estimate());
    }

    /** Other kinds name their kind and have no quantile member; a record without kind or levels reads as before. */
    @Test
    void otherKindsHaveNoQuantileAndOlderRecordsReadWithoutKindOrLevels() {
        ExperimentMonitor monitor = new ExperimentMonitor(Fixtures.basketRollout(List.of("candidate"), false,
                Fixtures.failedPayments(StopAction.KILL)));
        DecisionRecord stop = null;
        for (int look = 1; look <= 30 && stop == null; look++) {
            long k = 1000L * look;
            List<DecisionRecord> d = monitor.look(Fixtures.T0.plusSeconds(60L * look), Map.of("current", k, "candidate", k),
                    Fixtures.rates("failed_payments", Map.of("current", new long[] {k / 100, k}, "candidate", new long[] {k * 3 / 100, k})))
                    .decisions();
            stop = d.isEmpty() ? null : d.get(0);
        }
        assertThat(stop).isNotNull();
        String json = DecisionJson.writeString(stop);
        assertThat(json).contains("\"role\":\"guardrail\",\"kind\":\"event-rate\",\"decision\":").doesNotContain("quantile");
        assertThat(stop.quantile()).isNaN();
        assertThat(stop.kind()).isEqualTo("event-rate");
        // The levels are the arms' failure rates at the look (control 1%, candidate 3% by construction).
        assertThat(stop.controlLevel()).isCloseTo(0.01, within(1e-3));
        assertThat(stop.treatmentLevel()).isCloseTo(0.03, within(1e-3));
        assertThat(DecisionJson.read(json.getBytes(StandardCharsets.UTF_8))).isEqualTo(stop);

        DecisionRecord old = DecisionJson.read(DecisionJson.write(Fixtures.stopForHarm("o", false)));
        assertThat(old.kind()).isNull();
        assertThat(old.quantile()).isNaN();
        assertThat(old.treatmentLevel()).isNaN();
        assertThat(DecisionJson.writeString(old)).doesNotContain("kind").doesNotContain("levels");
        assertThatThrownBy(() -> DecisionJson.read(json.replace("\"kind\":\"event-rate\"", "\"kind\":\"event-rate\",\"quantile\":99")
                .getBytes(StandardCharsets.UTF_8))).hasMessageContaining("'quantile'");
    }
}
