package dev.weft.runtime.telemetry;

import com.lmax.disruptor.EventFactory;
import com.lmax.disruptor.EventPoller;
import com.lmax.disruptor.InsufficientCapacityException;
import com.lmax.disruptor.RingBuffer;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.channels.FileChannel;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardOpenOption;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.locks.LockSupport;

/**
 * Writes rows to a CSV file on its own thread. The producer (the control loop) claims a
 * preallocated row in an LMAX Disruptor ring, fills it and publishes it; the recorder thread
 * formats rows into a reused buffer and writes them. The producer never blocks: when the ring is
 * full the row is not recorded, {@link #lost()} counts it and {@link #faulted()} turns true, so
 * the watchdog can stop the robot rather than run unrecorded.
 *
 * <p>Formatting reuses one {@link StringBuilder}; doubles are written in Java's shortest
 * round-trip form, so a reader gets back exactly the values the loop had.
 *
 * <p>Threading: {@link #claim}/{@link #publish} from one producer thread; {@link #close} from the
 * thread that owns the run, after the producer stopped. {@link #close} writes every published
 * row before it returns.
 *
 * @param <E> the row type
 */
public final class CsvRecorder<E> implements AutoCloseable {

    /** Formats rows of one type. Called on the recorder thread. */
    public interface Format<E> {
        /** Appends the header line's text (no line break). */
        void header(StringBuilder out);

        /** Appends one row's text (no line break). */
        void row(E row, StringBuilder out);
    }

    private final RingBuffer<E> ring;
    private final EventPoller<E> poller;
    private final Format<E> format;
    private final FileChannel channel;
    private final Path file;
    private final Thread thread;
    private final StringBuilder text = new StringBuilder(1024);
    private ByteBuffer bytes = ByteBuffer.allocateDirect(1 << 16);
    private volatile boolean running = true;
    private volatile boolean faulted;
    private volatile long written;
    private volatile IOException failure;
    private long lost;
    private long published;
    private boolean closed;

    private CsvRecorder(Path file, int ringSize, EventFactory<E> factory, Format<E> format, String threadName)
            throws IOException {
        if (Integer.bitCount(ringSize) != 1) {
            throw new IllegalArgumentException("ring size must be a power of two, got " + ringSize);
        }
        this.file = file;
        this.format = format;
        this.ring = RingBuffer.createSingleProducer(factory, ringSize);
        this.poller = ring.newPoller();
        ring.addGatingSequences(poller.getSequence());
        if (file.getParent() != null) {
            Files.createDirectories(file.getParent());
        }
        this.channel = FileChannel.open(file, StandardOpenOption.CREATE, StandardOpenOption.WRITE,
                StandardOpenOption.TRUNCATE_EXISTING);
        format.header(text);
        writeLine();
        flushBytes();
        this.thread = new Thread(this::work, threadName);
        this.thread.setDaemon(true);
        this.thread.start();
    }

    /**
     * Opens {@code file} (truncating it), writes the header and starts the recorder thread.
     *
     * @throws IOException when the file cannot be opened
     */
    public static <E> CsvRecorder<E> open(Path file, int ringSize, EventFactory<E> factory, Format<E> format,
                                          String threadName) throws IOException {
        return new CsvRecorder<>(file, ringSize, factory, format, threadName);
    }

    /**
     * Claims the next row to fill, or returns null when the ring is full (the row is then
     * counted as lost). A non-null row must be passed to {@link #publish} before the next claim.
     */
    public E claim() {
        try {
            claimed = ring.tryNext();
        } catch (InsufficientCapacityException full) {
            lost++;
            faulted = true;
            claimed = -1;
            return null;
        }
        return ring.get(claimed);
    }

    private long claimed = -1;

    /**
     * Claims the next row, waiting for space when the ring is full. Only for runs on virtual time
     * (dry runs), where the loop has no deadline to keep and every row must be kept; a live loop
     * uses {@link #claim}.
     */
    public E claimWaiting() {
        claimed = ring.next();
        return ring.get(claimed);
    }

    /** Publishes the row returned by the last {@link #claim}. */
    public void publish() {
        if (claimed < 0) {
            throw new IllegalStateException("nothing claimed");
        }
        ring.publish(claimed);
        claimed = -1;
        published++;
    }

    /** Rows that could not be recorded because the ring was full (producer's count). */
    public long lost() {
        return lost;
    }

    /** Rows published (producer's count). */
    public long published() {
        return published;
    }

    /** Rows written to the file so far. */
    public long written() {
        return written;
    }

    /** True when a row was lost or the file could not be written. */
    public boolean faulted() {
        return faulted;
    }

    /** The file being written. */
    public Path file() {
        return file;
    }

    private void work() {
        EventPoller.Handler<E> handler = (row, seq, end) -> {
            format.row(row, text);
            writeLine();
            written++;
            return true;
        };
        while (true) {
            boolean more = running;
            try {
                EventPoller.PollState state = poller.poll(handler);
                flushBytes();
                if (state == EventPoller.PollState.IDLE) {
                    if (!more) {
                        return;
                    }
                    LockSupport.parkNanos(this, TimeUnit.MILLISECONDS.toNanos(1));
                }
            } catch (Exception e) {
                failure = e instanceof IOException io ? io : new IOException(e);
                faulted = true;
                return;
            }
        }
    }

    private void writeLine() {
        text.append('\n');
        int n = text.length();
        if (bytes.remaining() < n) {
            try {
                flushBytes();
            } catch (IOException e) {
                throw new java.io.UncheckedIOException(e);
            }
            if (bytes.capacity() < n) {
                bytes = ByteBuffer.allocateDirect(Integer.highestOneBit(n) << 1);
            }
        }
        for (int i = 0; i < n; i++) {
            bytes.put((byte) text.charAt(i));
        }
        text.setLength(0);
    }

    private void flushBytes() throws IOException {
        bytes.flip();
        while (bytes.hasRemaining()) {
            channel.write(bytes);
        }
        bytes.clear();
    }

    /**
     * Writes every published row, forces the file to storage and closes it; idempotent.
     *
     * @throws IOException when writing failed at any point
     */
    @Override
    public void close() throws IOException {
        if (closed) {
            return;
        }
        closed = true;
        running = false;
        LockSupport.unpark(thread);
        try {
            thread.join();
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
        try {
            channel.force(false);
        } finally {
            channel.close();
        }
        if (failure != null) {
            throw failure;
        }
    }
}
