package dev.weft.examples.demo;

import java.util.SplittableRandom;

/**
 * Records an episode the way the cell's data logger would: the drives follow the expert's
 * commanded positions, the sensors measure the joints with noise, and every
 * {@link DipCell#SAMPLE_PERIOD} a row is logged with the measurement and the command.
 *
 * <h2>Drive model</h2>
 * Each joint's drive tracks its command as a critically damped second-order servo,
 * {@code q'' = w^2 (a - q) - 2 w q'} with {@code w = }{@link #SERVO_RATE} rad/s (common practice
 * for modelling a position loop; the number is ours), integrated with semi-implicit Euler at
 * {@link #SUBSTEP} seconds, so the measured pose lags the command while moving. Sensor noise is
 * Gaussian, drawn by the Box-Muller transform (Box and Muller, Ann. Math. Statist. 29, 1958) from
 * a seeded {@link SplittableRandom}, with {@link StrictMath} so the files regenerate bit for bit on
 * any JVM.
 */
public final class EpisodeRecorder {

    /** Natural frequency of the drive model, rad/s. */
    static final double SERVO_RATE = 40.0;
    /** Integration step of the drive model, seconds (20 per sample). */
    static final double SUBSTEP = DipCell.SAMPLE_PERIOD / 20;
    /** Standard deviation of the position noise, rad. */
    static final double POSITION_NOISE = 0.0005;
    /** Standard deviation of the velocity noise, rad/s. */
    static final double VELOCITY_NOISE = 0.01;

    private EpisodeRecorder() {
    }

    /**
     * Runs {@code script} from 0 to its end and logs every sample; {@code seed} drives the noise.
     * The drives start at rest on the first commanded pose.
     */
    public static Episode record(String name, ExpertScript script, long seed) {
        int n = (int) Math.round(script.duration() / DipCell.SAMPLE_PERIOD) + 1;
        int d = DipCell.D;
        double[] times = new double[n];
        double[] q = new double[n * d];
        double[] dq = new double[n * d];
        double[] a = new double[n * d];
        double[] cmd = new double[d];
        double[] pos = new double[d];
        double[] vel = new double[d];
        script.command(0, pos);
        Gaussian noise = new Gaussian(seed);
        int substeps = (int) Math.round(DipCell.SAMPLE_PERIOD / SUBSTEP);
        double w = SERVO_RATE;
        for (int i = 0; i < n; i++) {
            double t = i * DipCell.SAMPLE_PERIOD;
            if (i > 0) {
                for (int s = 1; s <= substeps; s++) {
                    script.command((i - 1) * DipCell.SAMPLE_PERIOD + s * SUBSTEP, cmd);
                    for (int k = 0; k < d; k++) {
                        vel[k] += SUBSTEP * (w * w * (cmd[k] - pos[k]) - 2 * w * vel[k]);
                        pos[k] += SUBSTEP * vel[k];
                    }
                }
            }
            script.command(t, cmd);
            times[i] = t;
            for (int k = 0; k < d; k++) {
                q[i * d + k] = pos[k] + POSITION_NOISE * noise.next();
                dq[i * d + k] = vel[k] + VELOCITY_NOISE * noise.next();
                a[i * d + k] = cmd[k];
            }
        }
        return new Episode(name, times, q, dq, a);
    }

    /** Standard normal draws by the Box-Muller transform, two per pair of uniforms. */
    static final class Gaussian {
        private final SplittableRandom random;
        private double spare;
        private boolean hasSpare;

        Gaussian(long seed) {
            random = new SplittableRandom(seed);
        }

        double next() {
            if (hasSpare) {
                hasSpare = false;
                return spare;
            }
            double u1 = 1.0 - random.nextDouble(); // in (0, 1], so the logarithm is finite
            double u2 = random.nextDouble();
            double radius = StrictMath.sqrt(-2.0 * StrictMath.log(u1));
            double angle = 2.0 * Math.PI * u2;
            spare = radius * StrictMath.sin(angle);
            hasSpare = true;
            return radius * StrictMath.cos(angle);
        }
    }
}
