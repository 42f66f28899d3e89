package dev.weft.runtime.telemetry;

import com.lmax.disruptor.EventFactory;
import com.lmax.disruptor.EventPoller;
import com.lmax.disruptor.InsufficientCapacityException;
import com.lmax.disruptor.RingBuffer;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.channels.FileChannel;
import java.nio.charset.StandardCharsets;
import java.nio.file.AtomicMoveNotSupportedException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.nio.file.StandardOpenOption;
import java.util.Locale;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;
import java.util.concurrent.locks.LockSupport;

/**
 * Writes rows to a CSV file on its own thread. The producer (the control loop) claims a
 * preallocated row in an LMAX Disruptor ring, fills it and publishes it; the recorder thread
 * formats rows into a reused buffer and writes them. The producer never blocks: when the ring is
 * full the row is not recorded, counted as lost, and {@link #faulted()} turns true, so the
 * watchdog can stop the robot rather than run unrecorded.
 *
 * <p><b>Counts.</b> {@link #counts()} tells what became of every row handed over: written (whole
 * rows the writer wrote), lost (ring full, a failed write, or not written when closing gave up)
 * and pending; {@code handed = written + lost + pending} always, and pending is 0 after
 * {@link #close()}. The first failure's message is {@link #failure()}.
 *
 * <p><b>Files.</b> Opened on a {@link TargetFile}, the recorder writes {@code <name>.incomplete}
 * beside the target (created new, never an existing file) and moves it onto the target's name when
 * it closes, so a reader never sees a half file under the final name. A write that fails part-way
 * leaves the file cut back to its last whole line (where the file system lets it be cut), and the
 * file keeps its {@code .incomplete} name: only a file written to the end gets the final name.
 * ({@link #openTruncating} writes straight into its file instead, for the csv command port.)
 *
 * <p><b>Never hangs.</b> The file is opened on the recorder thread; the constructor waits at most
 * the drain timeout for it (a FIFO with no reader blocks its opener). {@link #close()} waits at
 * most the drain timeout for the writer to finish, then counts what it could not write as lost and
 * returns; the recorder thread is a daemon, so a write stuck in the kernel cannot keep the JVM from
 * exiting.
 *
 * <p>Rows are formatted into a reused {@link StringBuilder} and must be ASCII (numbers and names
 * the format chooses); the header may be any text (written as UTF-8). Doubles are written in
 * Java's shortest round-trip form, so a reader gets back exactly the values the loop had.
 *
 * <p>Threading: {@link #claim}/{@link #claimWaiting}/{@link #publish} from one producer thread;
 * {@link #close} from the thread that owns the run, after the producer stopped; {@link #counts},
 * {@link #faulted} and {@link #failure} from any thread.
 *
 * @param <E> the row type
 */
public final class CsvRecorder<E> implements AutoCloseable {

    /** Formats rows of one type. Called on the recorder thread. */
    public interface Format<E> {
        /** Appends the header line's text (no line break). */
        void header(StringBuilder out);

        /** Appends one row's text (no line break, ASCII only). */
        void row(E row, StringBuilder out);
    }

    /** How long opening and closing wait for the recorder thread when nobody says, nanoseconds (2 s). */
    public static final long DEFAULT_DRAIN_TIMEOUT_NANOS = TimeUnit.SECONDS.toNanos(2);

    private final RingBuffer<E> ring;
    private final EventPoller<E> poller;
    private final EventPoller.Handler<E> handler = this::take;
    private final Format<E> format;
    private final TargetFile target;
    private final Path file;
    private final Path writing;
    private final boolean truncate;
    private final long drainNanos;
    private final Thread thread;
    private final CountDownLatch opened = new CountDownLatch(1);

    // producer's counts (one writer each, read by any thread)
    private final AtomicLong published = new AtomicLong();
    private final AtomicLong refused = new AtomicLong();
    private long claimed = -1;

    // writer's counts
    private final AtomicLong written = new AtomicLong();
    private final AtomicLong failedRows = new AtomicLong();

    // recorder thread only
    private final StringBuilder text = new StringBuilder(1024);
    private ByteBuffer bytes = ByteBuffer.allocateDirect(1 << 16);
    private FileChannel channel;
    private int rowsInBuffer;
    private boolean headerInBuffer;
    private long fileBytes;

    private volatile IOException openFailure;
    private volatile boolean running = true;
    private volatile boolean abandoned;
    private volatile boolean faulted;
    private volatile String failure;
    private volatile RowCounts closedCounts;
    private boolean closed;

