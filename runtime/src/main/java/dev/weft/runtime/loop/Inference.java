package dev.weft.runtime.loop;

import dev.weft.runtime.policy.InputBinding;
import dev.weft.runtime.policy.PolicyInput;
import java.util.List;

/**
 * How the control loop gets chunks from the policy: it hands over requests and drains finished
 * results, and never waits. {@link InferenceWorker} runs the policy on its own thread (live runs);
 * {@link ModelledLatencyInference} runs it in place and delivers each result a fixed number of
 * ticks later (deterministic dry runs and tests).
 *
 * <p>Threading: {@link #request}, {@link #idle} and {@link #drain} from the control loop thread
 * only.
 */
public interface Inference extends AutoCloseable {

    /**
     * Hands over a request (the observation, its origin tick and time, the history grids'
     * samples) at control tick {@code nowTick} (at or after the input's origin tick); copies it; a
     * newer request may replace an older one not yet started.
     */
    void request(PolicyInput input, long nowTick);

    /** The history grids of the policy behind this inference, in the order its requests number them. */
    default List<InputBinding.History> histories() {
        return List.of();
    }

    /** True when a request made now would be worked on at once. */
    boolean idle();

    /** Delivers every result ready at {@code nowTick} to {@code sink}; returns how many. */
    int drain(long nowTick, ChunkSink sink);

    /**
     * The latest policy failure as text (the exception's class and message), or null; read after a
     * result with status {@link ChunkSink#FAILED}. May be read from the loop thread.
     */
    default String lastFailure() {
        return null;
    }

    /** Stops; idempotent. */
    @Override
    void close();
}
