package dev.weft.runtime.port;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.source.SimulatedPlant;

/**
 * Feeds every command to a {@link SimulatedPlant}, stepping it one control period per frame. Not
 * live. The plant is made when the run is assembled (it needs the control period and the initial
 * pose) and attached with {@link #attach}.
 */
public final class SimPort implements CommandPort {

    private final double naturalFrequencyHz;
    private final double damping;
    private final boolean withVelocities;
    private final double noise;
    private final long seed;
    private SimulatedPlant plant;
    private long emitted;

    public SimPort(double naturalFrequencyHz, double damping, boolean withVelocities, double noise, long seed) {
        this.naturalFrequencyHz = naturalFrequencyHz;
        this.damping = damping;
        this.withVelocities = withVelocities;
        this.noise = noise;
        this.seed = seed;
    }

    /** Makes the plant this port drives, at rest at {@code initial}, and returns it. */
    public SimulatedPlant attach(double[] initial, double periodSeconds) {
        plant = new SimulatedPlant(initial, naturalFrequencyHz, damping, periodSeconds, withVelocities, noise, seed);
        return plant;
    }

    /** The plant, or null before {@link #attach}. */
    public SimulatedPlant plant() {
        return plant;
    }

    @Override
    public void open(int joints) throws java.io.IOException {
        if (plant == null) {
            throw new java.io.IOException("sim port: no simulated plant attached");
        }
        if (plant.joints() != joints) {
            throw new java.io.IOException("sim port: plant has " + plant.joints() + " joints, frames have " + joints);
        }
    }

    @Override
    public boolean emit(CommandFrame frame) {
        plant.step(frame.positions);
        emitted++;
        return true;
    }

    @Override
    public boolean faulted() {
        return false;
    }

    @Override
    public long emitted() {
        return emitted;
    }

    @Override
    public long dropped() {
        return 0;
    }

    @Override
    public String describe() {
        return "sim port: " + emitted + " frames into a simulated plant";
    }

    @Override
    public void close() {
        // nothing to release
    }

    /**
     * The {@code sim} kind. Options: {@code frequency} (Hz, default 8), {@code damping} (default 0.9),
     * {@code velocities} (observe velocities too, default false), {@code noise} (sensor noise
     * standard deviation, default 0), {@code seed} (default 1).
     */
    public static final class Provider implements CommandPortProvider {
        @Override
        public String kind() {
            return "sim";
        }

        @Override
        public boolean live() {
            return false;
        }

        @Override
        public CommandPort create(PortOptions o) throws BadInputException {
            double f = o.number("frequency", 8.0, 1e-3, 1e4);
            double z = o.number("damping", 0.9, 1e-3, 100);
            boolean vel = o.flag("velocities", false);
            double noise = o.number("noise", 0.0, 0.0, 1e3);
            int seed = o.integer("seed", 1, Integer.MIN_VALUE, Integer.MAX_VALUE);
            o.finish();
            return new SimPort(f, z, vel, noise, seed);
        }
    }
}
