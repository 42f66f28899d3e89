package dev.weft.safety;

/**
 * Receives every {@link Supervisor} transition (and every refused arm or reset, with
 * {@code from == to}). Called on the control thread inside the call that caused it; an
 * implementation must not block and should not allocate. Messages: {@link Cause#message(int)}.
 */
@FunctionalInterface
public interface TransitionListener {

    /** A listener that ignores everything. */
    TransitionListener NONE = (tick, timeNanos, from, to, cause) -> { };

    /**
     * @param tick      control tick of the transition
     * @param timeNanos time of the transition as given by the caller
     * @param from      state before
     * @param to        state after
     * @param cause     cause code ({@link Cause}, {@link WatchdogCondition#code()})
     */
    void onTransition(long tick, long timeNanos, SupervisorState from, SupervisorState to, int cause);
}
