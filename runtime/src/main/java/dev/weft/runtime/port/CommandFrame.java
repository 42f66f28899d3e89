package dev.weft.runtime.port;

/**
 * One tick's command, as the control loop hands it to a {@link CommandPort}.
 *
 * <p>The loop owns one frame, preallocated, and rewrites it every tick: a port reads it inside
 * {@link CommandPort#emit} and copies what it needs before returning; it never keeps a reference.
 * Every value in {@link #positions} and {@link #velocities} is finite (the loop guarantees it).
 */
public final class CommandFrame {

    /** Nothing but hold commands go out: the policy's plan is not followed. */
    public static final byte STATE_DISARMED = 0;
    /** Soft start: ramping from the measured pose to the plan within the limits. */
    public static final byte STATE_ARMING = 1;
    /** Following the plan. */
    public static final byte STATE_ARMED = 2;
    /** Controlled stop in progress: velocity brought to zero within the limits. */
    public static final byte STATE_STOPPING = 3;
    /** Latched after a fault: holding; leaves only on an explicit reset. */
    public static final byte STATE_FAULTED = 4;

    /** No stop in progress. */
    public static final byte STOP_NONE = 0;
    /** IEC 60204-1 stop category 1: controlled stop, then power removed at standstill. */
    public static final byte STOP_CATEGORY_1 = 1;
    /** IEC 60204-1 stop category 2: controlled stop, power stays on, position held. */
    public static final byte STOP_CATEGORY_2 = 2;

    /** Control tick number. */
    public long tick;
    /** The tick's deadline on the loop's clock, nanoseconds. */
    public long timeNanos;
    /** One of the {@code STATE_} codes. */
    public byte state;
    /** One of the {@code STOP_} codes. */
    public byte stopCategory;
    /** True when the port must remove drive power now (category 1 stop at standstill). */
    public boolean removePower;
    /** The limiter's flags for this tick (which bounds shaped the command), all joints or-ed. */
    public int limiterFlags;
    /** Commanded joint positions (radians or metres). */
    public final double[] positions;
    /**
     * Commanded joint velocities: the finite difference {@code (q[n] − q[n−1]) / Δc} of the
     * commanded positions (per second), which the limiter keeps within the velocity bound.
     */
    public final double[] velocities;

    public CommandFrame(int joints) {
        if (joints < 1) {
            throw new IllegalArgumentException("a frame needs at least one joint, got " + joints);
        }
        this.positions = new double[joints];
        this.velocities = new double[joints];
    }

    public int joints() {
        return positions.length;
    }

    /** Copies every field of {@code from} into this frame (same joint count). */
    public void copyFrom(CommandFrame from) {
        tick = from.tick;
        timeNanos = from.timeNanos;
        state = from.state;
        stopCategory = from.stopCategory;
        removePower = from.removePower;
        limiterFlags = from.limiterFlags;
        System.arraycopy(from.positions, 0, positions, 0, positions.length);
        System.arraycopy(from.velocities, 0, velocities, 0, velocities.length);
    }

    /** A name for a state code, for messages and files. */
    public static String stateName(byte state) {
        return switch (state) {
            case STATE_DISARMED -> "disarmed";
            case STATE_ARMING -> "arming";
            case STATE_ARMED -> "armed";
            case STATE_STOPPING -> "stopping";
            case STATE_FAULTED -> "faulted";
            default -> "unknown(" + state + ")";
        };
    }
}