    private CsvRecorder(TargetFile target, Path straight, boolean truncate, int ringSize, long drainNanos,
                        EventFactory<E> factory, Format<E> format, String threadName) throws IOException {
        if (Integer.bitCount(ringSize) != 1) {
            throw new IllegalArgumentException("ring size must be a power of two, got " + ringSize);
        }
        if (drainNanos <= 0) {
            throw new IllegalArgumentException("drain timeout must be > 0, got " + drainNanos + " ns");
        }
        this.target = target;
        this.file = target != null ? target.file() : straight;
        this.writing = target != null ? target.partial() : straight;
        this.truncate = truncate;
        this.drainNanos = drainNanos;
        this.format = format;
        this.ring = RingBuffer.createSingleProducer(factory, ringSize);
        this.poller = ring.newPoller();
        ring.addGatingSequences(poller.getSequence());
        this.thread = new Thread(this::work, threadName);
        this.thread.setDaemon(true);
        this.thread.start();
        boolean open;
        try {
            open = opened.await(drainNanos, TimeUnit.NANOSECONDS);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            open = false;
        }
        if (!open) {
            abandoned = true;
            running = false;
            throw new IOException("could not open " + writing + " within " + seconds(drainNanos)
                    + " (a FIFO with no reader?)");
        }
        if (openFailure != null) {
            throw openFailure;
        }
    }

    /**
     * Starts a recorder writing {@code target}'s partial file, moved onto the target at close.
     *
     * @param drainTimeoutNanos how long opening and {@link #close()} wait for the recorder thread
     * @throws IOException when the partial file cannot be created (the message names it and why);
     *     nothing is left behind
     */
    public static <E> CsvRecorder<E> open(TargetFile target, int ringSize, long drainTimeoutNanos,
                                          EventFactory<E> factory, Format<E> format, String threadName)
            throws IOException {
        return new CsvRecorder<>(target, null, false, ringSize, drainTimeoutNanos, factory, format, threadName);
    }

    /**
     * Starts a recorder writing straight into {@code file}, created or emptied when it opens, with
     * no partial file and no move: the csv command port's documented behaviour. Refuses a path
     * that exists and is not a regular file; every count holds as with {@link #open}.
     *
     * @throws IOException when the file cannot be opened (the message names it and why)
     */
    public static <E> CsvRecorder<E> openTruncating(Path file, int ringSize, long drainTimeoutNanos,
                                                    EventFactory<E> factory, Format<E> format, String threadName)
            throws IOException {
        if (Files.exists(file) && !Files.isRegularFile(file)) {
            throw new IOException(file + " is not a regular file");
        }
        return new CsvRecorder<>(null, file, true, ringSize, drainTimeoutNanos, factory, format, threadName);
    }

    /**
     * For tests against special files ({@code /dev/full}, a FIFO): writes straight into an
     * existing {@code file} with none of {@link TargetFile}'s checks, no partial file and no move.
     * Opening still waits at most the drain timeout, and every count holds as with {@link #open}.
     */
    public static <E> CsvRecorder<E> openStraightForTests(Path file, int ringSize, long drainTimeoutNanos,
                                                          EventFactory<E> factory, Format<E> format,
                                                          String threadName) throws IOException {
        return new CsvRecorder<>(null, file, false, ringSize, drainTimeoutNanos, factory, format, threadName);
    }

    /**
     * Claims the next row to fill, or returns null when the ring is full (the row is then
     * counted as lost). A non-null row must be passed to {@link #publish} before the next claim.
     * Never blocks, allocates nothing.
     */
    public E claim() {
        try {
            claimed = ring.tryNext();
        } catch (InsufficientCapacityException full) {
            refuse();
            return null;
        }
        return ring.get(claimed);
    }

    /**
     * Claims the next row, waiting for space when the ring is full. Only for runs on virtual time
     * (dry runs), where the loop has no deadline to keep and every row must be kept; a live loop
     * uses {@link #claim}. The wait ends when the writer has made no progress for the drain
     * timeout: the row is then lost and counted, as with {@link #claim}.
     */
    public E claimWaiting() {
        long progress = -1;
        long since = 0;
        while (true) {
            try {
                claimed = ring.tryNext();
                return ring.get(claimed);
            } catch (InsufficientCapacityException full) {
                long now = System.nanoTime();
                long done = written.get() + failedRows.get();
                if (done != progress) {
                    progress = done;
                    since = now;
                } else if (now - since > drainNanos || !thread.isAlive()) {
                    refuse();
                    return null;
                }
                LockSupport.parkNanos(100_000);
            }
        }
    }

    private void refuse() {
        refused.lazySet(refused.get() + 1);
        faulted = true;
        claimed = -1;
    }

    /** Publishes the row returned by the last claim. */
    public void publish() {
        if (claimed < 0) {
            throw new IllegalStateException("nothing claimed");
        }
        // counted before the writer can see the row, so written never runs ahead of handed
        published.lazySet(published.get() + 1);
        ring.publish(claimed);
        claimed = -1;
    }

