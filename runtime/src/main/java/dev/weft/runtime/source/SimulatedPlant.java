package dev.weft.runtime.source;

import java.util.SplittableRandom;

/**
 * A simulated robot for closed-loop dry runs and demos: each joint a second-order system that
 * follows its commanded position, {@code q̈ = ωn²·(q_cmd − q) − 2ζωn·q̇}, integrated with
 * semi-implicit Euler in sub-steps of the control period. Its observation is the joint positions,
 * optionally followed by the joint velocities, with optional seeded Gaussian sensor noise.
 *
 * <p>Threading: one thread (the control loop) calls {@link #step} and {@link #observe}; no
 * allocation after construction.
 */
public final class SimulatedPlant {

    private final int joints;
    private final double omega;
    private final double zeta;
    private final double dt;
    private final int substeps;
    private final boolean withVelocities;
    private final double noise;
    private final SplittableRandom random;
    private final double[] q;
    private final double[] v;

    /**
     * @param initial initial joint positions (the plant starts at rest there)
     * @param naturalFrequencyHz ωn / 2π, > 0
     * @param damping ζ, > 0
     * @param periodSeconds the control period one {@link #step} covers
     * @param withVelocities whether the observation carries velocities after the positions
     * @param noiseStddev sensor noise standard deviation (0 for none)
     * @param seed the noise generator's seed
     */
    public SimulatedPlant(double[] initial, double naturalFrequencyHz, double damping, double periodSeconds,
                          boolean withVelocities, double noiseStddev, long seed) {
        if (!(naturalFrequencyHz > 0) || !(damping > 0) || !(periodSeconds > 0) || !(noiseStddev >= 0)) {
            throw new IllegalArgumentException("simulated plant: frequency, damping and period must be > 0, noise >= 0");
        }
        this.joints = initial.length;
        this.omega = 2 * Math.PI * naturalFrequencyHz;
        this.zeta = damping;
        // keep ω·h well inside semi-implicit Euler's stable range
        this.substeps = Math.max(1, (int) Math.ceil(omega * periodSeconds / 0.05));
        this.dt = periodSeconds / substeps;
        this.withVelocities = withVelocities;
        this.noise = noiseStddev;
        this.random = new SplittableRandom(seed);
        this.q = initial.clone();
        this.v = new double[joints];
    }

    public int joints() {
        return joints;
    }

    /** Values per observation: the joints, twice when velocities are observed. */
    public int observationSize() {
        return withVelocities ? 2 * joints : joints;
    }

    /** Advances the plant by one control period toward {@code command} (read only). */
    public void step(double[] command) {
        for (int s = 0; s < substeps; s++) {
            for (int i = 0; i < joints; i++) {
                double a = omega * omega * (command[i] - q[i]) - 2 * zeta * omega * v[i];
                v[i] += a * dt;
                q[i] += v[i] * dt;
            }
        }
    }

    /** Writes the observation (positions, then velocities if observed), noise added, into {@code out}. */
    public void observe(double[] out) {
        for (int i = 0; i < joints; i++) {
            out[i] = q[i] + (noise > 0 ? noise * random.nextGaussian() : 0);
            if (withVelocities) {
                out[joints + i] = v[i] + (noise > 0 ? noise * random.nextGaussian() : 0);
            }
        }
    }

    /** The true position of a joint, without noise. */
    public double position(int joint) {
        return q[joint];
    }

    /** The true velocity of a joint. */
    public double velocity(int joint) {
        return v[joint];
    }
}
