package dev.weft.runtime.dryrun;

import java.util.List;

/**
 * The time series of one dry run, one entry per tick run, for the report's plots.
 *
 * @param timeSeconds each tick's time since the start
 * @param joints one trace per joint
 * @param states the supervisor state per tick ({@code dev.weft.safety.SupervisorState} ordinal)
 * @param watchdogMasks the watchdog conditions present per tick (bit {@code code − 1})
 * @param inferenceLatencyMs every measured inference latency, in milliseconds, in order
 * @param periodErrorMs the loop's period error per tick in milliseconds on real time; null on virtual time
 * @param frames camera frames at a few ticks (the frame a query at that tick would read), for the
 *     report; empty without replayed cameras
 */
public record DryRunTrace(double[] timeSeconds, List<JointTrace> joints, byte[] states, int[] watchdogMasks,
                          double[] inferenceLatencyMs, double[] periodErrorMs, List<FrameSnapshot> frames) {

    public DryRunTrace {
        frames = List.copyOf(frames);
    }

    /** A trace without camera frames. */
    public DryRunTrace(double[] timeSeconds, List<JointTrace> joints, byte[] states, int[] watchdogMasks,
                       double[] inferenceLatencyMs, double[] periodErrorMs) {
        this(timeSeconds, joints, states, watchdogMasks, inferenceLatencyMs, periodErrorMs, List.of());
    }

    /**
     * One camera frame as the run saw it at one tick.
     *
     * @param camera the camera's name
     * @param tickSeconds the tick's time since the start
     * @param frameSeconds the frame's time since the start (at or before the tick), NaN when the
     *     camera had no frame yet
     * @param height rows
     * @param width columns
     * @param channels 3 (RGB order) or 1
     * @param pixels {@code height × width × channels} bytes, rows top to bottom, RGB order
     */
    public record FrameSnapshot(String camera, double tickSeconds, double frameSeconds, int height, int width,
                                int channels, byte[] pixels) {
    }

    /**
     * One joint's series.
     *
     * @param name the joint's name
     * @param lower the lower operating bound (position min + margin)
     * @param upper the upper operating bound (position max − margin)
     * @param recorded the recorded action at each tick (NaN where the recording has none)
     * @param target the blended target at each tick (NaN where no plan covered it)
     * @param command the command sent at each tick
     * @param limiterFlags the limiter's flags for this joint at each tick ({@code dev.weft.safety.JerkLimiter} bits)
     */
    public record JointTrace(String name, double lower, double upper, double[] recorded, double[] target,
                             double[] command, int[] limiterFlags) {
    }
}
