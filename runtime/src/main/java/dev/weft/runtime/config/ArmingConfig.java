package dev.weft.runtime.config;

/**
 * Arming and stopping.
 *
 * @param poseDistanceMax largest distance, per joint (rad or m), between the measured pose and the
 *     policy's first target that arming accepts, {@code > 0}
 * @param rampTime the longest the soft start may take, in seconds; 0 when not configured (10 s then)
 * @param stopCategory stop category of a controlled stop (IEC 60204-1): 1 (stop, then drive power
 *     removed) or 2 (stop, power kept)
 */
public record ArmingConfig(double poseDistanceMax, double rampTime, int stopCategory) {

    /** Stop category used when none is configured. */
    public static final int DEFAULT_STOP_CATEGORY = 2;
}
