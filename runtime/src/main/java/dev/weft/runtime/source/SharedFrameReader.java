package dev.weft.runtime.source;

import dev.weft.runtime.BadInputException;
import java.io.IOException;
import java.lang.invoke.MethodHandles;
import java.lang.invoke.VarHandle;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.MappedByteBuffer;
import java.nio.channels.FileChannel;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardOpenOption;

/**
 * Reads camera frames that another process writes into a memory-mapped file: a small ring of
 * slots, each guarded by a sequence counter (a seqlock), so a frame being written is never read
 * as a finished one. The layout is weft's own, documented in {@code docs/ports.md}
 * ("Shared-memory frames"); all numbers little-endian.
 *
 * <pre>
 * header, 64 bytes:  0 magic "WEFTIMG1" · 8 u32 version (1) · 12 u32 slots · 16 u32 height ·
 *                    20 u32 width · 24 u32 channels · 28 u32 pixel format (0 rgb8, 1 bgr8, 2 grey8) ·
 *                    32 u64 slot stride · 40 u64 latest frame number (0 = none yet) · 48 reserved
 * slot i at 64 + i·stride:  0 u64 sequence · 8 i64 time stamp, ns, CLOCK_MONOTONIC ·
 *                    16 u64 frame number · 24 reserved · 64 the frame, height × width × channels
 * </pre>
 *
 * <p>The writer puts frame {@code k} (from 1) into slot {@code k mod slots}: sequence
 * {@code 2k − 1} (odd: being written), then time stamp, number and pixels, then sequence
 * {@code 2k} (even: finished), then the header's latest frame number {@code k}. The pixels must
 * not become visible before the odd sequence: a store-store fence after it (C11
 * {@code atomic_thread_fence(memory_order_release)}; on aarch64 {@code dmb ishst}), then release
 * stores of the even sequence and of the latest number. x86-64 keeps stores in order by itself. The reader takes the latest frame number, reads the slot's sequence, copies the
 * frame, and reads the sequence again: the copy counts only when both readings are {@code 2k}.
 * Otherwise the writer was in the slot (a torn read, counted) and the reader tries again.
 *
 * <p>The time stamp is {@code CLOCK_MONOTONIC} in nanoseconds, the clock {@link System#nanoTime()}
 * reads on Linux (Python's {@code time.monotonic_ns()}, C's {@code clock_gettime}), so a frame's age
 * is {@code System.nanoTime() − stamp}. A writer that stops leaves the latest frame in place, ageing.
 *
 * <p>Allocation: {@link #open} maps the file; {@link #latest} and {@link #copyAtOrBefore} copy into
 * the caller's buffer and allocate nothing. Threading: one reading thread per instance; a second
 * thread reads through {@link #sibling()} (the same mapping, state of its own).
 */
public final class SharedFrameReader implements AutoCloseable, dev.weft.runtime.image.FrameSource {

    /** The header's size and the slot header's size, bytes. */
    public static final int HEADER_BYTES = 64;
    public static final int SLOT_HEADER_BYTES = 64;
    /** The magic at the start of the file. */
    public static final String MAGIC = "WEFTIMG1";
    /** Tries before {@link #latest} gives up for this call (the writer kept overtaking the copy). */
    public static final int ATTEMPTS = 4;
    /** Pixel formats, as the header numbers them ({@code recording.PixelFormat#headerCode()}). */
    public static final int RGB8 = 0;
    public static final int BGR8 = 1;
    public static final int GREY8 = 2;

    /** The header's pixel format as the configuration names it. */
    public dev.weft.runtime.recording.PixelFormat format() {
        for (dev.weft.runtime.recording.PixelFormat f : dev.weft.runtime.recording.PixelFormat.values()) {
            if (f.headerCode() == format) {
                return f;
            }
        }
        throw new IllegalStateException("pixel format " + format + " was checked when the file was opened");
    }

    private static final VarHandle LONGS = MethodHandles.byteBufferViewVarHandle(long[].class, ByteOrder.LITTLE_ENDIAN);

    private final String name;
    private final FileChannel channel;
    private final ByteBuffer map;
    private final int slots;
    private final int height;
    private final int width;
    private final int channels;
    private final int format;
    private final long stride;
    private final int frameBytes;
    private long frames;
    private long torn;
    private long lastNumber;
    private long lastStamp = -1;
    private long peeked = -1;

    private SharedFrameReader(String name, FileChannel channel, ByteBuffer map, int slots, int height, int width,
                              int channels, int format, long stride) {
        this.name = name;
        this.channel = channel;
        this.map = map;
        this.slots = slots;
        this.height = height;
        this.width = width;
        this.channels = channels;
        this.format = format;
        this.stride = stride;
        this.frameBytes = height * width * channels;
    }

