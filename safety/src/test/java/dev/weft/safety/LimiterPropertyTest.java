package dev.weft.safety;

import static org.assertj.core.api.Assertions.assertThat;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * Invariant 1 of the design: for any target sequence, the emitted commands stay inside the
 * operating range and their finite differences stay inside the velocity, acceleration and jerk
 * bounds, whether the targets come as set points or as a plan with (possibly hostile) velocity and
 * acceleration. Measured on the emitted sequence itself by {@link BoundChecker}. Plain seeded loops.
 */
class LimiterPropertyTest {

    private static final long SEED = 0x5EEDF00DL;
    private static final int EPISODES = 100;
    private static final int TICKS_PER_EPISODE = 10_000;

    @Test
    void millionTicksOfHostileTargetsNeverExceedABound() {
        SplittableRandom rng = new SplittableRandom(SEED);
        long ticks = 0;
        long violations = 0;
        long faults = 0;
        long nonFiniteSeen = 0;
        long nonFiniteFlagged = 0;
        long boundFlags = 0;
        String first = null;
        double[] worst = new double[3];
        for (int e = 0; e < EPISODES; e++) {
            int joints = 1 + rng.nextInt(3);
            JointLimits limits = randomLimits(rng, joints);
            double dt = rng.nextBoolean() ? 1e-3 : (rng.nextBoolean() ? 2e-3 : 1e-2);
            JerkLimiter limiter = JerkLimiter.create(limits, dt);
            double[] start = new double[joints];
            for (int i = 0; i < joints; i++) {
                start[i] = uniform(rng, limits.operatingMin(i), limits.operatingMax(i));
            }
            assertThat(limiter.reset(start)).isTrue();
            BoundChecker checker = new BoundChecker(limits, dt);
            checker.start(start, null, null);
            TargetSource source = new TargetSource(rng, limits, dt);
            double[] target = new double[joints];
            double[] velocity = new double[joints];
            double[] acceleration = new double[joints];
            double[] command = new double[joints];
            // a quarter of the episodes give set points, a quarter the plan's derivatives (hostile ones
            // too), half the plan's derivatives and a preview ahead (the receding-horizon law), hostile too
            int kind = e % 4;
            boolean plan = kind != 0;
            double[] preview = kind >= 2 ? new double[joints * limiter.previewRuns()] : null;
            PlanPreview ahead = preview == null ? null : Previews.over(preview, limiter.previewRuns());
            for (int k = 1; k <= TICKS_PER_EPISODE; k++) {
                source.next(k, target);
                int flags;
                if (plan) {
                    source.rates(k, target, velocity, acceleration);
                    if (preview != null) {
                        hostilePreview(rng, limits, dt * limiter.previewRunEnds()[limiter.previewRuns() - 1] / limiter.previewRuns(), target, velocity, preview);
                    }
                    flags = limiter.apply(target, velocity, acceleration, ahead, command);
                } else {
                    flags = limiter.apply(target, command);
                }
                checker.accept(k, command);
                boolean anyNonFinite = false;
                for (int i = 0; i < joints; i++) {
                    anyNonFinite |= !Double.isFinite(target[i])
                            || plan && !(Double.isFinite(velocity[i]) && Double.isFinite(acceleration[i]));
                }
                if (anyNonFinite) {
                    nonFiniteSeen++;
                    if ((flags & JerkLimiter.NON_FINITE_TARGET) != 0) {
                        nonFiniteFlagged++;
                    }
                }
                if ((flags & (JerkLimiter.NOT_VIABLE | JerkLimiter.POSITION_CLAMPED)) != 0) {
                    faults++;
                }
                if ((flags & (JerkLimiter.POSITION | JerkLimiter.VELOCITY | JerkLimiter.ACCELERATION)) != 0) {
                    boundFlags++;
                }
                ticks++;
            }
            violations += checker.violations;
            for (int w = 0; w < 3; w++) {
                worst[w] = Math.max(worst[w], checker.worstShare[w]);
            }
            if (first == null && checker.firstViolation != null) {
                first = "episode " + e + ": " + checker.firstViolation;
            }
        }
        System.out.printf("limiter property: %d ticks, %d violations, %d non-finite ticks, %d bound-shaped ticks,"
                + " worst |v|/V %.12f |a|/A %.12f |j|/J %.12f%n",
                ticks, violations, nonFiniteSeen, boundFlags, worst[0], worst[1], worst[2]);
        assertThat(ticks).isGreaterThanOrEqualTo(1_000_000L);
        assertThat(violations).as("bound violations, first: %s", first).isZero();
        assertThat(faults).as("ticks with NOT_VIABLE or POSITION_CLAMPED").isZero();
        assertThat(nonFiniteSeen).as("the generator produced NaN bursts").isPositive();
        assertThat(nonFiniteFlagged).isEqualTo(nonFiniteSeen);
        assertThat(boundFlags).as("the generator drove the limiter into its bounds").isPositive();
        // the bounds were reached, not merely respected from far away
        assertThat(worst[0]).isGreaterThan(0.99);
        assertThat(worst[1]).isGreaterThan(0.99);
        assertThat(worst[2]).isGreaterThan(0.99);
    }

