package dev.weft.runtime.policy;

import java.util.List;

/**
 * A trained policy as the runtime sees it: an observation in, an action chunk out.
 *
 * <p>Threading: {@link #infer} is called from one thread at a time (the inference worker), never
 * from the control loop. A Java-coded policy can implement this interface and stand in for an
 * ONNX one.
 */
public interface Policy extends AutoCloseable {

    /** Length of the observation vector {@link #infer} reads. */
    int observationSize();

    /** K, the number of actions in one chunk (1 for a single-step actor). */
    int chunkLength();

    /** D, the number of values in one action. */
    int actionSize();

    /**
     * Computes one chunk.
     *
     * @param observation the observation, {@link #observationSize()} values; not modified, not
     *     retained
     * @param tick the control tick the observation was taken at
     * @param chunk output, written with K·D values, row-major (action j's value i at
     *     {@code j·D + i}); the values may be non-finite and the caller checks them
     * @throws RuntimeException when the policy fails; the caller turns it into a watchdog condition
     */
    void infer(double[] observation, long tick, double[] chunk);

    /**
     * The history grids this policy reads, in the order {@link PolicyInput#history(int)} numbers
     * them; the control loop samples the observation stream on each of them for every query.
     * Default: none.
     */
    default List<InputBinding.History> histories() {
        return List.of();
    }

    /**
     * Computes one chunk from a full request: the observation, its tick and time, and the
     * observation stream sampled on each of {@link #histories()}. The default calls
     * {@link #infer(double[], long, double[])} with the observation and its tick.
     *
     * @param input read only, not retained
     * @param chunk as {@link #infer(double[], long, double[])}
     */
    default void infer(PolicyInput input, double[] chunk) {
        infer(input.observation(), input.tick(), chunk);
    }

    /**
     * The cameras this policy's inputs read, by name; the run gives it each one's frames with
     * {@link #attachFrames} before the first call. Default: none.
     */
    default List<String> cameras() {
        return List.of();
    }

    /**
     * Gives the policy the frames of {@code camera}, read on the thread that calls {@code infer}:
     * each call copies the newest frame stamped at or before the request's observation time.
     *
     * @throws IllegalArgumentException when the policy reads no such camera, or its frames are not
     *     the size the policy was configured for
     */
    default void attachFrames(String camera, dev.weft.runtime.image.FrameSource frames) {
        throw new IllegalArgumentException("the policy reads no camera named " + camera);
    }

    /** Releases native resources; idempotent. */
    @Override
    void close();
}
