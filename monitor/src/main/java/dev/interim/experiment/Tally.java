package dev.interim.experiment;

import dev.interim.stats.Moments;
import dev.interim.stats.ProportionCounts;

/** The sufficient statistics of one arm on one metric at a look: immutable snapshots. */
public sealed interface Tally permits Tally.Rate, Tally.Mean {

    /** Observations so far (events or units). */
    long count();

    /** Successes over trials, for the rates. */
    record Rate(ProportionCounts counts) implements Tally {
        public Rate {
            if (counts == null) {
                throw new IllegalArgumentException("a rate tally needs its counts");
            }
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
        public long count() {
            return moments.count();
        }
    }
}
