package dev.weft.runtime.loop;

/**
 * The time the control loop runs on, in nanoseconds. A live run uses {@link #system()}; tests and
 * dry runs use a {@link ManualClock}, so the loop's timing logic is exercised without sleeping.
 *
 * <p>Threading: {@link #nanoTime} may be called from any thread.
 */
public interface LoopClock {

    /** The current time in nanoseconds; only differences are meaningful. */
    long nanoTime();

    /** {@link System#nanoTime()}. */
    static LoopClock system() {
        return SystemClock.INSTANCE;
    }

    /** The real clock. */
    enum SystemClock implements LoopClock {
        INSTANCE;

        @Override
        public long nanoTime() {
            return System.nanoTime();
        }
    }
}