    /** What became of the rows handed over so far; final once {@link #close()} returned. Any thread. */
    public RowCounts counts() {
        RowCounts c = closedCounts;
        if (c != null) {
            return c;
        }
        long w = written.get();
        long f = failedRows.get();
        long p = published.get();
        long r = refused.get();
        return new RowCounts(p + r, w, r + f, p - w - f);
    }

    /** Rows lost so far ({@link #counts()}'s lost). */
    public long lost() {
        return counts().lost();
    }

    /** Whole rows written to the file so far ({@link #counts()}'s written). */
    public long written() {
        return counts().written();
    }

    /** True when a row was lost or the file could not be written. */
    public boolean faulted() {
        return faulted;
    }

    /** The first failure (the file, and why, as the system said), or null; any thread. */
    public String failure() {
        return failure;
    }

    /** The file the rows end up in: the target's resolved file (or the file written straight into). */
    public Path file() {
        return file;
    }

    /** The file being written during the run: the partial file beside the target, or {@link #file()}. */
    public Path writingTo() {
        return writing;
    }

    // ---- the recorder thread

    private void work() {
        try {
            channel = target != null
                    ? FileChannel.open(writing, StandardOpenOption.CREATE_NEW, StandardOpenOption.WRITE)
                    : truncate ? FileChannel.open(writing, StandardOpenOption.CREATE, StandardOpenOption.WRITE,
                            StandardOpenOption.TRUNCATE_EXISTING)
                    : FileChannel.open(writing, StandardOpenOption.WRITE);
        } catch (IOException | RuntimeException e) {
            openFailure = new IOException("could not create " + writing + ": " + TargetFile.why(e), e);
            opened.countDown();
            return;
        }
        opened.countDown();
        try {
            if (abandoned) {
                return;
            }
            format.header(text);
            text.append('\n');
            byte[] header = text.toString().getBytes(StandardCharsets.UTF_8);
            text.setLength(0);
            room(header.length);
            bytes.put(header);
            headerInBuffer = true;
            flush();
            while (!abandoned) {
                boolean more = running;
                EventPoller.PollState state;
                try {
                    state = poller.poll(handler);
                } catch (Exception e) {
                    // take() catches what a format throws; this is the poller's own failure
                    fail("the recorder stopped: " + e);
                    return;
                }
                if (bytes.position() > 0) {
                    flush();
                }
                if (state == EventPoller.PollState.IDLE) {
                    if (!more) {
                        return;
                    }
                    LockSupport.parkNanos(this, TimeUnit.MILLISECONDS.toNanos(1));
                }
            }
        } finally {
            finish();
        }
    }

    /** One row from the ring: formatted into the buffer, or counted as lost once writing failed. */
    private boolean take(E row, long sequence, boolean endOfBatch) {
        if (failure != null) {
            failedRows.lazySet(failedRows.get() + 1);
            return true;
        }
        try {
            format.row(row, text);
        } catch (RuntimeException e) {
            text.setLength(0);
            failedRows.lazySet(failedRows.get() + 1);
            fail("could not format a row for " + writing + ": " + e);
            return true;
        }
        text.append('\n');
        int n = text.length();
        if (bytes.remaining() < n) {
            flush();
            if (failure != null) {
                text.setLength(0);
                failedRows.lazySet(failedRows.get() + 1);
                return true;
            }
            room(n);
        }
        for (int i = 0; i < n; i++) {
            bytes.put((byte) text.charAt(i));
        }
        text.setLength(0);
        rowsInBuffer++;
        return !abandoned;
    }

    /** Makes the (empty or flushed) buffer hold at least {@code n} more bytes. */
    private void room(int n) {
        if (bytes.remaining() < n) {
            ByteBuffer bigger = ByteBuffer.allocateDirect(Integer.highestOneBit(bytes.position() + n) << 1);
            bytes.flip();
            bigger.put(bytes);
            bytes = bigger;
        }
    }

    /**
     * Writes the buffer. The rows in it count as written once the file took them; when a write
     * fails part-way, the whole lines that reached the file count as written, the rest as lost,
     * and the file is cut back to its last whole line.
     */
    private void flush() {
        bytes.flip();
        try {
            while (bytes.hasRemaining()) {
                channel.write(bytes);
            }
            fileBytes += bytes.limit();
            written.lazySet(written.get() + rowsInBuffer);
        } catch (IOException | RuntimeException e) {
            int accepted = bytes.position();
            int lines = 0;
            int wholeEnd = 0;
            for (int i = 0; i < accepted; i++) {
                if (bytes.get(i) == '\n') {
                    lines++;
                    wholeEnd = i + 1;
                }
            }
            int rows = headerInBuffer ? Math.max(0, lines - 1) : lines;
            written.lazySet(written.get() + rows);
            failedRows.lazySet(failedRows.get() + rowsInBuffer - rows);
            String cut = "";
            if (accepted > wholeEnd) {
                try {
                    channel.truncate(fileBytes + wholeEnd);
                } catch (IOException | RuntimeException t) {
                    cut = "; its last line is cut short and could not be removed (" + TargetFile.why(t) + ")";
                }
            }
            fileBytes += wholeEnd;
            fail("could not write " + writing + ": " + TargetFile.why(e) + cut);
        } finally {
            bytes.clear();
            rowsInBuffer = 0;
            headerInBuffer = false;
        }
    }

