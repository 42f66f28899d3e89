package dev.weft.runtime.loop;

import dev.weft.runtime.source.ObservationSource;

/** An observation that never changes, always fresh on the given clock. */
final class FixedSource implements ObservationSource {
    private final double[] values;
    private final LoopClock clock;

    FixedSource(double[] values, LoopClock clock) {
        this.values = values.clone();
        this.clock = clock;
    }

    @Override
    public int size() {
        return values.length;
    }

    @Override
    public void start() {
    }

    @Override
    public long latest(double[] out) {
        System.arraycopy(values, 0, out, 0, values.length);
        return clock.nanoTime();
    }

    @Override
    public long accepted() {
        return 0;
    }

    @Override
    public long rejected() {
        return 0;
    }

    @Override
    public String describe() {
        return "fixed";
    }

    @Override
    public void close() {
    }
}
