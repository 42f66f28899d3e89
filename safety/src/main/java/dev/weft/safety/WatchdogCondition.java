package dev.weft.safety;

/**
 * The conditions the {@link Watchdog} checks every tick, each with its own code and message. When
 * several are present in one tick, {@link Watchdog#check} reports the first in this declaration
 * order; {@link Watchdog#activeMask()} has them all.
 */
public enum WatchdogCondition {
    /** The operator asked for a stop. */
    OPERATOR_STOP(1, "operator requested a stop"),
    /** The command port reported a fault (lost link, driver error). */
    PORT_FAULT(2, "command port reported a fault"),
    /** The policy produced NaN or an infinity. */
    NON_FINITE_OUTPUT(3, "policy output contained NaN or an infinity"),
    /** The latest observation is older than its bound (or its age is unknown). */
    STALE_OBSERVATION(4, "observation is older than its bound"),
    /** No planned action is left for the coming tick. */
    PLAN_STARVED(5, "no plan left ahead of the current tick"),
    /** Fewer planned ticks remain than the configured bound. */
    PLAN_LOW(6, "plan remaining is below its bound"),
    /** Inference took longer than its bound. */
    INFERENCE_LATE(7, "inference latency is above its bound"),
    /** The loop overran its deadline too many ticks in a row. */
    LOOP_OVERRUNS(8, "too many consecutive loop overruns"),
    /** The policy threw an exception (its class and message go with the event as the detail). */
    POLICY_FAILED(9, "policy raised an exception"),
    /** The telemetry recorder could not write a row (disk full, I/O error). */
    TELEMETRY_FAULT(10, "telemetry write failed"),
    /** The command port threw an exception from one of its calls. */
    PORT_EXCEPTION(11, "command port threw an exception"),
    /** A step of the control tick other than the policy or the port threw (a smoother, a source, user code). */
    TICK_EXCEPTION(12, "a step of the control tick threw an exception"),
    /** A chunk holds an action outside the joint's position range by more than the configured distance. */
    PLAN_OUT_OF_RANGE(13, "policy plan lies outside the joint range"),
    /** The observation's time stamp is ahead of the loop's clock by more than the tolerance. */
    OBSERVATION_AHEAD(14, "observation time is ahead of the loop clock (a time stamp from another clock domain?)"),
    /** The observation holds NaN or an infinity. */
    NON_FINITE_OBSERVATION(15, "observation contained NaN or an infinity"),
    /** The loop did not complete a tick within the stall bound (raised by the loop's monitor thread). */
    LOOP_STALLED(16, "control loop stalled: a tick did not complete in time"),
    /** A camera's latest frame is older than its bound, or no frame has come yet. */
    FRAME_STALE(17, "a camera's latest frame is older than its bound");

    private static final WatchdogCondition[] BY_CODE = new WatchdogCondition[values().length + 1];

    static {
        for (WatchdogCondition c : values()) {
            BY_CODE[c.code] = c;
        }
    }

    private final int code;
    private final String message;

    WatchdogCondition(int code, String message) {
        this.code = code;
        this.message = message;
    }

    /** Code of this condition, 1 to 17; 0 is never used by a condition and means "none". */
    public int code() {
        return code;
    }

    /** Static message of this condition. */
    public String message() {
        return message;
    }

    /** Bit of this condition in {@link Watchdog#activeMask()}: {@code 1 << (code - 1)}. */
    public int bit() {
        return 1 << (code - 1);
    }

    /** The condition with this code, or null when the code is 0 or unknown. */
    public static WatchdogCondition ofCode(int code) {
        return code > 0 && code < BY_CODE.length ? BY_CODE[code] : null;
    }
}
