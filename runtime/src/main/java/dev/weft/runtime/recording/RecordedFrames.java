package dev.weft.runtime.recording;

import java.nio.ByteBuffer;

/**
 * One camera's recorded frames, checked and held in memory: {@code n >= 1} frames of
 * {@code height × width × channels} bytes (rows top to bottom, channels interleaved, as the HDF5
 * dataset {@code [n, height, width, channels]} stores them), each with its time in seconds,
 * strictly increasing and finite. All frames are in one byte array read once, when the recording is
 * opened ({@link Recordings#readCameras}); copying a frame out allocates nothing. Immutable and
 * thread-safe.
 */
public final class RecordedFrames {

    private final String camera;
    private final String source;
    private final PixelFormat pixelFormat;
    private final int height;
    private final int width;
    private final int channels;
    private final int frameBytes;
    private final double[] times;
    private final byte[] pixels;

    /**
     * Takes ownership of {@code pixels} (it may be large; it is not copied).
     *
     * @throws IllegalArgumentException when the sizes disagree (the reader checks values and says where)
     */
    RecordedFrames(String camera, String source, PixelFormat pixelFormat, int height, int width, double[] times,
                   byte[] pixels) {
        int n = times.length;
        long frame = (long) height * width * pixelFormat.channels();
        if (n < 1 || height < 1 || width < 1 || (long) pixels.length != n * frame) {
            throw new IllegalArgumentException(source + ": " + pixels.length + " bytes do not make " + n + " frames of "
                    + height + " × " + width + " × " + pixelFormat.channels());
        }
        this.camera = camera;
        this.source = source;
        this.pixelFormat = pixelFormat;
        this.height = height;
        this.width = width;
        this.channels = pixelFormat.channels();
        this.frameBytes = (int) frame;
        this.times = times.clone();
        this.pixels = pixels;
    }

    /** The camera's name, its key under {@code recording.cameras}. */
    public String camera() {
        return camera;
    }

    /** Where the frames were read from: the file and the frames dataset. */
    public String source() {
        return source;
    }

    public PixelFormat pixelFormat() {
        return pixelFormat;
    }

    /** Rows per frame. */
    public int height() {
        return height;
    }

    /** Pixels per row. */
    public int width() {
        return width;
    }

    /** Bytes per pixel: 3 (rgb8, bgr8) or 1 (grey8). */
    public int channels() {
        return channels;
    }

    /** Bytes per frame: {@code height × width × channels}. */
    public int frameBytes() {
        return frameBytes;
    }

    /** Number of frames, at least 1. */
    public int frameCount() {
        return times.length;
    }

    /** Time of frame {@code i}, seconds. */
    public double time(int i) {
        return times[i];
    }

    /**
     * The index of the latest frame taken at or before {@code t} seconds, or -1 when {@code t}
     * precedes the first frame (or is NaN). Binary search; allocation-free.
     */
    public int frameAtOrBefore(double t) {
        if (!(t >= times[0])) {
            return -1;
        }
        int lo = 0;
        int hi = times.length - 1;
        while (lo < hi) {
            int mid = (lo + hi + 1) >>> 1;
            if (times[mid] <= t) {
                lo = mid;
            } else {
                hi = mid - 1;
            }
        }
        return lo;
    }

    /**
     * Copies frame {@code i} into {@code out} at byte index {@code at}, without touching its
     * position or limit. Allocation-free.
     *
     * @throws IndexOutOfBoundsException when {@code i} is not a frame or the frame does not fit in
     *     {@code out} from {@code at}
     * @throws java.nio.ReadOnlyBufferException when {@code out} is read-only
     */
    public void copyFrame(int i, ByteBuffer out, int at) {
        if (i < 0 || i >= times.length) {
            throw new IndexOutOfBoundsException("frame " + i + " of " + times.length + " (" + source + ")");
        }
        out.put(at, pixels, i * frameBytes, frameBytes);
    }
}