    /**
     * A preview that mostly goes on from the target at its velocity, with noise; now and then a run
     * far outside the range, a huge value or a NaN, and sometimes a plan that reverses at once.
     */
    static void hostilePreview(SplittableRandom rng, JointLimits limits, double runSeconds, double[] target,
                               double[] velocity, double[] preview) {
        int joints = target.length;
        int blocks = preview.length / joints;
        for (int i = 0; i < joints; i++) {
            double range = limits.operatingMax(i) - limits.operatingMin(i);
            double start = Double.isFinite(target[i]) ? target[i] : limits.operatingMin(i);
            double rate = Double.isFinite(velocity[i]) ? velocity[i] : 0.0;
            if (rng.nextInt(50) == 0) {
                rate = -rate * uniform(rng, 1, 20);
            }
            for (int b = 0; b < blocks; b++) {
                double x = start + rate * (b + 0.5) * runSeconds + range * 0.01 * uniform(rng, -1, 1);
                int r = rng.nextInt(400);
                if (r == 0) {
                    x = Double.NaN;
                } else if (r == 1) {
                    x = rng.nextBoolean() ? 1e300 : -1e300;
                } else if (r < 6) {
                    x = limits.operatingMin(i) + range * uniform(rng, -10, 10);
                }
                preview[i * blocks + b] = x;
            }
        }
    }

    static JointLimits randomLimits(SplittableRandom rng, int joints) {
        JointLimits.Builder b = JointLimits.builder();
        for (int i = 0; i < joints; i++) {
            double center = uniform(rng, -3, 3);
            double half = Math.exp(uniform(rng, Math.log(0.05), Math.log(3.0)));
            double vel = Math.exp(uniform(rng, Math.log(0.1), Math.log(10)));
            double acc = Math.exp(uniform(rng, Math.log(0.5), Math.log(100)));
            double jerk = Math.exp(uniform(rng, Math.log(5), Math.log(5000)));
            double margin = rng.nextBoolean() ? 0.0 : uniform(rng, 0, 0.2 * half);
            b.joint("j" + i, center - half, center + half, vel, acc, jerk, margin);
        }
        return b.build();
    }

    static double uniform(SplittableRandom rng, double lo, double hi) {
        return lo + (hi - lo) * rng.nextDouble();
    }

    /** Seeded hostile targets: steps, chirps, noise, NaN bursts, out-of-range jumps, switching every few hundred ticks. */
    static final class TargetSource {
        private final SplittableRandom rng;
        private final JointLimits limits;
        private final double dt;
        private int mode;
        private int modeLeft;
        private final double[] level;
        private final double[] lastTarget;
        private final double[] lastRate;
        private double f0;
        private double f1;
        private double span;

