package dev.interim.sequential;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.interim.stats.Alternative;
import dev.interim.stats.ConfidenceInterval;
import dev.interim.reference.Draws;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * Repeated confidence intervals cover the true effect at every look simultaneously with probability
 * at least 1 − α (Jennison & Turnbull 2000, ch. 9). Checked by a seeded simulation of estimates
 * θ̂_k = S_k/I_k with I_k = t_k·I_max: 100,000 sequences; the share of sequences whose intervals
 * all cover θ must be 1 − α within 4 standard errors (≈ 0.0028).
 */
class RepeatedConfidenceIntervalTest {

    @Test
    void theWholeSequenceCoversTheEffectWithProbabilityOneMinusAlpha() {
        double[] fractions = {0.15, 0.3, 0.55, 0.8, 1};
        double iMax = 400;   // information at the end: se of the final estimate is 0.05
        double theta = 0.12;
        for (Alternative alternative : new Alternative[] {Alternative.TWO_SIDED, Alternative.GREATER}) {
            GroupSequentialDesign design = GroupSequentialDesign.spending(0.05, alternative, SpendingFunction.parse("pocock"));
            Look[] looks = design.looksAt(fractions);
            SplittableRandom random = new SplittableRandom(2024);
            int runs = 100_000;
            int covered = 0;
            for (int r = 0; r < runs; r++) {
                double score = 0;
                double before = 0;
                boolean all = true;
                for (Look look : looks) {
                    double increment = (look.fraction() - before) * iMax;
                    score += theta * increment + Math.sqrt(increment) * Draws.gaussian(random);
                    before = look.fraction();
                    double information = look.fraction() * iMax;
                    ConfidenceInterval ci = RepeatedConfidenceInterval.at(design, look, score / information,
                            1 / Math.sqrt(information));
                    all &= ci.contains(theta);
                }
                if (all) {
                    covered++;
                }
            }
            assertThat((double) covered / runs).as(alternative.toString())
                    .isCloseTo(0.95, within(4 * Math.sqrt(0.95 * 0.05 / runs)));
        }
    }

    @Test
    void beforeAnyAlphaIsSpentTheIntervalIsTheWholeLine() {
        GroupSequentialDesign design = GroupSequentialDesign.spending(0.05, Alternative.TWO_SIDED, SpendingFunction.parse("obf"));
        ConfidenceInterval ci = RepeatedConfidenceInterval.at(design, design.monitor().lookAt(1e-4), 0.3, 0.2);
        assertThat(ci.lower()).isEqualTo(Double.NEGATIVE_INFINITY);
        assertThat(ci.upper()).isEqualTo(Double.POSITIVE_INFINITY);
        assertThat(ci.level()).isEqualTo(0.95);
    }
}
