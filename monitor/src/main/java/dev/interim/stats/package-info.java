/**
 * Layer 1 of Interim: mergeable running statistics and fixed-horizon tests.
 *
 * <p>Running tallies ({@link dev.interim.stats.RunningMoments}, {@link dev.interim.stats.RunningProportion})
 * are mutable and not thread-safe; what leaves them is an immutable snapshot
 * ({@link dev.interim.stats.Moments}, {@link dev.interim.stats.ProportionCounts}) that the tests in
 * {@link dev.interim.stats.MeanSignificance}, {@link dev.interim.stats.ProportionSignificance} and
 * {@link dev.interim.stats.ChiSquareGoodnessOfFit} take directly.
 *
 * <p>Distribution functions come from Apache Commons Statistics; nothing here is hand-rolled. The
 * package is pure: no I/O, no clock, no messaging.
 *
 * <p>Exceptions: a bad argument (NaN, α outside (0, 1), σ ≤ 0) is an
 * {@link java.lang.IllegalArgumentException}. Data that cannot be tested <em>yet</em> (too few
 * observations, or no variation at all with no difference) is the subclass
 * {@link dev.interim.stats.InsufficientDataException}, which a caller that runs looks on live data
 * can catch and treat as "wait for more data".
 */
package dev.interim.stats;
