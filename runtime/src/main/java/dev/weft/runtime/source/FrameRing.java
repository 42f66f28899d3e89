package dev.weft.runtime.source;

import java.lang.invoke.MethodHandles;
import java.lang.invoke.VarHandle;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.charset.StandardCharsets;

/**
 * Camera frames handed over inside one process: the embedding application's camera thread
 * {@link #offer}s each frame, which is copied into a preallocated slot of a small ring, and the
 * loop side reads the latest finished frame through {@link #reader()} without locks. The ring is
 * laid out exactly as a shared-memory frame file ({@code docs/ports.md}, "Shared-memory frames")
 * and read by the same {@link SharedFrameReader}, so a frame being written is never read as a
 * finished one.
 *
 * <p>Writing follows the layout's protocol for frame {@code k}: sequence {@code 2k − 1}, a
 * store-store fence, stamp, number and pixels, a release store of sequence {@code 2k}, a release
 * store of the latest frame number.
 *
 * <p>Threading: one offering thread at a time (the camera's); readers on other threads.
 * Allocation: the ring is allocated at construction; {@link #offer} copies and allocates nothing
 * and never blocks.
 */
public final class FrameRing {

    private static final VarHandle LONGS = MethodHandles.byteBufferViewVarHandle(long[].class, ByteOrder.LITTLE_ENDIAN);

    private final String name;
    private final ByteBuffer ring;
    private final int slots;
    private final int height;
    private final int width;
    private final int channels;
    private final int format;
    private final long stride;
    private final int frameBytes;
    private long written;
    private long lastStamp = Long.MIN_VALUE;

    /**
     * @param name the stream's name, for messages
     * @param slots slots in the ring, 2 or more (a reader copying one frame while the camera writes
     *     the next never meets it in its slot)
     * @param format {@link SharedFrameReader#RGB8}, {@link SharedFrameReader#BGR8} or {@link SharedFrameReader#GREY8}
     * @throws IllegalArgumentException naming the setting that does not fit
     */
    public FrameRing(String name, int slots, int height, int width, int channels, int format) {
        if (slots < 2 || slots > 1024) {
            throw new IllegalArgumentException(name + ": a frame ring needs 2 to 1024 slots, got " + slots);
        }
        if (height < 1 || width < 1 || (channels != 1 && channels != 3)) {
            throw new IllegalArgumentException(name + ": frames must be at least 1 × 1 with 1 or 3 channels, got "
                    + height + " × " + width + " × " + channels);
        }
        if (format < SharedFrameReader.RGB8 || format > SharedFrameReader.GREY8
                || (format == SharedFrameReader.GREY8) != (channels == 1)) {
            throw new IllegalArgumentException(name + ": pixel format " + format + " does not fit " + channels
                    + " channels");
        }
        long frame = (long) height * width * channels;
        long stride = (SharedFrameReader.SLOT_HEADER_BYTES + frame + 63) / 64 * 64;
        long need = SharedFrameReader.HEADER_BYTES + slots * stride;
        if (need > Integer.MAX_VALUE) {
            throw new IllegalArgumentException(name + ": " + slots + " slots of " + frame + "-byte frames are over 2 GiB");
        }
        this.name = name;
        this.slots = slots;
        this.height = height;
        this.width = width;
        this.channels = channels;
        this.format = format;
        this.stride = stride;
        this.frameBytes = (int) frame;
        this.ring = ByteBuffer.allocateDirect((int) need).order(ByteOrder.LITTLE_ENDIAN);
        ring.put(0, SharedFrameReader.MAGIC.getBytes(StandardCharsets.ISO_8859_1));
        ring.putInt(8, 1).putInt(12, slots).putInt(16, height).putInt(20, width).putInt(24, channels)
                .putInt(28, format).putLong(32, stride).putLong(40, 0);
    }

    /**
     * Copies a frame into the ring and publishes it as the latest.
     *
     * @param stampNanos the frame's time in the loop's clock ({@link System#nanoTime()}), newer than
     *     the last frame's
     * @param frame the pixels from index {@code start} on (absolute gets; its position is not moved)
     * @return false, and nothing written, when the stamp is not newer than the last frame's
     * @throws IllegalArgumentException when the buffer holds less than a frame from {@code start}
     */
    public boolean offer(long stampNanos, ByteBuffer frame, int start) {
        if (start < 0 || (long) start + frameBytes > frame.capacity()) {
            throw new IllegalArgumentException(name + ": a frame is " + frameBytes + " bytes; the buffer holds "
                    + frame.capacity() + " from index 0, asked from " + start);
        }
        if (stampNanos <= lastStamp) {
            return false;
        }
        long k = written + 1;
        int base = (int) (SharedFrameReader.HEADER_BYTES + (k % slots) * stride);
        LONGS.setOpaque(ring, base, 2 * k - 1);
        // no pixel, stamp or number may become visible before the odd sequence
        VarHandle.storeStoreFence();
        LONGS.setOpaque(ring, base + 8, stampNanos);
        LONGS.setOpaque(ring, base + 16, k);
        ring.put(base + SharedFrameReader.SLOT_HEADER_BYTES, frame, start, frameBytes);
        LONGS.setRelease(ring, base, 2 * k);
        LONGS.setRelease(ring, 40, k);
        written = k;
        lastStamp = stampNanos;
        return true;
    }

    /** Frames offered and published. */
    public long written() {
        return written;
    }

    /** Bytes per frame. */
    public int frameBytes() {
        return frameBytes;
    }

    /** A reader of this ring's latest frame (one per reading thread). */
    public SharedFrameReader reader() {
        return SharedFrameReader.over(name, ring, slots, height, width, channels, format, stride);
    }
}
