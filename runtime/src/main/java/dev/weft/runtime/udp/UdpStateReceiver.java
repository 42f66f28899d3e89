package dev.weft.runtime.udp;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.port.PortOptions;
import dev.weft.runtime.source.LatestValue;
import dev.weft.runtime.source.ObservationSource;
import java.io.IOException;
import java.net.Inet4Address;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.SocketAddress;
import java.net.StandardProtocolFamily;
import java.nio.ByteBuffer;
import java.nio.channels.ClosedChannelException;
import java.nio.channels.DatagramChannel;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLongArray;
import java.util.concurrent.locks.LockSupport;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Observations from the robot over UDP: state datagrams (layout in {@link DatagramCodec} and
 * {@code docs/ports.md}) received on a thread of its own, the newest accepted one kept in a
 * {@link LatestValue} for the control loop.
 *
 * <p>Options (under the source's key path, such as {@code source.options}):
 * <ul>
 *   <li>{@code bind}: the local address to receive on, a literal IP address; default {@code 127.0.0.1}</li>
 *   <li>{@code port}: the local UDP port, required; 0 takes any free port (see {@link #localPort()})</li>
 *   <li>{@code allow}: source addresses accepted, a list of addresses or prefixes such as
 *       {@code 192.168.7.20} or {@code 10.1.0.0/16}; default loopback only ({@code 127.0.0.0/8}, {@code ::1})</li>
 *   <li>{@code size}: values every datagram must carry, required</li>
 *   <li>{@code key_file}: the shared key of an authenticated link ({@link LinkKey} has the file
 *       format and the permission rule); with it only version 2 (tagged) datagrams are accepted,
 *       without it only version 1; default none</li>
 *   <li>{@code sequence_window}: the largest step in sequence number accepted, 1 to 1000000; default 256</li>
 *   <li>{@code resync_silence_ms}: after this many milliseconds without an accepted datagram the
 *       receiver resynchronises on the next one ({@link SequenceWindow}), 1 to 60000; default 100</li>
 *   <li>{@code unauthenticated_reason}: required to bind to an address other than loopback without
 *       {@code key_file}; logged as a warning at start</li>
 * </ul>
 *
 * <p>A datagram is accepted when its source is allowed, it decodes as
 * {@link DatagramStatus#ACCEPTED} with exactly {@code size} finite values (and, with a key, an
 * authentic tag), and the {@link SequenceWindow} takes its session and sequence number.
 * Everything else is rejected and counted per {@link DatagramStatus}, and changes nothing: the
 * observation, the window and the session stay as they were. Skipped sequence numbers (lost
 * datagrams) are counted by {@link #missed()}.
 *
 * <p>The time {@link #latest} returns is {@link System#nanoTime()} taken on the receiving thread
 * right after the datagram arrived. The sender's own timestamp travels along
 * ({@link #latest(double[], long[])}) but is on the sender's clock, not comparable with weft's.
 *
 * <p>Allocation on the receiving thread: the buffer (one direct buffer of 64 KiB), the codec, the
 * scratch values and the counters are made once. {@link DatagramChannel#receive} returns the
 * source as an {@link InetSocketAddress}; the JDK (17 and 25, {@code sun.nio.ch.DatagramChannelImpl})
 * keeps the last one and returns the same object while the source does not change, and allocates
 * a new one when it does. So a steady sender, and a storm from one source, cost nothing per
 * datagram ({@code UdpStateReceiverTest} measures it with the thread's allocation counter); a
 * source that alternates with another costs one address object per change, plus one copy of its
 * address bytes for the allowlist check. With a key, each datagram that reaches the tag check
 * also costs the 48 bytes of {@link DatagramTag}.
 *
 * <p>Threading: {@link #start} and {@link #close} from the thread that runs the source;
 * {@link #latest} and the counters from any thread, lock-free and without allocation.
 */
public final class UdpStateReceiver implements ObservationSource {

    private static final Logger LOG = LoggerFactory.getLogger(UdpStateReceiver.class);
    private static final DatagramStatus[] STATUSES = DatagramStatus.values();
    private static final long JOIN_MILLIS = 2_000;
    private static final int LOGGED_SESSION_CHANGES = 10;

    private final InetAddress bind;
    private final int port;
    private final SourceAllowlist allowlist;
    private final int size;
    private final String where;

    private final LatestValue latest;
    private final AtomicLongArray counts = new AtomicLongArray(STATUSES.length);
    private final AtomicLongArray extra = new AtomicLongArray(6);
    private static final int MISSED = 0;
    private static final int ERRORS = 1;
    private static final int LAST_SEQUENCE = 2;
    private static final int RESYNCS = 3;
    private static final int SESSION_CHANGES = 4;
    private static final int LAST_SESSION = 5;

    private final LinkKey key;
    private final String unauthenticatedReason;
    private final int silenceMillis;

    // Receiving thread only.
    private final DatagramCodec codec;
    private final SequenceWindow window;
    private final ByteBuffer buffer = ByteBuffer.allocateDirect(1 << 16);
    private final double[] scratch;
    private InetAddress lastSource;
    private boolean lastSourceAllowed;

    private final Object lifecycle = new Object();
    private DatagramChannel channel;
    private Thread thread;
    private volatile boolean closing;
    private volatile int boundPort = -1;

    private UdpStateReceiver(InetAddress bind, int port, SourceAllowlist allowlist, int size, String where,
                             LinkKey key, SequenceWindow window, int silenceMillis, String unauthenticatedReason) {
        this.bind = bind;
        this.port = port;
        this.allowlist = allowlist;
        this.size = size;
        this.where = where;
        this.key = key;
        this.unauthenticatedReason = unauthenticatedReason;
        this.silenceMillis = silenceMillis;
        this.codec = key == null ? new DatagramCodec() : DatagramCodec.keyed(key.newTag(), 0);
        this.window = window;
        this.latest = new LatestValue(size);
        this.scratch = new double[size];
    }

    /**
     * Makes an unstarted receiver from its options.
     *
     * @param options read completely and finished
     * @throws BadInputException naming every bad, missing or unknown option by its key path
     */
    public static UdpStateReceiver create(PortOptions options) throws BadInputException {
        String bindText = options.text("bind", "127.0.0.1");
        InetAddress bind = SourceAllowlist.literal(bindText);
        if (bind == null) {
            options.problem("bind", "must be a literal IP address such as 127.0.0.1, got \"" + bindText + "\"");
        }
        if (!options.has("port")) {
            options.problem("port", "is required");
        }
        int port = options.integer("port", 0, 0, 65_535);
        SourceAllowlist allow = SourceAllowlist.read(options, "allow");
        if (bind != null && !allow.entries().isEmpty() && !allow.hasFamily(bind.getAddress().length)) {
            options.problem("allow", "has no " + (bind instanceof Inet4Address ? "IPv4" : "IPv6")
                    + " entry, but bind is \"" + bindText + "\": every datagram would be rejected");
        }
        if (!options.has("size")) {
            options.problem("size", "is required");
        }
        int size = options.integer("size", 1, 1, DatagramCodec.MAX_STATE_VALUES);
        LinkKey key = LinkKey.read(options, LinkPolicy.KEY_FILE);
        if (options.has(LinkPolicy.KEY_FILE) && size > DatagramCodec.MAX_KEYED_STATE_VALUES) {
            options.problem("size", "must be at most " + DatagramCodec.MAX_KEYED_STATE_VALUES
                    + " with a key_file (the tag takes room), got " + size);
        }
        long window = options.integer("sequence_window", 256, 1, 1_000_000);
        int silence = options.integer("resync_silence_ms", 100, 1, 60_000);
        String reason = LinkPolicy.unauthenticatedReason(options, "bind", bindText, bind);
        options.finish();
        return new UdpStateReceiver(bind, port, allow, size, options.where("bind"), key,
                new SequenceWindow(window, TimeUnit.MILLISECONDS.toNanos(silence), key != null), silence,
                reason == null ? null : options.where(LinkPolicy.REASON) + ": " + reason);
    }

    @Override
    public int size() {
        return size;
    }

    /**
     * Binds the socket and starts the receiving thread. Nothing is left open when it fails.
     *
     * @throws IOException when the address cannot be bound (the message names the option and address)
     * @throws IllegalStateException when called twice or after {@link #close}
     */
    @Override
    public void start() throws IOException {
        synchronized (lifecycle) {
            if (channel != null || closing) {
                throw new IllegalStateException("the UDP state receiver was already started or closed");
            }
            DatagramChannel ch = DatagramChannel.open(
                    bind instanceof Inet4Address ? StandardProtocolFamily.INET : StandardProtocolFamily.INET6);
            try {
                ch.bind(new InetSocketAddress(bind, port));
            } catch (IOException e) {
                ch.close();
                throw new IOException("cannot receive on " + where + " = " + bind.getHostAddress() + ", port " + port + ": " + e.getMessage(), e);
            }
            boundPort = ((InetSocketAddress) ch.getLocalAddress()).getPort();
            if (unauthenticatedReason != null) {
                LinkPolicy.warnUnauthenticated(LOG, where, bind, unauthenticatedReason);
            }
            channel = ch;
            thread = new Thread(this::receiveLoop, "weft-udp-state-" + boundPort);
            thread.setDaemon(true);
            thread.start();
        }
    }

    /** The bound UDP port (useful with {@code port: 0}), or -1 before {@link #start}. */
    public int localPort() {
        return boundPort;
    }

    @Override
    public long latest(double[] out) {
        return latest.read(out);
    }

    /**
     * Like {@link #latest(double[])}, and also the sender's timestamp of the same datagram.
     *
     * @param out modified when this returns a time: the values
     * @param senderTime modified when this returns a time: entry 0 receives the sender's timestamp
     *     (nanoseconds on the sender's clock; not comparable with the returned time)
     * @return receipt time ({@link System#nanoTime()}), or -1 before the first accepted datagram
     */
    public long latest(double[] out, long[] senderTime) {
        return latest.read(out, senderTime);
    }

    @Override
    public long accepted() {
        return counts.get(DatagramStatus.ACCEPTED.ordinal());
    }

    /** Every rejected datagram, whatever the reason. */
    @Override
    public long rejected() {
        long sum = 0;
        for (int i = 1; i < STATUSES.length; i++) {
            sum += counts.get(i);
        }
        return sum;
    }

    /** Datagrams with this status so far ({@code ACCEPTED} gives {@link #accepted()}). */
    public long count(DatagramStatus status) {
        return counts.get(status.ordinal());
    }

    /** Sequence numbers skipped between accepted datagrams (datagrams lost or never sent). */
    public long missed() {
        return extra.get(MISSED);
    }

    /** Receive calls that failed with an I/O error other than the channel being closed. */
    public long receiveErrors() {
        return extra.get(ERRORS);
    }

    /** The sequence number of the newest accepted datagram (0 before the first). */
    public long lastSequence() {
        return extra.get(LAST_SEQUENCE);
    }

    /** The session id of the newest accepted datagram (0 before the first, and always 0 unkeyed). */
    public long session() {
        return extra.get(LAST_SESSION);
    }

    /** Times the window re-anchored after {@code resync_silence_ms} without an accepted datagram, within a session. */
    public long resyncs() {
        return extra.get(RESYNCS);
    }

    /** Times another session was adopted (a restarted sender, keyed links only). */
    public long sessionChanges() {
        return extra.get(SESSION_CHANGES);
    }

    @Override
    public String describe() {
        StringBuilder b = new StringBuilder("udp state on ")
                .append(bind.getHostAddress()).append(':').append(boundPort >= 0 ? boundPort : port)
                .append(", ").append(size).append(" values, allow ").append(allowlist.entries())
                .append(key != null ? ", HMAC-SHA-256 " + key : "")
                .append(": ").append(accepted()).append(" accepted, ").append(rejected()).append(" rejected");
        String sep = " (";
        for (int i = 1; i < STATUSES.length; i++) {
            long n = counts.get(i);
            if (n > 0) {
                b.append(sep).append(n).append(' ').append(STATUSES[i].label());
                sep = ", ";
            }
        }
        if (!sep.equals(" (")) {
            b.append(')');
        }
        b.append(", ").append(missed()).append(" missed");
        if (resyncs() > 0 || sessionChanges() > 0) {
            b.append(", ").append(resyncs()).append(" resyncs, ").append(sessionChanges()).append(" session changes");
        }
        return b.toString();
    }

    /** Stops the receiving thread and closes the socket; idempotent; waits up to 2 s for the thread. */
    @Override
    public void close() {
        Thread t;
        synchronized (lifecycle) {
            closing = true;
            t = thread;
            if (channel != null) {
                try {
                    // Closing wakes the blocked receive with AsynchronousCloseException.
                    channel.close();
                } catch (IOException e) {
                    LOG.warn("closing the UDP state socket failed", e);
                }
            }
        }
        if (t != null && t != Thread.currentThread()) {
            try {
                t.join(JOIN_MILLIS);
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
            }
        }
    }

    /** The receiving thread, for allocation measurements in tests. */
    Thread thread() {
        return thread;
    }

    private void receiveLoop() {
        DatagramChannel ch = channel;
        while (!closing) {
            buffer.clear();
            SocketAddress from;
            try {
                from = ch.receive(buffer);
            } catch (ClosedChannelException e) {
                break;
            } catch (IOException e) {
                long errors = extra.get(ERRORS) + 1;
                extra.lazySet(ERRORS, errors);
                if (errors == 1) {
                    LOG.warn("UDP state receive failed (further failures are counted, not logged)", e);
                }
                LockSupport.parkNanos(TimeUnit.MILLISECONDS.toNanos(1));
                continue;
            }
            long now = System.nanoTime();
            if (from == null) {
                continue;
            }
            buffer.flip();
            int i = judge((InetSocketAddress) from, now).ordinal();
            counts.lazySet(i, counts.get(i) + 1);
        }
    }

    private DatagramStatus judge(InetSocketAddress from, long now) {
        InetAddress source = from.getAddress();
        if (source != lastSource) {
            lastSourceAllowed = allowlist.allows(source);
            lastSource = source;
        }
        if (!lastSourceAllowed) {
            return DatagramStatus.NOT_ALLOWED;
        }
        DatagramStatus shape = codec.decodeState(buffer, size, scratch);
        if (shape != DatagramStatus.ACCEPTED) {
            return shape;
        }
        long changes = window.sessionChanges();
        DatagramStatus order = window.offer(codec.session(), codec.sequence(), now);
        if (order != DatagramStatus.ACCEPTED) {
            return order;
        }
        latest.publish(now, codec.time(), scratch);
        extra.lazySet(MISSED, window.missed());
        extra.lazySet(LAST_SEQUENCE, window.last());
        extra.lazySet(LAST_SESSION, window.session());
        extra.lazySet(RESYNCS, window.resyncs());
        extra.lazySet(SESSION_CHANGES, window.sessionChanges());
        if (window.sessionChanges() != changes && window.sessionChanges() <= LOGGED_SESSION_CHANGES) {
            LOG.warn("UDP state: a new session {} took over after {} ms of silence (change {}; the first {} are logged)",
                    Long.toHexString(window.session()), silenceMillis, window.sessionChanges(), LOGGED_SESSION_CHANGES);
        }
        return DatagramStatus.ACCEPTED;
    }
}
