package dev.weft.runtime.dryrun;

import dev.weft.runtime.loop.LoopClock;
import dev.weft.runtime.recording.Recording;
import dev.weft.runtime.source.ObservationSource;

/**
 * Observations from a recording at their recorded times: on the run's clock, time zero is the
 * recording's first sample, and {@link #latest} gives the newest sample at or before now, stamped
 * with its recorded time (so the watchdog sees a recording's gaps as stale observations).
 *
 * <p>Threading: the control loop thread; allocation-free.
 */
public final class RecordingSource implements ObservationSource {

    private final Recording recording;
    private final LoopClock clock;
    private final long startNanos;
    private final double firstTime;
    private long served;

    /** Time zero is the clock's reading now. */
    public RecordingSource(Recording recording, LoopClock clock) {
        this(recording, clock, clock.nanoTime());
    }

    /** Time zero is {@code startNanos} on {@code clock} (shared with the recording's cameras). */
    public RecordingSource(Recording recording, LoopClock clock, long startNanos) {
        this.recording = recording;
        this.clock = clock;
        this.startNanos = startNanos;
        this.firstTime = recording.time(0);
    }

    @Override
    public int size() {
        return recording.observationSize();
    }

    @Override
    public void start() {
        // nothing to start
    }

    @Override
    public long latest(double[] out) {
        double t = (clock.nanoTime() - startNanos) / 1e9 + firstTime;
        int i = recording.sampleAtOrBefore(t + 1e-12);
        if (i < 0) {
            return -1;
        }
        recording.observation(i, out);
        served++;
        return startNanos + Math.round((recording.time(i) - firstTime) * 1e9);
    }

    @Override
    public long accepted() {
        return served;
    }

    @Override
    public long rejected() {
        return 0;
    }

    @Override
    public String describe() {
        return "recording " + recording.source();
    }

    @Override
    public void close() {
        // nothing to release
    }
}
