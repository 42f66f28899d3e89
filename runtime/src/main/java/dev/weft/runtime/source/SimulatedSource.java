package dev.weft.runtime.source;

import dev.weft.runtime.loop.LoopClock;

/**
 * Observations of a {@link SimulatedPlant}, taken at the time of the plant's latest step.
 *
 * <p>The plant is stepped once per tick with the command sent: by the {@code sim} port when that
 * is the run's port, otherwise by this source through {@link FollowsCommands}, so a simulated
 * robot can stand behind any port (a UDP link under test, for instance).
 *
 * <p>Threading: the control loop thread.
 */
public final class SimulatedSource implements ObservationSource, FollowsCommands {

    private final SimulatedPlant plant;
    private final LoopClock clock;
    private final double[] scratch;
    private final boolean stepsPlant;
    private long accepted;

    /** A source over a plant that the {@code sim} port steps. */
    public SimulatedSource(SimulatedPlant plant, LoopClock clock) {
        this(plant, clock, false);
    }

    /**
     * @param stepsPlant true when this source steps the plant with every command the loop sends
     *     (the run's port is not a {@code sim} port), false when the {@code sim} port does
     */
    public SimulatedSource(SimulatedPlant plant, LoopClock clock, boolean stepsPlant) {
        this.plant = plant;
        this.clock = clock;
        this.stepsPlant = stepsPlant;
        this.scratch = new double[plant.observationSize()];
    }

    @Override
    public void followed(dev.weft.runtime.port.CommandFrame frame) {
        if (stepsPlant) {
            plant.step(frame.positions);
        }
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
