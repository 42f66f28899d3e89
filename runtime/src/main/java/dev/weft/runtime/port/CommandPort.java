package dev.weft.runtime.port;

import java.io.IOException;

/**
 * Where commands go: a motor driver, a network peer, a file, a simulation.
 *
 * <p>Threading: {@link #open} and {@link #close} are called from the thread that starts and
 * stops the run; {@link #emit} and the health methods from the control loop thread only.
 *
 * <p>{@link #emit} must never block and should not allocate: a port that does slow work (a
 * file, a congested link) hands the frame to its own thread through a bounded, preallocated
 * queue, counts what it had to drop, and reports a fault instead of waiting.
 */
public interface CommandPort extends AutoCloseable {

    /**
     * Prepares the port for frames of {@code joints} values. May block (opening sockets or
     * files); called once, before the first {@link #emit}.
     *
     * @throws IOException when the port cannot be opened; the run does not start
     */
    void open(int joints) throws IOException;

    /**
     * Sends one tick's command. Called exactly once per tick. Reads {@code frame} and copies what
     * it needs before returning; never keeps the reference.
     *
     * @return true when the frame was sent or queued, false when it had to be dropped
     */
    boolean emit(CommandFrame frame);

    /** True when the port can no longer deliver commands (the watchdog stops the robot). */
    boolean faulted();

    /** Frames handed over and accepted so far. */
    long emitted();

    /** Frames dropped so far (queue full, send failed). */
    long dropped();

    /** A short sentence on the port's state, for status lines and logs (may allocate). */
    String describe();

    /**
     * The control loop stalled: no tick completed within the stall bound, so no command is going
     * out. Called from the loop monitor's own thread (the loop thread is the one stuck, possibly
     * inside this port), at most once per stall. A port that can act on it without going through
     * {@link #emit}, for example by dropping a drive-enable line or sending a halt on a separate
     * channel, should do so here. Must not block; exceptions are caught and ignored. Does nothing
     * by default.
     *
     * @param tick the tick the loop was running when the stall was seen
     */
    default void loopStalled(long tick) {
    }

    /** Flushes and releases everything; idempotent; waits for the port's own thread to finish. */
    @Override
    void close();
}
