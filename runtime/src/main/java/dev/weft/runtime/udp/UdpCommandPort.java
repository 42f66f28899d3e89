package dev.weft.runtime.udp;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.port.CommandFrame;
import dev.weft.runtime.port.CommandPort;
import dev.weft.runtime.port.PortOptions;
import java.io.IOException;
import java.net.Inet4Address;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.PortUnreachableException;
import java.net.StandardProtocolFamily;
import java.net.UnknownHostException;
import java.nio.ByteBuffer;
import java.nio.channels.ClosedChannelException;
import java.nio.channels.DatagramChannel;
import java.security.SecureRandom;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;
import java.util.concurrent.locks.LockSupport;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Sends each tick's {@link CommandFrame} to the robot as one command datagram (layout in
 * {@link DatagramCodec} and {@code docs/ports.md}).
 *
 * <p>{@link #emit} never blocks and allocates nothing: it encodes the frame straight into a free
 * slot of a preallocated single-producer, single-consumer ring and returns; a sender thread of the
 * port's own writes the slots to a connected UDP socket. Every emitted frame takes the next
 * sequence number (from 1), dropped ones included, so the robot sees a drop as a gap.
 *
 * <p>Failures and the port fault. A frame is dropped, and counted in {@link #dropped()}, when the
 * ring is full or the frame holds a non-finite value (which the loop never hands over; the port
 * refuses it all the same). A write that throws counts in {@link #sendFailures()}. When
 * {@code faultAfter} frames in a row were dropped, or {@code faultAfter} writes in a row failed,
 * {@link #faulted()} turns true and stays true (the watchdog then stops the robot); the port
 * keeps sending whatever it is given, so the stop's own commands still go out if the link allows.
 * A connected UDP socket learns that the peer refused a datagram (ICMP port unreachable) only on
 * the following write, which then fails and sends nothing, so a dead peer makes writes alternate
 * between success and failure; for that reason a successful write ends a failure run only when
 * the write before it succeeded too.
 *
 * <p>Options (under the port's key path, such as {@code port.options}):
 * <ul>
 *   <li>{@code host}: where the robot listens, an address or a name (resolved once, at creation); default {@code 127.0.0.1}</li>
 *   <li>{@code port}: the robot's UDP port, required, 1 to 65535</li>
 *   <li>{@code bind}: the local address to send from, a literal IP address; default: chosen by the system</li>
 *   <li>{@code queue}: slots in the hand-off ring, a power of two from 2 to 65536; default 64</li>
 *   <li>{@code faultAfter}: failures in a row that raise the port fault, 1 to 1000000; default 10</li>
 *   <li>{@code drainMillis}: how long {@link #close} keeps sending queued frames, 0 to 10000; default 100</li>
 *   <li>{@code key_file}: the shared key of an authenticated link ({@link LinkKey}); with it the
 *       port sends version 2 datagrams, each with a session id drawn at random when the port opens
 *       and an HMAC-SHA-256 tag; default none (version 1)</li>
 *   <li>{@code unauthenticated_reason}: required to send to a host that is not a loopback address
 *       without {@code key_file}; logged as a warning when the port opens</li>
 * </ul>
 *
 * <p>With a key, {@link #emit} lays the datagram out with its tag field zero, and the sender
 * thread computes the tag into the slot just before writing it: the control loop thread never
 * runs the HMAC (nor allocates for it; {@link DatagramTag} has the sender thread's cost).
 *
 * <p>Threading: {@link #open} and {@link #close} from the thread that runs the port; {@link #emit}
 * and the counters from the control loop thread (the counters may also be read from any other).
 */
public final class UdpCommandPort implements CommandPort {

    private static final Logger LOG = LoggerFactory.getLogger(UdpCommandPort.class);
    private static final long IDLE_PARK_NANOS = TimeUnit.MILLISECONDS.toNanos(10);
    private static final long FORCED_JOIN_MILLIS = 1_000;

    static final String FAULT_QUEUE_FULL = "the hand-off queue stayed full";
    static final String FAULT_SEND_FAILED = "sending kept failing";
    static final String FAULT_NON_FINITE = "frames with non-finite values kept arriving";

    private final InetAddress host;
    private final int port;
    private final InetAddress bind;
    private final int queue;
    private final int faultAfter;
    private final long drainNanos;
    private final String where;

    private final LinkKey key;
    private final String unauthenticatedReason;

    // Control loop thread (set by open).
    private DatagramCodec codec;
    private CommandRing ring;
    private int joints;
    private long sequence;
    private int dropRun;

    // Sender thread.
    private int failureRun;
    private boolean lastWriteFailed;

    private final AtomicLong emitted = new AtomicLong();
    private final AtomicLong dropped = new AtomicLong();
    private final AtomicLong refused = new AtomicLong();
    private final AtomicLong sent = new AtomicLong();
    private final AtomicLong sendFailures = new AtomicLong();
    private volatile String fault;
    private volatile boolean senderParked;
    private volatile boolean closing;
    private volatile long drainDeadline;

    private final Object lifecycle = new Object();
    private DatagramChannel channel;
    private Thread sender;
    private DatagramTag senderTag;
    private volatile long session;
    private boolean closed;

    private UdpCommandPort(InetAddress host, int port, InetAddress bind, int queue, int faultAfter, int drainMillis, String where,
                           LinkKey key, String unauthenticatedReason) {
        this.key = key;
        this.unauthenticatedReason = unauthenticatedReason;
        this.host = host;
        this.port = port;
        this.bind = bind;
        this.queue = queue;
        this.faultAfter = faultAfter;
        this.drainNanos = TimeUnit.MILLISECONDS.toNanos(drainMillis);
        this.where = where;
    }

    /**
     * Makes an unopened port from its options.
     *
     * @param options read completely and finished
     * @throws BadInputException naming every bad, missing or unknown option by its key path
     */
    public static UdpCommandPort create(PortOptions options) throws BadInputException {
        String hostText = options.text("host", "127.0.0.1");
        InetAddress host = null;
        if (hostText.isBlank()) {
            options.problem("host", "must not be empty");
        } else {
            try {
                host = InetAddress.getByName(hostText);
            } catch (UnknownHostException e) {
                options.problem("host", "cannot be resolved: \"" + hostText + "\"");
            }
        }
        if (!options.has("port")) {
            options.problem("port", "is required");
        }
        int port = options.integer("port", 1, 1, 65_535);
        InetAddress bind = null;
        String bindText = options.text("bind", null);
        if (bindText != null) {
            bind = SourceAllowlist.literal(bindText);
            if (bind == null) {
                options.problem("bind", "must be a literal IP address such as 127.0.0.1, got \"" + bindText + "\"");
            } else if (host != null && (bind instanceof Inet4Address) != (host instanceof Inet4Address)) {
                options.problem("bind", "is \"" + bindText + "\", an " + family(bind) + " address, but host \"" + hostText
                        + "\" is " + family(host) + ": both must be of the same family");
            }
        }
        int queue = options.integer("queue", 64, 2, 65_536);
        if (Integer.bitCount(queue) != 1) {
            options.problem("queue", "must be a power of two, got " + queue);
        }
        int faultAfter = options.integer("faultAfter", 10, 1, 1_000_000);
        int drainMillis = options.integer("drainMillis", 100, 0, 10_000);
        LinkKey key = LinkKey.read(options, LinkPolicy.KEY_FILE);
        String reason = LinkPolicy.unauthenticatedReason(options, "host", hostText, host);
        options.finish();
        return new UdpCommandPort(host, port, bind, queue, faultAfter, drainMillis, options.where("host"), key,
                reason == null ? null : options.where(LinkPolicy.REASON) + ": " + reason);
    }

    private static String family(InetAddress a) {
        return a instanceof Inet4Address ? "IPv4" : "IPv6";
    }

    /**
     * Opens and connects the socket, preallocates the ring for {@code joints} joints and starts the
     * sender thread. Nothing is left open when it fails.
     *
     * @throws IOException when the socket cannot be bound or connected (the message names the address)
     * @throws IllegalStateException when called twice or after {@link #close}
     * @throws IllegalArgumentException when {@code joints} is outside 1 to {@link DatagramCodec#MAX_COMMAND_JOINTS}
     */
    @Override
    public void open(int joints) throws IOException {
        int slotBytes = DatagramCodec.commandLength(joints, key != null);
        synchronized (lifecycle) {
            if (channel != null || closed) {
                throw new IllegalStateException("the UDP command port was already opened or closed");
            }
            // The key's Mac before the socket, so nothing is left open if it cannot be made.
            if (key != null) {
                long id = new SecureRandom().nextLong();
                this.senderTag = key.newTag();
                this.session = id;
                this.codec = DatagramCodec.keyed(null, id);
            } else {
                this.codec = new DatagramCodec();
            }
            DatagramChannel ch = DatagramChannel.open(
                    host instanceof Inet4Address ? StandardProtocolFamily.INET : StandardProtocolFamily.INET6);
            try {
                if (bind != null) {
                    ch.bind(new InetSocketAddress(bind, 0));
                }
                ch.connect(new InetSocketAddress(host, port));
            } catch (IOException e) {
                ch.close();
                throw new IOException("cannot send to " + where + " = " + host.getHostAddress() + ", port " + port
                        + (bind != null ? " from " + bind.getHostAddress() : "") + ": " + e.getMessage(), e);
            }
            if (unauthenticatedReason != null) {
                LinkPolicy.warnUnauthenticated(LOG, where, host, unauthenticatedReason);
            }
            this.ring = new CommandRing(queue, slotBytes);
            this.joints = joints;
            this.channel = ch;
            this.sender = new Thread(this::sendLoop, "weft-udp-commands-" + port);
            sender.setDaemon(true);
            sender.start();
        }
    }

    /**
     * Queues one frame for sending. Never blocks, allocates nothing.
     *
     * @param frame read, not modified, not kept; must have the joint count given to {@link #open}
     * @return true when queued; false when dropped (ring full, a non-finite value, or the port is
     *     not open)
     * @throws IllegalArgumentException when the frame's joint count differs from the one opened with
     */
    @Override
    public boolean emit(CommandFrame frame) {
        CommandRing r = ring;
        if (r == null || closing) {
            dropped.lazySet(dropped.get() + 1);
            return false;
        }
        if (frame.joints() != joints) {
            throw new IllegalArgumentException("the port was opened for " + joints + " joints, the frame has " + frame.joints());
        }
        long seq = ++sequence;
        ByteBuffer slot = r.claim();
        if (slot == null) {
            return drop(FAULT_QUEUE_FULL);
        }
        if (codec.encodeCommand(slot, seq, frame) == 0) {
            refused.lazySet(refused.get() + 1);
            return drop(FAULT_NON_FINITE);
        }
        r.publish();
        emitted.lazySet(emitted.get() + 1);
        dropRun = 0;
        if (senderParked) {
            LockSupport.unpark(sender);
        }
        return true;
    }

    private boolean drop(String reason) {
        dropped.lazySet(dropped.get() + 1);
        if (++dropRun >= faultAfter) {
            raise(reason);
        }
        return false;
    }

    private void raise(String reason) {
        if (fault == null) {
            fault = reason;
        }
    }

    @Override
    public boolean faulted() {
        return fault != null;
    }

    /** Why the port faulted (a fixed phrase), or null while it has not. */
    public String faultReason() {
        return fault;
    }

    @Override
    public long emitted() {
        return emitted.get();
    }

    @Override
    public long dropped() {
        return dropped.get();
    }

    /** Frames dropped because they held a non-finite value (also counted in {@link #dropped()}). */
    public long refused() {
        return refused.get();
    }

    /** Datagrams written to the socket. */
    public long sent() {
        return sent.get();
    }

    /** Writes that failed; a failed write's frame is not retried. */
    public long sendFailures() {
        return sendFailures.get();
    }

    /** Frames queued and not yet written. */
    public int pending() {
        CommandRing r = ring;
        return r == null ? 0 : r.pending();
    }

    /** The session id this port's datagrams carry (drawn when it opens; 0 before, and always 0 without a key). */
    public long session() {
        return session;
    }

    /** The sequence number the last emitted frame took (0 before the first). */
    public long lastSequence() {
        return sequence;
    }

    @Override
    public String describe() {
        String fa = fault;
        return "udp commands to " + host.getHostAddress() + ":" + port + ": " + emitted() + " emitted, "
                + dropped() + " dropped, " + sent() + " sent, " + sendFailures() + " send failures, "
                + pending() + " queued" + (key == null ? "" : ", HMAC-SHA-256 " + key) + (fa == null ? "" : "; faulted: " + fa);
    }

    /**
     * Sends what is queued for up to {@code drainMillis}, stops the sender thread and closes the
     * socket. Idempotent. Returns within about {@code drainMillis} plus one second even when a
     * write hangs (closing the socket breaks it off).
     */
    @Override
    public void close() {
        Thread t;
        DatagramChannel ch;
        synchronized (lifecycle) {
            if (closed) {
                return;
            }
            closed = true;
            drainDeadline = System.nanoTime() + drainNanos;
            closing = true;
            t = sender;
            ch = channel;
        }
        if (t != null) {
            LockSupport.unpark(t);
            join(t, TimeUnit.NANOSECONDS.toMillis(drainNanos) + FORCED_JOIN_MILLIS);
        }
        if (ch != null) {
            try {
                ch.close();
            } catch (IOException e) {
                LOG.warn("closing the UDP command socket failed", e);
            }
        }
        if (t != null && t.isAlive()) {
            join(t, FORCED_JOIN_MILLIS);
        }
    }

    private static void join(Thread t, long millis) {
        try {
            t.join(Math.max(1, millis));
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }

    /** The sender thread, for allocation measurements in tests. */
    Thread senderThread() {
        return sender;
    }

    private void sendLoop() {
        CommandRing r = ring;
        DatagramChannel ch = channel;
        DatagramTag tag = senderTag;
        while (true) {
            ByteBuffer slot = r.peek();
            if (slot == null) {
                if (closing) {
                    return;
                }
                senderParked = true;
                if (r.peek() == null && !closing) {
                    LockSupport.parkNanos(this, IDLE_PARK_NANOS);
                }
                senderParked = false;
                continue;
            }
            if (closing && System.nanoTime() - drainDeadline > 0) {
                return;
            }
            if (tag != null) {
                tag.seal(slot, slot.limit());
            }
            try {
                ch.write(slot);
                sent.lazySet(sent.get() + 1);
                if (!lastWriteFailed) {
                    failureRun = 0;
                }
                lastWriteFailed = false;
            } catch (ClosedChannelException e) {
                return;
            } catch (IOException e) {
                long failures = sendFailures.get() + 1;
                sendFailures.lazySet(failures);
                if (failures == 1 && !(e instanceof PortUnreachableException)) {
                    LOG.warn("UDP command send failed (further failures are counted, not logged)", e);
                }
                lastWriteFailed = true;
                if (++failureRun >= faultAfter) {
                    raise(FAULT_SEND_FAILED);
                }
            }
            r.release();
        }
    }
}
