/**
 * {@code interim replay}: the daemon's engine — event reader, tallies, {@code ExperimentMonitor} —
 * over a file of past events, without Kafka, looking on each experiment's schedule of event time.
 * {@link dev.interim.replay.Replay} runs it and returns a {@link dev.interim.replay.ReplayResult}
 * (counts, decision records, final views); {@link dev.interim.replay.LookSchedule} states the look
 * rule; {@link dev.interim.replay.ReplayText} is what the command prints (with the command line's
 * progress bar on a terminal).
 */
package dev.interim.replay;
