package dev.weft.runtime.source;

import java.io.IOException;

/**
 * Where observations come from: the user's own driver thread, a network peer, a simulation, a
 * recording.
 *
 * <p>Threading: {@link #start} and {@link #close} from the thread that starts and stops the
 * run; {@link #latest} and the counters from the control loop thread only, lock-free and without
 * allocation.
 */
public interface ObservationSource extends AutoCloseable {

    /** Values per observation. */
    int size();

    /** Starts receiving (may block: binding sockets, starting threads). */
    void start() throws IOException;

    /**
     * Copies the newest complete observation into {@code out}.
     *
     * @param out caller-owned, at least {@link #size()} long; written only when this returns >= 0
     * @return the time the observation was taken or received, in nanoseconds on the run's clock
     *     ({@link System#nanoTime} in a live run, virtual time in a dry run), or -1 when no
     *     observation has arrived yet
     */
    long latest(double[] out);

    /** Observations accepted so far. */
    long accepted();

    /** Observations or datagrams rejected so far (malformed, out of order, not allowed). */
    long rejected();

    /** A short sentence on the source's state, for status lines (may allocate). */
    String describe();

    /** Stops and releases everything; idempotent. */
    @Override
    void close();
}
