package dev.weft.runtime.source;

import java.lang.invoke.MethodHandles;
import java.lang.invoke.VarHandle;

/**
 * The newest of a stream of fixed-size observations, handed from one writer thread to any number
 * of reader threads without locks and without allocation: a sequence lock over two copies.
 *
 * <p>The writer bumps a version counter before it touches a copy; a reader reads the version,
 * reads the copy that version points at, and keeps the result only when the version has not
 * moved. With one copy (the textbook sequence lock) a reader would have to wait while a writer is
 * mid-write; if the writer thread is descheduled there, the reader spins for as long. Here the
 * writer always rewrites the copy that readers are <em>not</em> directed to, so a reader never
 * waits for a write to finish; it retries only when the writer completed a whole step during the
 * read, which makes {@link #read} lock-free (some thread always makes progress).
 *
 * <p>Worked example. Publishing values {@code p} (the p-th publish, 1-based) takes the version
 * from {@code 2p-2} to {@code 2p-1} (readers go to copy 1, which still holds publish {@code p-1}),
 * writes copy 0, takes it to {@code 2p} (readers go to copy 0, now publish {@code p}), then writes
 * copy 1. So a reader sees publish {@code p-1} or {@code p} while publish {@code p} is under way,
 * never a mix, and one reader thread never sees the values go backwards.
 *
 * <p>Memory ordering, with {@link VarHandle}: every version store is a release store (the copy
 * written before it is visible to whoever sees the new version) followed by a store-store fence
 * (the new version is visible before the next copy's writes); the reader loads the version with
 * acquire, copies, then issues a load-load fence before loading the version again. This is the
 * fence placement for sequence locks worked out in H.-J. Boehm, "Can Seqlocks Get Along with
 * Programming Language Memory Models?", MSPC 2012, and the two-copy scheme is the one the Linux
 * kernel calls a latch ({@code raw_write_seqcount_latch} in {@code include/linux/seqlock.h}).
 *
 * <p>Threading: exactly one thread calls {@link #publish} (or a caller serialises publishers);
 * any thread may call {@link #read}. Neither method allocates nor blocks.
 */
public final class LatestValue {

    private static final VarHandle VERSION;

    static {
        try {
            VERSION = MethodHandles.lookup().findVarHandle(LatestValue.class, "version", long.class);
        } catch (ReflectiveOperationException e) {
            throw new ExceptionInInitializerError(e);
        }
    }

    private final int size;
    /** Two copies, back to back: copy {@code i} is {@code [i*size, (i+1)*size)}. */
    private final double[] copies;
    private final long[] times = new long[2];
    private final long[] tags = new long[2];
    /** Even: readers use copy 0; odd: copy 1. Below 2: nothing complete yet. Written by the writer only. */
    @SuppressWarnings("unused") // accessed through VERSION
    private long version;

    /**
     * @param size values per observation, at least 1
     * @throws IllegalArgumentException when {@code size < 1}
     */
    public LatestValue(int size) {
        if (size < 1) {
            throw new IllegalArgumentException("a latest value needs at least one value, got " + size);
        }
        this.size = size;
        this.copies = new double[2 * size];
    }

    /** Values per observation. */
    public int size() {
        return size;
    }

    /**
     * Publishes a new observation with a tag of 0. Single writer: see {@link #publish(long, long, double[])}.
     *
     * @param timeNanos when the observation was taken; {@link #read} returns it (do not publish -1,
     *     which {@code read} uses for "nothing yet")
     * @param values at least {@link #size()} values; read, not modified, not kept
     */
    public void publish(long timeNanos, double[] values) {
        publish(timeNanos, 0L, values);
    }

    /**
     * Publishes a new observation. Must be called from one thread only (or with calls serialised by
     * the caller): two concurrent publishers corrupt the version counter. Allocation-free, wait-free.
     *
     * @param timeNanos when the observation was taken; {@link #read} returns it (do not publish -1,
     *     which {@code read} uses for "nothing yet")
     * @param tag one caller-defined number that travels with the values (the UDP state receiver
     *     stores the sender's own timestamp there)
     * @param values at least {@link #size()} values; the first {@code size()} are copied; not modified, not kept
     * @throws IllegalArgumentException when {@code values} is shorter than {@link #size()}
     */
    public void publish(long timeNanos, long tag, double[] values) {
        if (values.length < size) {
            throw new IllegalArgumentException("expected at least " + size + " values, got " + values.length);
        }
        long v = (long) VERSION.getOpaque(this);
        // Readers move to copy 1 (odd); copy 0 is then free to rewrite.
        VERSION.setRelease(this, v + 1);
        VarHandle.storeStoreFence();
        System.arraycopy(values, 0, copies, 0, size);
        times[0] = timeNanos;
        tags[0] = tag;
        // Readers move to copy 0 (even), which now holds this observation; copy 1 is free.
        VERSION.setRelease(this, v + 2);
        VarHandle.storeStoreFence();
        System.arraycopy(values, 0, copies, size, size);
        times[1] = timeNanos;
        tags[1] = tag;
    }

    /**
     * Copies the newest complete observation. Lock-free and allocation-free; retries only when the
     * writer completed a step during the copy.
     *
     * @param out at least {@link #size()} long; the first {@code size()} entries are overwritten
     *     when this returns a time, left untouched when it returns -1
     * @return the time published with the values, or -1 when nothing has been published yet
     * @throws IllegalArgumentException when {@code out} is shorter than {@link #size()}
     */
    public long read(double[] out) {
        return read(out, null);
    }

    /**
     * Like {@link #read(double[])}, and also copies the tag published with the same values.
     *
     * @param out at least {@link #size()} long; overwritten when this returns a time
     * @param tagOut null, or at least one long: entry 0 receives the tag when this returns a time
     * @return the time published with the values, or -1 when nothing has been published yet
     */
    public long read(double[] out, long[] tagOut) {
        if (out.length < size) {
            throw new IllegalArgumentException("expected room for " + size + " values, got " + out.length);
        }
        while (true) {
            long v = (long) VERSION.getAcquire(this);
            if (v < 2) {
                // Nothing, or the very first publish under way (copy 1 never written yet).
                return -1;
            }
            int copy = (int) (v & 1);
            System.arraycopy(copies, copy * size, out, 0, size);
            long time = times[copy];
            long tag = tags[copy];
            VarHandle.loadLoadFence();
            if ((long) VERSION.getOpaque(this) == v) {
                if (tagOut != null) {
                    tagOut[0] = tag;
                }
                return time;
            }
            Thread.onSpinWait();
        }
    }

    /** How many observations have been published (a plain count; any thread). */
    public long published() {
        return ((long) VERSION.getAcquire(this)) >>> 1;
    }
}
