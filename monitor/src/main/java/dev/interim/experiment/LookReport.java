package dev.interim.experiment;

import java.time.Instant;
import java.util.List;

/**
 * Everything one look of an experiment produced: the sample-ratio check, each comparison's look
 * (comparisons without enough data yet have none), and the decision records of the state changes.
 */
public record LookReport(String experiment, Instant at, SampleRatio sampleRatio, List<LookResult> results,
                         List<DecisionRecord> decisions) {
    public LookReport {
        results = List.copyOf(results);
        decisions = List.copyOf(decisions);
    }
}