        TargetSource(SplittableRandom rng, JointLimits limits, double dt) {
            this.rng = rng;
            this.limits = limits;
            this.dt = dt;
            this.level = new double[limits.count()];
            this.lastTarget = new double[limits.count()];
            this.lastRate = new double[limits.count()];
        }

        void next(int tick, double[] target) {
            if (modeLeft <= 0) {
                mode = rng.nextInt(7);
                modeLeft = 1 + rng.nextInt(mode == 4 ? 20 : 600);
                span = 50 + rng.nextInt(2000);
                f0 = uniform(rng, 0.05, 2);
                f1 = uniform(rng, 2, 60);
                for (int i = 0; i < level.length; i++) {
                    level[i] = widened(i, 1.6);
                }
            }
            modeLeft--;
            double t = tick * dt;
            for (int i = 0; i < target.length; i++) {
                double lo = limits.operatingMin(i);
                double hi = limits.operatingMax(i);
                double mid = 0.5 * (lo + hi);
                double half = 0.5 * (hi - lo);
                switch (mode) {
                    case 0: // step to a level, possibly outside the range
                        target[i] = level[i];
                        break;
                    case 1: // chirp, amplitude beyond the range
                        double frac = (tick % (int) span) / span;
                        double f = f0 + (f1 - f0) * frac;
                        target[i] = mid + 1.3 * half * Math.sin(2 * Math.PI * f * t);
                        break;
                    case 2: // white noise over (and beyond) the range
                        target[i] = widened(i, 1.4);
                        break;
                    case 3: // noise around a level
                        target[i] = level[i] + 0.05 * half * (rng.nextDouble() - 0.5);
                        break;
                    case 4: // NaN / infinity burst
                        int pick = rng.nextInt(4);
                        target[i] = pick == 0 ? Double.NaN : pick == 1 ? Double.POSITIVE_INFINITY
                                : pick == 2 ? Double.NEGATIVE_INFINITY : level[i];
                        break;
                    case 5: // far out-of-range jumps, alternating
                        target[i] = (tick / 7) % 2 == 0 ? hi + 1e6 * half : lo - 1e300;
                        break;
                    default: // ramp through the whole range and beyond
                        target[i] = lo - half + 4 * half * ((tick % (int) span) / span);
                        break;
                }
            }
        }

        /**
         * The plan's derivatives for the target just drawn: mostly the finite differences of
         * the targets (a consistent plan), sometimes huge, sign-flipped or non-finite ones.
         */
        void rates(int tick, double[] target, double[] velocity, double[] acceleration) {
            int pick = rng.nextInt(40);
            for (int i = 0; i < target.length; i++) {
                double v = Double.isFinite(target[i]) && Double.isFinite(lastTarget[i]) ? (target[i] - lastTarget[i]) / dt : 0;
                if (!Double.isFinite(v)) {
                    v = 0;
                }
                double a = (v - lastRate[i]) / dt;
                if (!Double.isFinite(a)) {
                    a = 0;
                }
                lastTarget[i] = target[i];
                lastRate[i] = v;
                switch (pick) {
                    case 0:
                        velocity[i] = 1e300;
                        acceleration[i] = -1e300;
                        break;
                    case 1:
                        velocity[i] = -v * 50;
                        acceleration[i] = a * 1e6;
                        break;
                    case 2:
                        velocity[i] = Double.NaN;
                        acceleration[i] = a;
                        break;
                    case 3:
                        velocity[i] = v;
                        acceleration[i] = Double.NEGATIVE_INFINITY;
                        break;
                    default:
                        velocity[i] = v;
                        acceleration[i] = a;
                        break;
                }
            }
        }

        private double widened(int i, double factor) {
            double lo = limits.operatingMin(i);
            double hi = limits.operatingMax(i);
            double mid = 0.5 * (lo + hi);
            return mid + factor * (hi - lo) * (rng.nextDouble() - 0.5);
        }
    }
}