    private void finish() {
        if (!abandoned && failure == null) {
            try {
                channel.force(false);
            } catch (IOException | RuntimeException e) {
                fail("could not force " + writing + " to storage: " + TargetFile.why(e));
            }
        }
        try {
            channel.close();
        } catch (IOException | RuntimeException e) {
            fail("could not close " + writing + ": " + TargetFile.why(e));
        }
        if (abandoned && target != null && closedCounts == null) {
            // given up while opening (or discarded): leave nothing behind
            try {
                Files.deleteIfExists(writing);
            } catch (IOException ignored) {
                // the refusal already named the file
            }
        }
    }

    private void fail(String message) {
        if (failure == null) {
            failure = message;
        }
        faulted = true;
    }

    private static String seconds(long nanos) {
        return String.format(Locale.ROOT, "%.3g s", nanos / 1e9);
    }

    // ---- closing

    /**
     * Ends the recording: waits at most the drain timeout for the writer to write every published
     * row and close the file, then moves a completely written partial file onto the target.
     * When the writer does not finish in time, the rows it did not write are counted as lost, the
     * file keeps its partial name, and this returns anyway. Never throws for a file problem:
     * {@link #counts()} and {@link #failure()} say what happened. Idempotent.
     */
    @Override
    public synchronized void close() {
        if (closed) {
            return;
        }
        closed = true;
        running = false;
        LockSupport.unpark(thread);
        boolean ended = join(thread, drainNanos);
        long w = written.get();
        long f = failedRows.get();
        long p = published.get();
        long r = refused.get();
        long notWritten = p - w - f;
        closedCounts = new RowCounts(p + r, w, r + f + notWritten, 0);
        if (!ended) {
            abandoned = true;
            String stuck = "the writer did not finish within " + seconds(drainNanos) + " (a stalled file or FIFO?); "
                    + notWritten + " rows were not written";
            failure = failure == null ? stuck : failure + "; " + stuck;
            faulted = true;
            // a write blocked in the kernel may be released by an interrupt (the channel closes);
            // asked from a thread of its own, since releasing it may itself wait
            Thread release = new Thread(thread::interrupt, thread.getName() + "-release");
            release.setDaemon(true);
            release.start();
            return;
        }
        if (notWritten > 0 && failure == null) {
            fail(notWritten + " rows were published after the recorder was closed");
        }
        if (target == null) {
            return;
        }
        if (failure != null) {
            failure = failure + " (the rows written are in " + writing + ")";
            return;
        }
        try {
            if (target.replace()) {
                try {
                    Files.move(writing, file, StandardCopyOption.ATOMIC_MOVE);
                } catch (AtomicMoveNotSupportedException e) {
                    Files.move(writing, file, StandardCopyOption.REPLACE_EXISTING);
                }
            } else {
                Files.move(writing, file);
            }
        } catch (IOException | RuntimeException e) {
            fail("could not move " + writing + " onto " + file + ": " + TargetFile.why(e) + " (the rows are in " + writing + ")");
        }
    }

    /**
     * Ends a recording that should leave nothing behind (the run it belonged to never started):
     * stops the writer as {@link #close()} does, then deletes the partial file instead of moving
     * it. Writing straight into a file, the file is left as it is. Idempotent with {@link #close()}.
     */
    public synchronized void discard() {
        if (closed) {
            return;
        }
        closed = true;
        running = false;
        abandoned = true;
        LockSupport.unpark(thread);
        join(thread, drainNanos);
        long p = published.get();
        long r = refused.get();
        closedCounts = new RowCounts(p + r, 0, p + r, 0);
        if (target != null) {
            try {
                Files.deleteIfExists(writing);
            } catch (IOException e) {
                fail("could not delete " + writing + ": " + TargetFile.why(e));
            }
        }
    }

    private static boolean join(Thread t, long nanos) {
        long deadline = System.nanoTime() + nanos;
        boolean interrupted = false;
        try {
            while (t.isAlive()) {
                long left = deadline - System.nanoTime();
                if (left <= 0) {
                    return false;
                }
                try {
                    TimeUnit.NANOSECONDS.timedJoin(t, left);
                } catch (InterruptedException e) {
                    interrupted = true;
                }
            }
            return true;
        } finally {
            if (interrupted) {
                Thread.currentThread().interrupt();
            }
        }
    }
}
