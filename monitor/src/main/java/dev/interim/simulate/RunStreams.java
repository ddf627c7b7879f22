package dev.interim.simulate;

import java.util.SplittableRandom;

/**
 * One random generator per simulated run, fixed by the stream and the run index alone, so that a
 * run draws the same numbers whichever thread runs it and in whatever order.
 *
 * <p>The generator of run r starts from the r-th value (from 0) that
 * {@code new SplittableRandom(stream).nextLong()} would give — computed directly, without drawing
 * the r values before it: SplittableRandom's output i is mix64(stream + (i + 1)·γ) with its golden
 * gamma γ and Stafford's variant 13 of the MurmurHash3 finaliser (Steele, Lea &amp; Flood 2014, "Fast splittable
 * pseudorandom number generators", OOPSLA). {@code ReproducibilityTest} checks the equality against the
 * JDK's own generator.
 */
public final class RunStreams {
    private static final long GOLDEN_GAMMA = 0x9e3779b97f4a7c15L;

    private RunStreams() {}

    /** The generator of run {@code run} (0-based) in {@code stream}. */
    public static SplittableRandom forRun(long stream, long run) {
        if (run < 0) {
            throw new IllegalArgumentException("run index must be 0 or more, got " + run);
        }
        return new SplittableRandom(startOf(stream, run));
    }

    /** The starting value of run {@code run}: the run-th output of {@code new SplittableRandom(stream)}. */
    static long startOf(long stream, long run) {
        return mix64(stream + (run + 1) * GOLDEN_GAMMA);
    }

    private static long mix64(long z) {
        z = (z ^ (z >>> 30)) * 0xbf58476d1ce4e5b9L;
        z = (z ^ (z >>> 27)) * 0x94d049bb133111ebL;
        return z ^ (z >>> 31);
    }
}
