package dev.weft.runtime.dryrun;

import dev.weft.runtime.image.FrameSource;
import dev.weft.runtime.loop.LoopClock;
import dev.weft.runtime.recording.PixelFormat;
import dev.weft.runtime.recording.RecordedFrames;
import java.nio.ByteBuffer;

/**
 * A recorded camera replayed at its own times: on the run's clock, time zero is the joint-state
 * recording's first sample (the time base the recording's cameras share with it), and a frame
 * recorded at {@code t} s is there from {@code start + (t − first) s} on. A camera whose frames end
 * early is seen ageing, as a live camera that stops would be.
 *
 * <p>Threading: one thread per instance ({@link #sibling()} for another). Allocation-free.
 */
public final class RecordedCamera implements FrameSource {

    private final RecordedFrames frames;
    private final LoopClock clock;
    private final long startNanos;
    private final double firstTime;

    /**
     * @param startNanos the run's time zero on {@code clock}
     * @param firstTime the recording's first sample time, s
     */
    public RecordedCamera(RecordedFrames frames, LoopClock clock, long startNanos, double firstTime) {
        this.frames = frames;
        this.clock = clock;
        this.startNanos = startNanos;
        this.firstTime = firstTime;
    }

    /** Frame {@code i}'s stamp in the run's clock, ns. */
    public long stamp(int i) {
        return startNanos + Math.round((frames.time(i) - firstTime) * 1e9);
    }

    /** The index of the newest frame stamped at or before {@code timeNanos}, or −1. */
    public int frameAtOrBefore(long timeNanos) {
        int i = frames.frameAtOrBefore((timeNanos - startNanos) / 1e9 + firstTime + 1e-9);
        // the search is in seconds; the stamps decide, in whole nanoseconds
        while (i >= 0 && stamp(i) > timeNanos) {
            i--;
        }
        return i;
    }

    @Override
    public long latestStamp() {
        int i = frameAtOrBefore(clock.nanoTime());
        return i < 0 ? -1 : stamp(i);
    }

    @Override
    public long copyAtOrBefore(long timeNanos, ByteBuffer out) {
        int i = frameAtOrBefore(timeNanos);
        if (i < 0) {
            return -1;
        }
        frames.copyFrame(i, out, 0);
        return stamp(i);
    }

    @Override
    public RecordedCamera sibling() {
        return new RecordedCamera(frames, clock, startNanos, firstTime);
    }

    @Override
    public int height() {
        return frames.height();
    }

    @Override
    public int width() {
        return frames.width();
    }

    @Override
    public int channels() {
        return frames.channels();
    }

    @Override
    public boolean bgr() {
        return frames.pixelFormat() == PixelFormat.BGR8;
    }

    @Override
    public String describe() {
        return "recorded frames " + frames.height() + " × " + frames.width() + " × " + frames.channels() + " from "
                + frames.source();
    }

    /** The recorded frames. */
    public RecordedFrames frames() {
        return frames;
    }
}
