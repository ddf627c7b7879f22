package dev.interim.sequential;

/**
 * What a design needs to reach its power, per arm. Sizes are rounded up to whole units; expected
 * sizes are not rounded.
 *
 * @param fixedPerArm sample per arm of the single-look test with the same α and power
 * @param inflation maximum information over the single-look information (Jennison & Turnbull 2000, §2.4)
 * @param maximumPerArm sample per arm at the final look
 * @param expectedUnderNull expected sample per arm at stopping when there is no effect
 * @param expectedUnderAlternative expected sample per arm at stopping under the planned effect
 * @param drift the drift η = θ·√I_max that gives the power
 */
public record SampleSizePlan(long fixedPerArm, double inflation, long maximumPerArm,
                             double expectedUnderNull, double expectedUnderAlternative, double drift) {}
