package dev.weft.safety;

/**
 * Cause codes of {@link Supervisor} transitions and refusals, each with a static message. Codes 1 to
 * 17 are the {@link WatchdogCondition} codes; the others are the supervisor's own.
 */
public final class Cause {

    /** First code of the supervisor's own causes. */
    public static final int ARM_REQUEST = 20;
    /** The soft start reached the plan. */
    public static final int ARMING_COMPLETE = 21;
    /** The soft start did not reach the plan within its tick budget. */
    public static final int ARMING_TIMEOUT = 22;
    /** A controlled stop to disarmed was requested. */
    public static final int DISARM_REQUEST = 23;
    /** The controlled stop reached standstill. */
    public static final int STANDSTILL = 24;
    /** An explicit reset cleared the latched fault. */
    public static final int RESET = 25;
    /** The limiter reported that it could not keep a bound. */
    public static final int LIMITER_FAULT = 26;
    /** The blended target had NaN or an infinity. */
    public static final int NON_FINITE_TARGET = 27;
    /** Arming refused: the supervisor is not disarmed. */
    public static final int ARM_REFUSED_STATE = 30;
    /** Arming refused: the measured pose is non-finite or outside the operating range. */
    public static final int ARM_REFUSED_POSE = 31;
    /** Arming refused: the first planned action is farther from the measured pose than allowed. */
    public static final int ARM_REFUSED_OFFSET = 32;
    /** Arming refused: a watchdog condition was present at the last tick. */
    public static final int ARM_REFUSED_CONDITION = 33;
    /** Arming refused: the first planned action is non-finite or outside the operating range. */
    public static final int ARM_REFUSED_PLAN = 34;
    /** Arming refused: no plan covers the current tick yet (reported by the runtime's loop). */
    public static final int ARM_REFUSED_NO_PLAN = 35;
    /** Arming refused: the measured pose is farther from the held command than the arming offset. */
    public static final int ARM_REFUSED_DRIFT = 36;
    /** Reset refused: the supervisor is not faulted. */
    public static final int RESET_REFUSED_STATE = 40;
    /** Reset refused: the condition that caused the fault is still present. */
    public static final int RESET_REFUSED_CONDITION = 41;

    private Cause() {
    }

    /** Static message for a cause code; never null. */
    public static String message(int code) {
        WatchdogCondition c = WatchdogCondition.ofCode(code);
        if (c != null) {
            return c.message();
        }
        switch (code) {
            case 0:
                return "no cause";
            case ARM_REQUEST:
                return "arm requested; soft start from the measured pose";
            case ARMING_COMPLETE:
                return "soft start reached the plan";
            case ARMING_TIMEOUT:
                return "soft start did not reach the plan in time";
            case DISARM_REQUEST:
                return "controlled stop to disarmed requested";
            case STANDSTILL:
                return "standstill reached";
            case RESET:
                return "fault reset";
            case LIMITER_FAULT:
                return "limiter could not keep a bound";
            case NON_FINITE_TARGET:
                return "blended target contained NaN or an infinity";
            case ARM_REFUSED_STATE:
                return "arming refused: not disarmed";
            case ARM_REFUSED_POSE:
                return "arming refused: measured pose is non-finite or outside the operating range";
            case ARM_REFUSED_OFFSET:
                return "arming refused: first planned action is too far from the measured pose";
            case ARM_REFUSED_CONDITION:
                return "arming refused: a watchdog condition is present";
            case ARM_REFUSED_PLAN:
                return "arming refused: first planned action is non-finite or outside the operating range";
            case ARM_REFUSED_NO_PLAN:
                return "arming refused: no plan covers the current tick yet";
            case ARM_REFUSED_DRIFT:
                return "arming refused: the measured pose is too far from the held pose";
            case RESET_REFUSED_STATE:
                return "reset refused: not faulted";
            case RESET_REFUSED_CONDITION:
                return "reset refused: the fault condition has not cleared";
            default:
                return "unknown cause";
        }
    }

    /** Whether a cause latches a fault (watchdog conditions, limiter faults, non-finite targets, arming timeout). */
    public static boolean isFault(int code) {
        return WatchdogCondition.ofCode(code) != null || code == LIMITER_FAULT || code == NON_FINITE_TARGET
                || code == ARMING_TIMEOUT;
    }
}
