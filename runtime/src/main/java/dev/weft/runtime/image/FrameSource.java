package dev.weft.runtime.image;

import java.nio.ByteBuffer;

/**
 * One camera's frames as the loop and the policy read them: 8-bit pixels, rows top to bottom,
 * channels interleaved ({@code height × width × channels} bytes), each frame stamped with its time
 * in the loop's clock (ns). A live camera's frames come from a shared-memory frame file or an
 * in-process ring ({@code dev.weft.runtime.source.SharedFrameReader}); a dry run's from the
 * recording, at their recorded times.
 *
 * <p>Threading: an instance is read by one thread. The loop watches a camera's age with one
 * instance and the thread that runs the policy copies frames with another ({@link #sibling()}).
 * Allocation: neither {@link #latestStamp()} nor {@link #copyAtOrBefore} allocates.
 */
public interface FrameSource {

    /** Rows per frame. */
    int height();

    /** Pixels per row. */
    int width();

    /** Bytes per pixel: 3 (colour) or 1 (grey). */
    int channels();

    /** Whether a colour frame's channels are blue, green, red (else red, green, blue). */
    boolean bgr();

    /** Bytes per frame. */
    default int frameBytes() {
        return height() * width() * channels();
    }

    /**
     * The time stamp of the newest frame there is now, without copying it: for watching the
     * camera's age on every tick.
     *
     * @return ns in the loop's clock, or −1 before the first frame
     */
    long latestStamp();

    /**
     * Copies the newest frame stamped at or before {@code timeNanos} (an observation's time) into
     * {@code out}, absolute puts from index 0: every input of one inference call then describes
     * the world at or before the same instant.
     *
     * @return the frame's stamp, or −1 when no such frame is held (none yet, or every frame kept is
     *     newer)
     */
    long copyAtOrBefore(long timeNanos, ByteBuffer out);

    /** Another reader of the same frames, with state of its own, for a second thread. */
    FrameSource sibling();

    /** For messages: what the frames are and where they come from. */
    String describe();
}
