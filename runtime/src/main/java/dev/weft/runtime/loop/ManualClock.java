package dev.weft.runtime.loop;

/**
 * A clock that moves only when told to: the loop's {@link WaitStrategy#virtual()} advances it to
 * each deadline, and a test may add compute time with {@link #advance(long)}.
 *
 * <p>Threading: reads from any thread see the latest value (volatile); advance from one thread.
 */
public final class ManualClock implements LoopClock {

    private volatile long now;

    public ManualClock(long startNanos) {
        this.now = startNanos;
    }

    @Override
    public long nanoTime() {
        return now;
    }

    /** Moves the clock forward by {@code nanos} (≥ 0). */
    public void advance(long nanos) {
        if (nanos < 0) {
            throw new IllegalArgumentException("a clock does not go back: " + nanos);
        }
        now += nanos;
    }

    /** Moves the clock to {@code nanos} if that is later than now; never back. */
    public void advanceTo(long nanos) {
        if (nanos > now) {
            now = nanos;
        }
    }
}
