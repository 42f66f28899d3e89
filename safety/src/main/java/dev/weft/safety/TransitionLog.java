package dev.weft.safety;

/**
 * A preallocated ring of the last transitions, usable as a {@link TransitionListener}. Recording
 * allocates nothing; when full, the oldest entry is overwritten. Single thread (the control loop),
 * or read only after the loop has stopped.
 */
public final class TransitionLog implements TransitionListener {

    private final long[] ticks;
    private final long[] times;
    private final SupervisorState[] froms;
    private final SupervisorState[] tos;
    private final int[] causes;
    private long written;

    /**
     * @param capacity number of entries kept, &gt;= 1
     */
    public TransitionLog(int capacity) {
        if (capacity < 1) {
            throw new IllegalArgumentException("transition log: capacity must be >= 1, was " + capacity);
        }
        ticks = new long[capacity];
        times = new long[capacity];
        froms = new SupervisorState[capacity];
        tos = new SupervisorState[capacity];
        causes = new int[capacity];
    }

    @Override
    public void onTransition(long tick, long timeNanos, SupervisorState from, SupervisorState to, int cause) {
        int slot = (int) (written % ticks.length);
        ticks[slot] = tick;
        times[slot] = timeNanos;
        froms[slot] = from;
        tos[slot] = to;
        causes[slot] = cause;
        written++;
    }

    /** Entries held (at most the capacity). */
    public int size() {
        return (int) Math.min(written, ticks.length);
    }

    /** Entries ever recorded, including overwritten ones. */
    public long written() {
        return written;
    }

    private int slot(int i) {
        if (i < 0 || i >= size()) {
            throw new IndexOutOfBoundsException("transition log: entry " + i + " of " + size());
        }
        long first = written - size();
        return (int) ((first + i) % ticks.length);
    }

    /** Tick of entry {@code i}, 0 = oldest held. */
    public long tick(int i) {
        return ticks[slot(i)];
    }

    /** Time of entry {@code i}. */
    public long timeNanos(int i) {
        return times[slot(i)];
    }

    /** State before entry {@code i}. */
    public SupervisorState from(int i) {
        return froms[slot(i)];
    }

    /** State after entry {@code i}. */
    public SupervisorState to(int i) {
        return tos[slot(i)];
    }

    /** Cause code of entry {@code i}. */
    public int cause(int i) {
        return causes[slot(i)];
    }

    /** Message of entry {@code i}. */
    public String message(int i) {
        return Cause.message(cause(i));
    }
}