    /**
     * Maps {@code file} and checks its header against the frames expected.
     *
     * @throws BadInputException naming the file and the header field that does not fit
     */
    public static SharedFrameReader open(Path file, int height, int width, int channels) throws BadInputException {
        String where = file.toString();
        if (!Files.isRegularFile(file)) {
            throw new BadInputException(where, "no such file (the camera process creates it)");
        }
        FileChannel ch = null;
        try {
            ch = FileChannel.open(file, StandardOpenOption.READ);
            long size = ch.size();
            if (size < HEADER_BYTES) {
                throw new BadInputException(where, "is " + size + " bytes, shorter than the 64-byte header");
            }
            // the header first, read rather than mapped: nothing is mapped before it is checked
            ByteBuffer m = ByteBuffer.allocate(HEADER_BYTES).order(ByteOrder.LITTLE_ENDIAN);
            while (m.hasRemaining() && ch.read(m, m.position()) >= 0) {
                // read until the header is in
            }
            byte[] magic = new byte[8];
            m.get(0, magic);
            if (!MAGIC.equals(new String(magic, StandardCharsets.ISO_8859_1))) {
                throw new BadInputException(where + " (header, byte 0)", "magic is not " + MAGIC + ": not a weft frame file");
            }
            int version = m.getInt(8);
            if (version != 1) {
                throw new BadInputException(where + " (header, byte 8)", "version " + version + ", this weft reads version 1");
            }
            long slots = Integer.toUnsignedLong(m.getInt(12));
            long h = Integer.toUnsignedLong(m.getInt(16));
            long w = Integer.toUnsignedLong(m.getInt(20));
            long c = Integer.toUnsignedLong(m.getInt(24));
            int format = m.getInt(28);
            long stride = m.getLong(32);
            if (slots < 1 || slots > 1024) {
                throw new BadInputException(where + " (header, byte 12)", "slots must be 1 to 1024, got " + slots);
            }
            if (h != height || w != width || c != channels) {
                throw new BadInputException(where + " (header, bytes 16-27)", "frames are " + h + " × " + w + " × " + c
                        + ", the stream is configured for " + height + " × " + width + " × " + channels);
            }
            if (c != 1 && c != 3) {
                throw new BadInputException(where + " (header, byte 24)", "channels must be 1 or 3, got " + c);
            }
            if (format < RGB8 || format > GREY8 || (format == GREY8) != (channels == 1)) {
                throw new BadInputException(where + " (header, byte 28)", "pixel format " + format
                        + " does not fit " + channels + " channels (0 rgb8, 1 bgr8, 2 grey8)");
            }
            long frame = h * w * c;
            if (stride < SLOT_HEADER_BYTES + frame || stride % 8 != 0 || stride > Integer.MAX_VALUE) {
                throw new BadInputException(where + " (header, byte 32)", "slot stride " + stride
                        + " must be a multiple of 8 holding the 64-byte slot header and " + frame
                        + " frame bytes, and under 2 GiB");
            }
            long need = HEADER_BYTES + slots * stride;
            if (need > Integer.MAX_VALUE) {
                throw new BadInputException(where + " (header, bytes 12 and 32)", slots + " slots of " + stride
                        + " bytes are " + need + " bytes; a frame file must stay under 2 GiB");
            }
            if (size < need) {
                throw new BadInputException(where, "is " + size + " bytes; " + slots + " slots of " + stride
                        + " bytes need " + need);
            }
            MappedByteBuffer map = ch.map(FileChannel.MapMode.READ_ONLY, 0, need);
            map.order(ByteOrder.LITTLE_ENDIAN);
            return new SharedFrameReader(file.toString(), ch, map, (int) slots, height, width, channels, format, stride);
        } catch (IOException | RuntimeException e) {
            closeQuietly(ch);
            throw new BadInputException(where, "could not map the frame file: " + e.getMessage());
        } catch (BadInputException e) {
            closeQuietly(ch);
            throw e;
        }
    }

    /**
     * A reader over a ring that lives in this process ({@link FrameRing}), laid out as the file is;
     * the ring's header was written by weft itself.
     */
    static SharedFrameReader over(String name, ByteBuffer ring, int slots, int height, int width, int channels,
                                  int format, long stride) {
        ByteBuffer view = ring.duplicate().order(ByteOrder.LITTLE_ENDIAN);
        return new SharedFrameReader(name, null, view, slots, height, width, channels, format, stride);
    }

    private static void closeQuietly(FileChannel ch) {
        if (ch != null) {
            try {
                ch.close();
            } catch (IOException ignored) {
                // the open's own error is the one reported
            }
        }
    }

    /**
     * Copies the latest finished frame into {@code out} (absolute puts from index 0, at least
     * {@link #frameBytes()} bytes) when it is newer than the last one copied.
     *
     * @return the frame's time stamp (ns, {@code CLOCK_MONOTONIC}) when a new frame was copied;
     *     −1 when there is none yet, it is the one copied before, or the writer overtook every try
     *     (counted in {@link #tornReads()}; the next call tries again)
     */
    public long latest(ByteBuffer out) {
        for (int attempt = 0; attempt < ATTEMPTS; attempt++) {
            long k = (long) LONGS.getAcquire(map, 40);
            if (k <= 0 || k == lastNumber) {
                return -1;
            }
            long stamp = copy(k, Long.MAX_VALUE, out);
            if (stamp >= 0) {
                return stamp;
            }
            // the writer was in the slot (a newer frame) or never finished it: try again
        }
        return -1;
    }

