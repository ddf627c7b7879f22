package dev.interim.stream;

import dev.interim.experiment.Acknowledgement;
import dev.interim.experiment.DecisionRecord;

/** How the judge writes what it publishes on the decisions topic (the JSON lives in {@code signal}). */
public interface DecisionWriter {
    byte[] decision(DecisionRecord record);

    byte[] acknowledgement(Acknowledgement acknowledgement);
}
