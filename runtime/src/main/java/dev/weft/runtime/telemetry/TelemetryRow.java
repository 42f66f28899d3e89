package dev.weft.runtime.telemetry;

/**
 * One control tick as recorded: a preallocated, reused slot of the telemetry ring. The loop fills
 * it; the recorder writes it as one CSV line (columns: {@link TelemetryFormat}).
 */
public final class TelemetryRow {
    public long tick;
    /** Deadline of the tick on the run's clock, relative to the run's start, nanoseconds. */
    public long timeNanos;
    /** How late the tick started after its deadline, nanoseconds. */
    public long periodErrorNanos;
    /** Time from the tick's start to the end of its work, nanoseconds. */
    public long computeNanos;
    /** Supervisor state ordinal ({@code dev.weft.safety.SupervisorState}). */
    public int state;
    /** Watchdog conditions present this tick, one bit per condition (bit = code − 1). */
    public int watchdogMask;
    /** Limiter flags this tick, all joints or-ed. */
    public int limiterFlags;
    /** Ticks of plan ahead, counting this one (0 = starved). */
    public long planTicks;
    /** Ticks since the observation of the newest accepted chunk was taken, or -1 when none. */
    public long chunkAgeTicks;
    /** Whether the port accepted this tick's frame. */
    public boolean emitted;
    /** The blended (and smoothed) target; NaN where no plan covered the tick. */
    public final double[] target;
    /** The command sent. */
    public final double[] command;
    /** The limiter's flags per joint ({@code dev.weft.safety.JerkLimiter} bits). */
    public final int[] jointFlags;
    /** Per watched camera, the age of its latest frame at the tick's start, nanoseconds; −1 before its first frame. */
    public final long[] frameAgeNanos;

    public TelemetryRow(int joints) {
        this(joints, 0);
    }

    public TelemetryRow(int joints, int cameras) {
        target = new double[joints];
        command = new double[joints];
        jointFlags = new int[joints];
        frameAgeNanos = new long[cameras];
    }
}
