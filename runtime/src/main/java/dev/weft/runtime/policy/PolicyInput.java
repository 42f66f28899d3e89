package dev.weft.runtime.policy;

import java.util.List;

/**
 * What one inference call reads: the query's observation, the control tick and the time it was
 * taken at (the chunk's origin), and the observation stream sampled on each of the policy's
 * {@linkplain Policy#histories() history grids}. Preallocated for one policy and refilled in
 * place; {@link #copyFrom} moves a request between threads' slots without allocating.
 *
 * <p>Threading: one writer at a time; the inference worker hands instances between threads with a
 * volatile exchange.
 */
public final class PolicyInput {

    private final double[] observation;
    private final double[][] histories;
    private final List<InputBinding.History> grids;
    private long tick;
    private long timeNanos;

    /** Slots for {@code policy}: its observation size and its history grids. */
    public static PolicyInput forPolicy(Policy policy) {
        return new PolicyInput(policy.observationSize(), policy.histories());
    }

    /**
     * @param observationSize values per observation
     * @param grids the history grids, in the order {@link #history(int)} numbers them
     */
    public PolicyInput(int observationSize, List<InputBinding.History> grids) {
        this.observation = new double[observationSize];
        this.grids = List.copyOf(grids);
        this.histories = new double[this.grids.size()][];
        for (int i = 0; i < histories.length; i++) {
            histories[i] = new double[this.grids.get(i).valueCount(observationSize)];
        }
    }

    /** The query's observation; written in place by whoever fills the request. */
    public double[] observation() {
        return observation;
    }

    /** History grid {@code i}'s samples, oldest first, {@code depth × observationSize} values; written in place. */
    public double[] history(int i) {
        return histories[i];
    }

    /** The history grids, in the order {@link #history(int)} numbers them. */
    public List<InputBinding.History> grids() {
        return grids;
    }

    /** The control tick of the observation's time (the chunk's origin). */
    public long tick() {
        return tick;
    }

    /** The observation's time stamp in the loop's clock, ns. */
    public long timeNanos() {
        return timeNanos;
    }

    /** Sets the origin tick and the observation's time. */
    public void stamp(long tick, long timeNanos) {
        this.tick = tick;
        this.timeNanos = timeNanos;
    }

    /**
     * Fills every history grid with the observation alone: for a call made outside a control loop
     * (a latency probe, a benchmark), where no stream of samples is kept.
     */
    public void historiesFromObservation() {
        int o = observation.length;
        for (double[] h : histories) {
            for (int at = 0; at < h.length; at += o) {
                System.arraycopy(observation, 0, h, at, o);
            }
        }
    }

    /**
     * Copies every value and stamp of {@code other}, which must be laid out alike.
     *
     * @throws IllegalArgumentException when the layouts differ (a programming error)
     */
    public void copyFrom(PolicyInput other) {
        if (other.observation.length != observation.length || other.histories.length != histories.length) {
            throw new IllegalArgumentException("a request of " + other.observation.length + " values and "
                    + other.histories.length + " history grids cannot fill one of " + observation.length + " and "
                    + histories.length);
        }
        System.arraycopy(other.observation, 0, observation, 0, observation.length);
        for (int i = 0; i < histories.length; i++) {
            System.arraycopy(other.histories[i], 0, histories[i], 0, histories[i].length);
        }
        tick = other.tick;
        timeNanos = other.timeNanos;
    }
}
