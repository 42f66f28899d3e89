package dev.weft.runtime.loop;

/**
 * Receives finished inference results on the control loop thread, one call per result.
 *
 * <p>Threading: called on the thread that drains, inside the drain call; the arrays are valid
 * only during the call.
 */
@FunctionalInterface
public interface ChunkSink {

    /** The chunk was computed and every value is finite. */
    int OK = 0;
    /** The policy threw; {@code chunk} holds nothing useful. */
    int FAILED = 1;
    /** The policy returned a NaN or an infinity; the chunk must not be used. */
    int NON_FINITE = 2;

    /**
     * @param chunk K·D values, row-major; read only, valid during this call
     * @param steps K
     * @param originTick the tick of the observation the chunk was computed from
     * @param latencyNanos how long the inference took
     * @param status {@link #OK}, {@link #FAILED} or {@link #NON_FINITE}
     */
    void onChunk(double[] chunk, int steps, long originTick, long latencyNanos, int status);
}