    /** {@link #copy}: the slot holds another frame or the writer is in it. */
    private static final long NOT_THERE = -1;
    /** {@link #copy}: frame {@code k} is there, stamped after the time asked for. */
    private static final long TOO_NEW = -2;

    /**
     * Copies frame {@code k} out of its slot under the seqlock when it is there, finished, and
     * stamped at or before {@code notAfter}: the sequence read before and after the copy must both
     * be {@code 2k}. A slot the writer is in (an odd sequence), or one it entered during the copy,
     * counts as a torn read.
     *
     * @return the frame's stamp, {@link #NOT_THERE} or {@link #TOO_NEW}
     */
    private long copy(long k, long notAfter, ByteBuffer out) {
        int base = (int) (HEADER_BYTES + Long.remainderUnsigned(k, slots) * stride);
        long before = (long) LONGS.getAcquire(map, base);
        if (before != 2 * k) {
            if ((before & 1) != 0) {
                // the writer is in the slot
                torn++;
            }
            return NOT_THERE;
        }
        long stamp = (long) LONGS.getAcquire(map, base + 8);
        long number = (long) LONGS.getAcquire(map, base + 16);
        if (stamp > notAfter) {
            if ((long) LONGS.getAcquire(map, base) != before) {
                torn++;
                return NOT_THERE;
            }
            return TOO_NEW;
        }
        out.put(0, map, base + SLOT_HEADER_BYTES, frameBytes);
        // the copy's loads complete before the sequence is read again
        VarHandle.acquireFence();
        long after = (long) LONGS.getAcquire(map, base);
        if (after != before || number != k) {
            torn++;
            return NOT_THERE;
        }
        lastNumber = k;
        lastStamp = stamp;
        frames++;
        return stamp;
    }

    /**
     * The time stamp of the latest finished frame, read without copying it (two acquire loads of
     * the slot's sequence around the stamp's): for watching a camera's age on every tick. While the
     * writer is in that slot, the stamp read before is given again.
     *
     * @return the stamp (ns, {@code CLOCK_MONOTONIC}), or −1 before the first frame
     */
    public long peekStamp() {
        long k = (long) LONGS.getAcquire(map, 40);
        if (k <= 0) {
            return peeked;
        }
        int base = (int) (HEADER_BYTES + Long.remainderUnsigned(k, slots) * stride);
        long before = (long) LONGS.getAcquire(map, base);
        if (before != 2 * k) {
            return peeked;
        }
        long stamp = (long) LONGS.getAcquire(map, base + 8);
        long after = (long) LONGS.getAcquire(map, base);
        if (after == before) {
            peeked = stamp;
        }
        return peeked;
    }

    @Override
    public long latestStamp() {
        return peekStamp();
    }

    /**
     * Copies the newest finished frame stamped at or before {@code timeNanos}, searching the ring
     * from the latest frame back over every slot; a slot the writer is in is passed over (counted in
     * {@link #tornReads()}), so a torn frame is never returned.
     */
    @Override
    public long copyAtOrBefore(long timeNanos, ByteBuffer out) {
        long newest = (long) LONGS.getAcquire(map, 40);
        for (long k = newest; k > 0 && k > newest - slots; k--) {
            long stamp = copy(k, timeNanos, out);
            if (stamp >= 0) {
                return stamp;
            }
            // too new, overwritten by a newer frame, or being written: an older slot may hold it
        }
        return -1;
    }

    @Override
    public SharedFrameReader sibling() {
        // the mapping is shared, the channel stays with this reader (closing a sibling closes nothing)
        return new SharedFrameReader(name, null, map.duplicate().order(ByteOrder.LITTLE_ENDIAN), slots, height, width,
                channels, format, stride);
    }

    @Override
    public int height() {
        return height;
    }

    @Override
    public int width() {
        return width;
    }

    @Override
    public int channels() {
        return channels;
    }

    @Override
    public boolean bgr() {
        return format == BGR8;
    }

    /** The frame number of the last frame copied (0 before the first). */
    public long lastFrameNumber() {
        return lastNumber;
    }

    /** The time stamp of the last frame copied, or −1. */
    public long lastStamp() {
        return lastStamp;
    }

    /** Frames copied. */
    public long frames() {
        return frames;
    }

    /** Copies thrown away because the writer was in the slot (never returned as frames). */
    public long tornReads() {
        return torn;
    }

    /** Bytes per frame: height × width × channels. */
    @Override
    public int frameBytes() {
        return frameBytes;
    }

    /** The header's pixel format: {@link #RGB8}, {@link #BGR8} or {@link #GREY8}. */
    public int pixelFormat() {
        return format;
    }

    /** Slots in the ring. */
    public int slots() {
        return slots;
    }

    /** For messages. */
    @Override
    public String describe() {
        return "frames " + height + " × " + width + " × " + channels + " from " + name;
    }

    @Override
    public void close() {
        closeQuietly(channel);
    }
}
