package dev.interim.experiment;

import dev.interim.stats.HistogramCounts;
import dev.interim.stats.Moments;
import dev.interim.stats.ProportionCounts;
import dev.interim.stats.RatioMoments;

/** The sufficient statistics of one arm on one metric at a look: immutable snapshots. */
public sealed interface Tally permits Tally.Rate, Tally.Mean, Tally.Ratio, Tally.Quantile {

    /** Observations so far (events or units; units for a ratio of per-unit sums). */
    long count();

    /** What this tally holds. */
    TallyForm form();

    /** Successes over trials, for the rates. */
    record Rate(ProportionCounts counts) implements Tally {
        public Rate {
            if (counts == null) {
                throw new IllegalArgumentException("a rate tally needs its counts");
            }
        }

        @Override
        public TallyForm form() {
            return TallyForm.RATE;
        }

        @Override
        public long count() {
            return counts.trials();
        }
    }

    /** Count, mean and sum of squared deviations, for means and per-unit totals. */
    record Mean(Moments moments) implements Tally {
        public Mean {
            if (moments == null) {
                throw new IllegalArgumentException("a mean tally needs its moments");
            }
        }

        @Override
        public TallyForm form() {
            return TallyForm.MEAN;
        }

        @Override
        public long count() {
            return moments.count();
        }
    }

    /** Units with their numerator and denominator sums, for ratios with a delta-method variance. */
    record Ratio(RatioMoments moments) implements Tally {
        public Ratio {
            if (moments == null) {
                throw new IllegalArgumentException("a ratio tally needs its moments");
            }
        }

        @Override
        public TallyForm form() {
            return TallyForm.RATIO;
        }

        @Override
        public long count() {
            return moments.count();
        }
    }

    /** Counts of values in histogram buckets, in groups of units, for quantiles. */
    record Quantile(HistogramCounts counts) implements Tally {
        public Quantile {
            if (counts == null) {
                throw new IllegalArgumentException("a quantile tally needs its counts");
            }
        }

        @Override
        public TallyForm form() {
            return TallyForm.QUANTILE;
        }

        @Override
        public long count() {
            return counts.count();
        }
    }

    /** The empty tally of {@code form}. */
    public static Tally empty(TallyForm form) {
        return switch (form) {
            case RATE -> new Rate(ProportionCounts.EMPTY);
            case MEAN -> new Mean(Moments.EMPTY);
            case RATIO -> new Ratio(RatioMoments.EMPTY);
            case QUANTILE -> new Quantile(HistogramCounts.empty(1));
        };
    }
}
