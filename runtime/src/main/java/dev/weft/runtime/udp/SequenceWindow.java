package dev.weft.runtime.udp;

/**
 * Which sequence numbers a receiver accepts: the rules of {@code docs/ports.md}, section
 * "Sequence window and sessions", kept apart from sockets so every case can be checked with exact
 * times.
 *
 * <p>With {@code last} the newest accepted sequence number and {@code d = sequence - last}
 * computed modulo 2<sup>64</sup>:
 * <ul>
 *   <li>the first datagram is accepted and anchors the window;</li>
 *   <li>{@code 1 <= d <= window}: accepted; the {@code d - 1} numbers skipped count as missed
 *       (so {@link #missed()} grows by at most {@code window - 1} per datagram and is never negative);</li>
 *   <li>{@code d = 0}: {@link DatagramStatus#DUPLICATE};</li>
 *   <li>{@code d} above the window but below 2<sup>63</sup> (ahead): {@link DatagramStatus#BEYOND_WINDOW};</li>
 *   <li>{@code d} from 2<sup>63</sup> (behind: older, replayed, or forged far away):
 *       {@link DatagramStatus#OUT_OF_ORDER};</li>
 *   <li>with sessions (keyed links), a datagram of another session than the current one:
 *       {@link DatagramStatus#OTHER_SESSION}.</li>
 * </ul>
 * After {@code silence} nanoseconds without an accepted datagram the receiver resynchronises on
 * the next one that is not a duplicate: it adopts another session (a restarted sender), or jumps
 * ahead within its session (a long outage); without sessions (unkeyed links, which carry none) it
 * re-anchors on any sequence number, since a restarted sender starts again from 1. Within a
 * session, a keyed receiver never goes back: an older sequence number of the current session is
 * a replay.
 *
 * <p>So a single forged or replayed number locks the real sender out for at most {@code window}
 * datagrams (it can move {@code last} at most that far ahead) or, when it was the first datagram
 * seen, for at most {@code silence}.
 *
 * <p>Threading: one thread (the receiving thread). Allocation: none.
 */
final class SequenceWindow {

    private final long window;
    private final long silenceNanos;
    private final boolean sessions;

    private boolean anchored;
    private long session;
    private long last;
    private long lastAcceptedAt;
    private long missed;
    private long resyncs;
    private long sessionChanges;

    /**
     * @param window largest accepted step in sequence number, at least 1
     * @param silenceNanos how long without an accepted datagram before resynchronising, at least 1
     * @param sessions true when datagrams carry an authenticated session id (keyed links)
     */
    SequenceWindow(long window, long silenceNanos, boolean sessions) {
        if (window < 1 || silenceNanos < 1) {
            throw new IllegalArgumentException("window and silence must be positive, got " + window + " and " + silenceNanos);
        }
        this.window = window;
        this.silenceNanos = silenceNanos;
        this.sessions = sessions;
    }

    /**
     * Judges one datagram that passed every other check; only an {@code ACCEPTED} one changes the
     * window.
     *
     * @param session the datagram's session id (ignored without sessions)
     * @param sequence the datagram's sequence number, unsigned
     * @param now the receipt time, {@link System#nanoTime()}
     */
    DatagramStatus offer(long session, long sequence, long now) {
        if (!anchored) {
            anchor(session, sequence, now);
            return DatagramStatus.ACCEPTED;
        }
        boolean silent = now - lastAcceptedAt >= silenceNanos;
        if (sessions && session != this.session) {
            if (!silent) {
                return DatagramStatus.OTHER_SESSION;
            }
            sessionChanges++;
            anchor(session, sequence, now);
            return DatagramStatus.ACCEPTED;
        }
        long d = sequence - last;
        if (d == 0) {
            return DatagramStatus.DUPLICATE;
        }
        if (Long.compareUnsigned(d, window) <= 0) {
            missed += d - 1;
            last = sequence;
            lastAcceptedAt = now;
            return DatagramStatus.ACCEPTED;
        }
        boolean ahead = d > 0;
        if (silent && (ahead || !sessions)) {
            resyncs++;
            anchor(session, sequence, now);
            return DatagramStatus.ACCEPTED;
        }
        return ahead ? DatagramStatus.BEYOND_WINDOW : DatagramStatus.OUT_OF_ORDER;
    }

    private void anchor(long session, long sequence, long now) {
        anchored = true;
        this.session = session;
        last = sequence;
        lastAcceptedAt = now;
    }

    /** Sequence numbers skipped between datagrams accepted within the window. */
    long missed() {
        return missed;
    }

    /** Times the window re-anchored after a silence within the same session (or, unkeyed, at all). */
    long resyncs() {
        return resyncs;
    }

    /** Times another session was adopted after a silence. */
    long sessionChanges() {
        return sessionChanges;
    }

    /** The newest accepted sequence number (0 before the first). */
    long last() {
        return last;
    }

    /** The current session id (0 before the first datagram, and always 0 without sessions). */
    long session() {
        return session;
    }
}
