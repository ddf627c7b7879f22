package dev.interim.replay;

/**
 * When one experiment looks during a replay, by event time rather than the wall clock.
 *
 * <p>The rule. The experiment's first accepted event starts its clock at t₀; its looks are due at
 * t₀ + k·{@code look_every} (k = 1, 2, ...). When an event of the experiment arrives with a time at
 * or past the next due instant T, the look at T runs first, then the event is counted: a look at T
 * sees exactly the events read before the first one stamped T or later. When one event jumps over
 * several due instants, only the first of them runs: the others would see the same tallies, add no
 * information and change no decision (the daemon would run them as looks with nothing new), so the
 * next due instant becomes the first one after the event. At the end of the file, the final look
 * runs at the instant then due — as if the stream had gone quiet until it. Every look is therefore
 * on the experiment's schedule.
 *
 * <p>Events stamped before the experiment's last look (late, or out of order in the file) are counted
 * at its next look, as the daemon counts late records. Times are epoch milliseconds. Mutable, one
 * owner.
 */
final class LookSchedule {
    /** No look is due. */
    static final long NONE = Long.MIN_VALUE;

    private final long every;
    private boolean started;
    private long origin;
    private long next;
    private long lastLook = NONE;

    /** @param everyMillis the time between looks, at least 1 */
    LookSchedule(long everyMillis) {
        if (everyMillis < 1) {
            throw new IllegalArgumentException("the time between looks must be at least 1 ms, got " + everyMillis);
        }
        this.every = everyMillis;
    }

    /**
     * Called with the time of each accepted event of the experiment before it is counted: the
     * instant of the look to run first, or {@link #NONE}.
     */
    long lookBefore(long time) {
        if (!started) {
            started = true;
            origin = time;
            next = Math.addExact(time, every);
            return NONE;
        }
        if (time < next) {
            return NONE;
        }
        long at = next;
        next = Math.addExact(at, Math.multiplyExact(every, (time - at) / every + 1));
        lastLook = at;
        return at;
    }

    /** The instant of the final look at the end of the input, which the schedule then records. */
    long finalLook() {
        if (!started) {
            throw new IllegalStateException("no event, no look");
        }
        lastLook = next;
        next = Math.addExact(next, every);
        return lastLook;
    }

    /** True once an event has started the clock. */
    boolean started() {
        return started;
    }

    /** The first event's time, t₀. */
    long origin() {
        return origin;
    }

    /** True when {@code time} is before the last look (the event will count at the next look). */
    boolean late(long time) {
        return lastLook != NONE && time < lastLook;
    }
}
