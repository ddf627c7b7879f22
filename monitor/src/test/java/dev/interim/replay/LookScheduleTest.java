package dev.interim.replay;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import org.junit.jupiter.api.Test;

/** The look rule of a replay, instant by instant (the rule is written in {@link LookSchedule}). */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class LookScheduleTest {
    private static final long NONE = LookSchedule.NONE;

    @Test
    void theFirstEventStartsTheClockAndLooksComeEveryIntervalAfterIt() {
        LookSchedule s = new LookSchedule(60);
        assertThat(s.started()).isFalse();
        assertThat(s.lookBefore(1_007)).isEqualTo(NONE);
        assertThat(s.origin()).isEqualTo(1_007);
        assertThat(s.lookBefore(1_020)).isEqualTo(NONE);
        assertThat(s.lookBefore(1_066)).isEqualTo(NONE);
        assertThat(s.lookBefore(1_067)).as("an event stamped exactly at the due instant comes after the look")
                .isEqualTo(1_067);
        assertThat(s.lookBefore(1_067)).isEqualTo(NONE);
        assertThat(s.lookBefore(1_100)).isEqualTo(NONE);
        assertThat(s.lookBefore(1_130)).isEqualTo(1_127);
    }

    @Test
    void anEventThatJumpsSeveralIntervalsRunsOneLookAtTheFirstAndTheNextIsDueAfterTheEvent() {
        LookSchedule s = new LookSchedule(60);
        s.lookBefore(0);
        assertThat(s.lookBefore(250)).isEqualTo(60);         // 60, 120, 180 and 240 passed: one look, at 60
        assertThat(s.lookBefore(299)).isEqualTo(NONE);
        assertThat(s.lookBefore(300)).isEqualTo(300);
        assertThat(s.lookBefore(480)).isEqualTo(360);        // 480 itself is due: the next look is at 540
        assertThat(s.lookBefore(539)).isEqualTo(NONE);
        assertThat(s.lookBefore(540)).isEqualTo(540);
    }

    @Test
    void theFinalLookIsAtTheInstantThenDue() {
        LookSchedule s = new LookSchedule(60);
        s.lookBefore(10);
        s.lookBefore(75);
        assertThat(s.finalLook()).isEqualTo(130);
        assertThat(new LookSchedule(60)).satisfies(fresh -> assertThatThrownBy(fresh::finalLook)
                .isInstanceOf(IllegalStateException.class));
    }

    @Test
    void eventsStampedBeforeTheLastLookAreLateAndMoveNothing() {
        LookSchedule s = new LookSchedule(60);
        s.lookBefore(0);
        assertThat(s.late(-5)).as("nothing is late before the first look").isFalse();
        assertThat(s.lookBefore(61)).isEqualTo(60);
        assertThat(s.late(59)).isTrue();
        assertThat(s.lookBefore(59)).isEqualTo(NONE);
        assertThat(s.late(60)).isFalse();
        assertThat(s.lookBefore(120)).isEqualTo(120);
    }

    @Test
    void theIntervalMustBePositive() {
        assertThatThrownBy(() -> new LookSchedule(0)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("at least 1 ms");
    }
}
