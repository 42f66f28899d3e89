package dev.weft.safety;

/** Modes of the {@link Supervisor}. */
public enum SupervisorState {
    /** Not following the plan; only hold commands go out. */
    DISARMED,
    /** Soft start: from the measured pose toward the plan under reduced limits. */
    ARMING,
    /** Following the plan through the limiter. */
    ARMED,
    /** Controlled stop: velocity brought to zero under the acceleration and jerk bounds. */
    STOPPING,
    /** Latched after a fault and a completed stop; holds until an explicit reset once the fault has cleared. */
    FAULTED,
    /**
     * Never entered by the supervisor: what the runtime's loop reports while its thread cannot
     * complete a tick (a port or a callback blocking). No command goes out while it lasts; the
     * supervisor latches a fault with the loop-stalled cause at the first tick that runs again.
     * Last in the declaration, so the ordinals of the others stay what frames and telemetry carry.
     */
    STALLED
}
