package dev.interim.stats;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import org.junit.jupiter.api.Test;

class ProportionCountsTest {

    @Test
    void rateIsSuccessesOverTrialsAndNaNWithoutTrials() {
        // common practice: the observed rate; undefined (NaN) with no trials, as documented
        assertThat(new ProportionCounts(3, 12).rate()).isEqualTo(0.25);
        assertThat(new ProportionCounts(3, 12).failures()).isEqualTo(9);
        assertThat(ProportionCounts.EMPTY.rate()).isNaN();
    }

    @Test
    void validatesCounts() {
        // common practice: 0 <= successes <= trials
        assertThatThrownBy(() -> new ProportionCounts(5, 4)).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("0 <= successes <= trials");
        assertThatThrownBy(() -> new ProportionCounts(-1, 4)).isInstanceOf(IllegalArgumentException.class);
        assertThatThrownBy(() -> new ProportionCounts(0, -1)).isInstanceOf(IllegalArgumentException.class);
    }

    @Test
    void plusAddsCountsAndRefusesOverflow() {
        // common practice: counts of disjoint samples add
        assertThat(new ProportionCounts(1, 10).plus(new ProportionCounts(4, 5))).isEqualTo(new ProportionCounts(5, 15));
        assertThat(ProportionCounts.EMPTY.plus(new ProportionCounts(2, 3))).isEqualTo(new ProportionCounts(2, 3));
        assertThatThrownBy(() -> new ProportionCounts(0, Long.MAX_VALUE).plus(new ProportionCounts(0, 1)))
                .isInstanceOf(ArithmeticException.class);
    }

    @Test
    void runningProportionCountsAndCombines() {
        RunningProportion a = new RunningProportion();
        a.accept(true);
        a.accept(false);
        a.accept(true);
        RunningProportion b = new RunningProportion();
        b.accept(false);
        ProportionCounts before = a.snapshot();
        // common practice: one trial per accept, one success per true; merging adds counts
        assertThat(before).isEqualTo(new ProportionCounts(2, 3));
        assertThat(a.combine(b)).isSameAs(a);
        assertThat(a.snapshot()).isEqualTo(new ProportionCounts(2, 4));
        assertThat(before).isEqualTo(new ProportionCounts(2, 3)); // snapshots are values
        assertThat(b.snapshot()).isEqualTo(new ProportionCounts(0, 1)); // the other tally is unchanged
        assertThat(new RunningProportion().snapshot()).isEqualTo(ProportionCounts.EMPTY);
    }
}
