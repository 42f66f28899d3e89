package dev.weft.runtime.loop;

import java.util.concurrent.locks.LockSupport;

/**
 * How the control loop waits for its next deadline.
 *
 * <p>Threading: called from the control loop thread only; must not allocate.
 */
public interface WaitStrategy {

    /** Returns when {@code clock} reads at least {@code deadlineNanos}, or at once if it already does. */
    void awaitDeadline(LoopClock clock, long deadlineNanos);

    /**
     * Parks until {@code spinWindowNanos} before the deadline, then spins on {@link Thread#onSpinWait()}
     * for the rest: parking leaves the core to others, spinning absorbs the scheduler's wake-up
     * latency. A window of 0 parks only (cheapest on CPU, most jitter).
     */
    static WaitStrategy parkThenSpin(long spinWindowNanos) {
        if (spinWindowNanos < 0) {
            throw new IllegalArgumentException("spin window must be >= 0 ns, got " + spinWindowNanos);
        }
        return (clock, deadline) -> {
            long remaining;
            while ((remaining = deadline - clock.nanoTime()) > spinWindowNanos) {
                LockSupport.parkNanos(remaining - spinWindowNanos);
            }
            while (deadline - clock.nanoTime() > 0) {
                Thread.onSpinWait();
            }
        };
    }

    /** For a {@link ManualClock}: jumps the clock to the deadline (virtual time; dry runs and tests). */
    static WaitStrategy virtual() {
        return (clock, deadline) -> {
            if (!(clock instanceof ManualClock m)) {
                throw new IllegalStateException("virtual waiting needs a ManualClock, got " + clock);
            }
            m.advanceTo(deadline);
        };
    }
}
