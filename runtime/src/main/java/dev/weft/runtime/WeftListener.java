package dev.weft.runtime;

import dev.weft.safety.SupervisorState;

/**
 * Hears every state transition of a run (arming, stops, faults, resets, refusals), on weft's
 * event thread, never on the control loop's: an implementation may log, allocate or take its time,
 * at the cost of later events waiting behind it.
 */
@FunctionalInterface
public interface WeftListener {

    /**
     * @param tick the control tick of the transition
     * @param timeNanos its time on the run's clock, relative to the run's start
     * @param from the state before
     * @param to the state after (equal to {@code from} for a refused arm or reset)
     * @param cause the cause code ({@code dev.weft.safety.Cause}, {@code WatchdogCondition} codes)
     * @param message the cause's fixed message
     */
    void onTransition(long tick, long timeNanos, SupervisorState from, SupervisorState to, int cause, String message);
}
