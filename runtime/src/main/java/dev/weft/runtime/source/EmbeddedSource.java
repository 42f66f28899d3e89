package dev.weft.runtime.source;

/**
 * Observations offered by the embedding application's own code, typically its driver thread:
 * {@link #offer} publishes through a {@link LatestValue}, and the control loop reads the newest
 * complete observation lock-free.
 *
 * <p>Threading: {@link #offer} from any thread (offers are serialised among themselves; the loop
 * never takes that lock); {@link #latest} from the control loop thread.
 */
public final class EmbeddedSource implements ObservationSource {

    private final LatestValue latest;
    private final int size;
    private volatile long offered;
    private volatile long rejected;

    public EmbeddedSource(int size) {
        if (size < 1) {
            throw new IllegalArgumentException("an observation needs at least one value, got " + size);
        }
        this.size = size;
        this.latest = new LatestValue(size);
    }

    /**
     * Publishes an observation.
     *
     * @param timeNanos when it was measured, on {@link System#nanoTime}'s scale (the run's clock)
     * @param values {@link #size()} values; copied
     * @return false when refused: wrong length or a non-finite value (counted in {@link #rejected()})
     */
    public synchronized boolean offer(long timeNanos, double[] values) {
        if (values == null || values.length != size) {
            rejected++;
            return false;
        }
        for (double v : values) {
            if (!Double.isFinite(v)) {
                rejected++;
                return false;
            }
        }
        latest.publish(timeNanos, values);
        offered++;
        return true;
    }

    @Override
    public int size() {
        return size;
    }

    @Override
    public void start() {
        // the application offers; nothing to start
    }

    @Override
    public long latest(double[] out) {
        return latest.read(out);
    }

    @Override
    public long accepted() {
        return offered;
    }

    @Override
    public long rejected() {
        return rejected;
    }

    @Override
    public String describe() {
        return "embedded source: " + offered + " observations offered, " + rejected + " refused";
    }

    @Override
    public void close() {
        // nothing to release
    }
}
