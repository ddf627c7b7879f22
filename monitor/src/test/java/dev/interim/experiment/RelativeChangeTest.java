package dev.interim.experiment;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.interim.sequential.SpendingFunction;
import dev.interim.stats.Moments;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import org.apache.commons.statistics.distribution.NormalDistribution;
import org.apache.commons.statistics.distribution.TDistribution;
import org.junit.jupiter.api.Test;

/**
 * The relative change treatment/control − 1 and its repeated interval: the interval of the log ratio,
 * log(m_t/m_c) ± q·√((se_t/m_t)² + (se_c/m_c)²), mapped back by exp(·) − 1 (delta method on the log
 * ratio; Deng, Knoblich &amp; Lu 2018, §3.3), q the look's boundary c mapped to the t scale,
 * T_ν⁻¹(Φ(c)). And a horizon planned by a relative effect is the one planned by that share of
 * control's level. Expected values are computed here from those formulas (Commons Statistics for
 * the distributions), from the look's own boundary and degrees of freedom.
 */
class RelativeChangeTest {
    private static final Instant T = Instant.parse("2026-03-01T00:00:00Z");

    private static Comparison comparison(Horizon horizon) {
        MetricDefinition m = new MetricDefinition("latency", MetricKind.EVENT_MEAN, Role.PRIMARY, Worse.HIGHER, 0.05, Sides.TWO,
                SpendingFunction.parse("pocock"), null, horizon, null, StopAction.NONE);
        ExperimentDefinition e = new ExperimentDefinition("ember-canary", "stable", List.of("candidate"),
                Map.of("stable", 1.0, "candidate", 1.0), Duration.ofMinutes(1), 2, RunMode.DRY_RUN, 0.001, List.of(m));
        return new Comparison(e, m, "candidate");
    }

    @Test
    void theRelativeIntervalIsTheLogRatiosMappedBack() {
        Moments treatment = Moments.of(400, 110, 30);
        Moments control = Moments.of(400, 100, 25);
        LookResult r = comparison(new Horizon.MaxPerArm(2000)).look(new Tally.Mean(treatment), new Tally.Mean(control), T)
                .orElseThrow();
        double seT = treatment.standardErrorOfMean();
        double seC = control.standardErrorOfMean();
        double logSe = Math.sqrt((seT / 110) * (seT / 110) + (seC / 100) * (seC / 100));
        double c = r.look().efficacyBoundary();
        double q = TDistribution.of(r.estimate().degreesOfFreedom())
                .inverseSurvivalProbability(NormalDistribution.of(0, 1).survivalProbability(c));
        assertThat(r.estimate().relative()).isCloseTo(0.1, within(1e-12));
        assertThat(r.relativeInterval().lower()).isCloseTo(Math.expm1(Math.log(1.1) - q * logSe), within(1e-12));
        assertThat(r.relativeInterval().upper()).isCloseTo(Math.expm1(Math.log(1.1) + q * logSe), within(1e-12));
        assertThat(r.relativeInterval().level()).isEqualTo(0.95);
    }

    @Test
    void noRelativeChangeWhereALevelIsNotPositive() {
        LookResult r = comparison(new Horizon.MaxPerArm(2000))
                .look(new Tally.Mean(Moments.of(400, 5, 30)), new Tally.Mean(Moments.of(400, -2, 25)), T).orElseThrow();
        assertThat(r.estimate().relative()).isNaN();
        assertThat(r.relativeInterval()).isNull();
    }

    @Test
    void aRelativeEffectPlansTheHorizonOfThatShareOfControlsLevel() {
        // Control's mean is 50, so a relative effect of 0.1 is an effect of 5 in the metric's units.
        Tally treatment = new Tally.Mean(Moments.of(300, 52, 20));
        Tally control = new Tally.Mean(Moments.of(300, 50, 20));
        double absolute = comparison(new Horizon.Powered(0.8, 5, 10)).look(treatment, control, T).orElseThrow()
                .look().fraction();
        double relative = comparison(new Horizon.Powered(0.8, 0.1, 10, Horizon.Scale.RELATIVE)).look(treatment, control, T)
                .orElseThrow().look().fraction();
        assertThat(relative).isCloseTo(absolute, within(1e-12));
        assertThat(absolute).as("a fraction the horizon does not cap").isBetween(0.05, 0.95);
    }
}
