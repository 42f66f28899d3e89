package dev.weft.runtime.source;

import dev.weft.runtime.loop.LoopClock;

/**
 * Observations of a {@link SimulatedPlant}, taken at the time of the plant's latest step.
 *
 * <p>Threading: the control loop thread, which also steps the plant through the {@code sim} port.
 */
public final class SimulatedSource implements ObservationSource {

    private final SimulatedPlant plant;
    private final LoopClock clock;
    private final double[] scratch;
    private long accepted;

    public SimulatedSource(SimulatedPlant plant, LoopClock clock) {
        this.plant = plant;
        this.clock = clock;
        this.scratch = new double[plant.observationSize()];
    }

    @Override
    public int size() {
        return plant.observationSize();
    }

    @Override
    public void start() {
        // the plant needs no thread
    }

    @Override
    public long latest(double[] out) {
        plant.observe(scratch);
        System.arraycopy(scratch, 0, out, 0, scratch.length);
        accepted++;
        return clock.nanoTime();
    }

    @Override
    public long accepted() {
        return accepted;
    }

    @Override
    public long rejected() {
        return 0;
    }

    @Override
    public String describe() {
        return "simulated plant of " + plant.joints() + " joints";
    }

    @Override
    public void close() {
        // nothing to release
    }
}
