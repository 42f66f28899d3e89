package dev.weft.runtime.loop;

/**
 * Timing and scheduling of the control loop.
 *
 * @param periodNanos control period Δc
 * @param queryEveryTicks an inference request every this many ticks; 0 = whenever the worker is free
 * @param positionIndex for each joint, the index of its measured position in the observation
 * @param maxTicks stop after this many ticks (0 = run until shut down)
 * @param firstObservationTimeoutNanos how long {@link ControlLoop#start} waits for the first observation
 * @param shutdownStopTimeoutNanos how long a shutdown waits for the controlled stop to reach standstill
 * @param armWhenPlanned arm at the first tick that has a plan and follows a tick free of watchdog
 *     conditions (deterministic: the same tick on every run of a virtual-time dry run)
 */
public record LoopSettings(long periodNanos, int queryEveryTicks, int[] positionIndex, long maxTicks,
                           long firstObservationTimeoutNanos, long shutdownStopTimeoutNanos, boolean armWhenPlanned) {
    public LoopSettings {
        if (periodNanos <= 0) {
            throw new IllegalArgumentException("control period must be > 0 ns, got " + periodNanos);
        }
        if (queryEveryTicks < 0) {
            throw new IllegalArgumentException("query interval must be >= 0 ticks, got " + queryEveryTicks);
        }
        if (maxTicks < 0) {
            throw new IllegalArgumentException("tick limit must be >= 0, got " + maxTicks);
        }
        positionIndex = positionIndex.clone();
    }

    /** Joint i's position is observation value i. */
    public static int[] leadingPositions(int joints) {
        int[] idx = new int[joints];
        for (int i = 0; i < joints; i++) {
            idx[i] = i;
        }
        return idx;
    }

    @Override
    public int[] positionIndex() {
        return positionIndex.clone();
    }
}
