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
 * @param observationAheadMaxNanos how far an observation's time may lie ahead of the loop's clock
 *     before it is a fault (a time stamp from another clock domain, such as wall-clock epoch time)
 * @param planRangeSlack how far (position units) a chunk's action may lie outside its joint's
 *     position bounds before the chunk is a policy fault; 0 = any value outside them
 * @param stallPeriods the loop monitor raises the loop-stalled alarm when no tick has completed for
 *     this many control periods (wall-clock runs only; a virtual-time run has no monitor)
 */
public record LoopSettings(long periodNanos, int queryEveryTicks, int[] positionIndex, long maxTicks,
                           long firstObservationTimeoutNanos, long shutdownStopTimeoutNanos, boolean armWhenPlanned,
                           long observationAheadMaxNanos, double planRangeSlack, int stallPeriods) {

    /** Default of {@link #observationAheadMaxNanos()}: 1 ms, a clock read in another thread's view. */
    public static final long DEFAULT_OBSERVATION_AHEAD_MAX_NANOS = 1_000_000L;
    /** Default of {@link #stallPeriods()}. */
    public static final int DEFAULT_STALL_PERIODS = 3;

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
        if (observationAheadMaxNanos < 0) {
            throw new IllegalArgumentException("observation-ahead tolerance must be >= 0 ns, got " + observationAheadMaxNanos);
        }
        if (!(planRangeSlack >= 0 && planRangeSlack < Double.POSITIVE_INFINITY)) {
            throw new IllegalArgumentException("plan range slack must be finite and >= 0, got " + planRangeSlack);
        }
        if (stallPeriods < 1) {
            throw new IllegalArgumentException("stall bound must be >= 1 period, got " + stallPeriods);
        }
        positionIndex = positionIndex.clone();
    }

    /** The settings with the defaults for the observation-ahead tolerance, the plan range slack and the stall bound. */
    public LoopSettings(long periodNanos, int queryEveryTicks, int[] positionIndex, long maxTicks,
                        long firstObservationTimeoutNanos, long shutdownStopTimeoutNanos, boolean armWhenPlanned) {
        this(periodNanos, queryEveryTicks, positionIndex, maxTicks, firstObservationTimeoutNanos,
                shutdownStopTimeoutNanos, armWhenPlanned, DEFAULT_OBSERVATION_AHEAD_MAX_NANOS, 0.0, DEFAULT_STALL_PERIODS);
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
