package dev.weft.runtime.loop;

import dev.weft.runtime.policy.Policy;
import dev.weft.runtime.policy.PolicyInput;

/**
 * Runs the policy in place, on the calling thread, and delivers each result exactly
 * {@code latencyTicks} ticks after the tick its computation starts at (the request's tick, or the
 * delivery of the one before it): inference latency modelled as a whole number of
 * ticks, so that a run on a virtual clock is deterministic (the same inputs give the same
 * commands). While a result is in flight the model is busy, as a single worker would be; a
 * request made while busy replaces the waiting one (newest wins) and is started when the
 * current one is delivered.
 *
 * <p>For dry runs and tests: the policy's own allocation and time are spent on the loop thread.
 *
 * <p>Threading: the control loop thread only.
 */
public final class ModelledLatencyInference implements Inference {

    private final Policy policy;
    private final long latencyTicks;
    private final long periodNanos;
    private final double[] chunk;
    private final PolicyInput waiting;
    private boolean hasWaiting;
    private boolean inFlight;
    private long readyTick;
    private long originTick;
    private int status;
    private long completed;
    private long failed;
    private long replaced;
    private String lastFailure;

    /**
     * @param latencyTicks ticks from request to delivery, ≥ 0 (0 = delivered in the same tick)
     * @param periodNanos the control period, to report latency in nanoseconds
     */
    public ModelledLatencyInference(Policy policy, long latencyTicks, long periodNanos) {
        if (latencyTicks < 0) {
            throw new IllegalArgumentException("latency must be >= 0 ticks, got " + latencyTicks);
        }
        this.policy = policy;
        this.latencyTicks = latencyTicks;
        this.periodNanos = periodNanos;
        this.chunk = new double[policy.chunkLength() * policy.actionSize()];
        this.waiting = PolicyInput.forPolicy(policy);
    }

    @Override
    public void request(PolicyInput input, long nowTick) {
        if (inFlight) {
            if (hasWaiting) {
                replaced++;
            }
            waiting.copyFrom(input);
            hasWaiting = true;
            return;
        }
        compute(input, nowTick);
    }

    private void compute(PolicyInput input, long startTick) {
        originTick = input.tick();
        try {
            policy.infer(input, chunk);
            status = ChunkSink.OK;
            for (double v : chunk) {
                if (!Double.isFinite(v)) {
                    status = ChunkSink.NON_FINITE;
                    break;
                }
            }
        } catch (Throwable t) {
            // as the real worker does: any failure of the policy is a failed result, never lost
            status = ChunkSink.FAILED;
            lastFailure = t.toString();
        }
        inFlight = true;
        readyTick = startTick + latencyTicks;
    }

    @Override
    public java.util.List<dev.weft.runtime.policy.InputBinding.History> histories() {
        return policy.histories();
    }

    @Override
    public boolean idle() {
        return !inFlight;
    }

    @Override
    public int drain(long nowTick, ChunkSink sink) {
        int delivered = 0;
        while (inFlight && readyTick <= nowTick) {
            inFlight = false;
            if (status == ChunkSink.OK) {
                completed++;
            } else {
                failed++;
            }
            long started = readyTick - latencyTicks;
            sink.onChunk(chunk, policy.chunkLength(), originTick, (readyTick - started) * periodNanos, status);
            delivered++;
            if (hasWaiting) {
                hasWaiting = false;
                compute(waiting, readyTick);
            }
        }
        return delivered;
    }

    /** Results delivered with a usable chunk. */
    public long completed() {
        return completed;
    }

    /** Results delivered that failed or were non-finite. */
    public long failed() {
        return failed;
    }

    /** Requests replaced while waiting. */
    public long replaced() {
        return replaced;
    }

    /** The latest policy failure as text, or null. */
    @Override
    public String lastFailure() {
        return lastFailure;
    }

    @Override
    public void close() {
        // nothing runs on its own
    }
}
