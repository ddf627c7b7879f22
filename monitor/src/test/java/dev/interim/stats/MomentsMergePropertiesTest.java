package dev.interim.stats;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Random;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.constraints.DoubleRange;
import net.jqwik.api.constraints.IntRange;
import net.jqwik.api.constraints.Scale;
import net.jqwik.api.constraints.Size;

/** Merging tallies of any split, in any order, gives what one pass over all the data gives. */
class MomentsMergePropertiesTest {

    private static final double EPS = Math.ulp(1.0);

    @Property(tries = 300)
    void combineOverAnySplitEqualsOnePass(
            @ForAll @Size(max = 200) List<@DoubleRange(min = -1e6, max = 1e6) @Scale(6) Double> values,
            @ForAll @Size(max = 8) List<@IntRange(min = 0, max = 200) Integer> cuts,
            @ForAll Random random) {
        RunningMoments onePass = new RunningMoments();
        values.forEach(onePass::accept);

        List<RunningMoments> parts = split(values, cuts);
        Collections.shuffle(parts, random);
        RunningMoments merged = new RunningMoments();
        parts.forEach(merged::combine);

        Moments expected = onePass.snapshot();
        Moments actual = merged.snapshot();
        assertThat(actual.count()).isEqualTo(expected.count()); // common practice: counts add exactly
        if (expected.count() == 0) {
            assertThat(actual).isEqualTo(Moments.EMPTY); // documented convention: empty stays empty
            return;
        }
        // Tolerance (Chan, Golub & LeVeque 1983): both the updating pass and the pairwise merge have
        // error of order n·κ·ε relative in M2, κ = ||x|| / sqrt(M2) the condition number, that is
        // n·ε·||x||·sqrt(M2) absolute; the two results may err in opposite directions, and the
        // constants are small, hence the factor 8. The mean rounds at most once per step: n·ε·max|x|.
        int n = values.size();
        double norm = Math.sqrt(values.stream().mapToDouble(x -> x * x).sum());
        double maxAbs = values.stream().mapToDouble(Math::abs).max().orElse(0);
        assertThat(actual.mean()).isCloseTo(expected.mean(), within(8 * n * EPS * maxAbs));
        assertThat(actual.sumSquaredDeviations()).isCloseTo(expected.sumSquaredDeviations(),
                within(8 * n * EPS * norm * Math.sqrt(expected.sumSquaredDeviations())));
        // the snapshot route (Moments.plus) is the same merge
        Moments viaSnapshots = Moments.EMPTY;
        for (RunningMoments part : parts) {
            viaSnapshots = viaSnapshots.plus(part.snapshot());
        }
        assertThat(viaSnapshots).isEqualTo(actual); // common practice: one formula, one result
    }

    private static List<RunningMoments> split(List<Double> values, List<Integer> cuts) {
        List<Integer> bounds = new ArrayList<>();
        bounds.add(0);
        cuts.forEach(c -> bounds.add(Math.min(c, values.size())));
        bounds.add(values.size());
        Collections.sort(bounds);
        List<RunningMoments> parts = new ArrayList<>();
        for (int i = 0; i + 1 < bounds.size(); i++) {
            RunningMoments part = new RunningMoments();
            values.subList(bounds.get(i), bounds.get(i + 1)).forEach(part::accept);
            parts.add(part);
        }
        return parts;
    }
}
