package dev.interim.stats;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Random;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvFileSource;

/**
 * Running moments on the NIST StRD accuracy datasets NumAcc1–4: large means with a small spread,
 * where a sum-of-squares formula loses every digit.
 */
class NumAccTest {

    private static final double EPS = Math.ulp(1.0);

    @ParameterizedTest(name = "{0}")
    @CsvFileSource(resources = "/reference/stats-nist-strd-numacc.csv")
    void onePassGivesTheCertifiedMeanAndStandardDeviation(String dataset, double first, double a, double b,
                                                         int count, double certifiedMean, double certifiedSd) {
        double[] data = generate(first, a, b, count);
        RunningMoments running = new RunningMoments();
        for (double x : data) {
            running.accept(x);
        }
        Moments moments = running.snapshot();
        double spacing = Math.ulp(Math.max(Math.abs(a), Math.max(Math.abs(b), Math.abs(first))));

        // Tolerances: the decimal data are stored as the nearest doubles, each moved by at most half a
        // spacing. That moves the mean by at most half a spacing, and the sample sd by at most
        // sqrt(n/(n-1)) half-spacings (sd is a Lipschitz function of the data), under one spacing for
        // n >= 3. On top, the n running updates may each round once: n·ulp for the mean and n·ε
        // relative for the sd (rounding of a recursive sum of non-negative terms).
        assertThat(moments.count()).isEqualTo(count); // NIST StRD, dataset size
        assertThat(moments.mean()) // NIST StRD, certified mean
                .isCloseTo(certifiedMean, within(spacing / 2 + count * Math.ulp(certifiedMean)));
        assertThat(moments.standardDeviation()) // NIST StRD, certified standard deviation
                .isCloseTo(certifiedSd, within(spacing + count * EPS * certifiedSd));
    }

    @ParameterizedTest(name = "{0}")
    @CsvFileSource(resources = "/reference/stats-nist-strd-numacc.csv")
    void randomPartsMergedInRandomOrderMatchOnePass(String dataset, double first, double a, double b,
                                                   int count, double certifiedMean, double certifiedSd) {
        double[] data = generate(first, a, b, count);
        Moments onePass = Moments.ofValues(data);
        for (long stream = 1; stream <= 20; stream++) {
            Moments merged = mergeOfRandomParts(data, new Random(stream));

            // Tolerance: 1e-12 relative, as the merge must keep (the means are carried as double-doubles,
            // so no merge loses the ~1e-9 a plain double mean near 1e7 would).
            assertThat(merged.count()).isEqualTo(onePass.count()); // NIST StRD NumAcc, merge invariant
            assertThat(merged.mean()) // NIST StRD NumAcc data; Chan, Golub & LeVeque (1983) merge
                    .isCloseTo(onePass.mean(), within(1e-12 * Math.abs(onePass.mean())));
            assertThat(merged.standardDeviation()) // NIST StRD NumAcc data; Chan, Golub & LeVeque (1983) merge
                    .isCloseTo(onePass.standardDeviation(), within(1e-12 * onePass.standardDeviation()));
            double spacing = Math.ulp(first);
            assertThat(merged.standardDeviation()) // NIST StRD, certified standard deviation
                    .isCloseTo(certifiedSd, within(3 * spacing + count * EPS * certifiedSd));
        }
    }

    /** The value {@code first}, then {@code a} and {@code b} alternating, {@code count} values in all. */
    static double[] generate(double first, double a, double b, int count) {
        double[] data = new double[count];
        data[0] = first;
        for (int i = 1; i < count; i++) {
            data[i] = i % 2 == 1 ? a : b;
        }
        return data;
    }

    /** Cuts the data at random places into up to 12 parts, tallies each, and merges them in random order. */
    private static Moments mergeOfRandomParts(double[] data, Random random) {
        List<Integer> cuts = new ArrayList<>();
        int parts = 1 + random.nextInt(12);
        for (int i = 1; i < parts; i++) {
            cuts.add(random.nextInt(data.length + 1));
        }
        cuts.add(0);
        cuts.add(data.length);
        Collections.sort(cuts);
        List<RunningMoments> tallies = new ArrayList<>();
        for (int i = 0; i + 1 < cuts.size(); i++) {
            RunningMoments tally = new RunningMoments();
            for (int j = cuts.get(i); j < cuts.get(i + 1); j++) {
                tally.accept(data[j]);
            }
            tallies.add(tally); // some parts are empty on purpose
        }
        Collections.shuffle(tallies, random);
        RunningMoments total = new RunningMoments();
        for (RunningMoments tally : tallies) {
            total.combine(tally);
        }
        return total.snapshot();
    }
}
