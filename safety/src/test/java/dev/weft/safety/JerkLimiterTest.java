package dev.weft.safety;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class JerkLimiterTest {

    private static final double DT = 1e-3;

    private static JointLimits twoJoints() {
        return JointLimits.builder()
                .joint("shoulder", -1.0, 1.0, 1.0, 5.0, 50.0)
                .joint("elbow", -2.0, 2.0, 2.0, 10.0, 200.0, 0.1)
                .build();
    }

    @Test
    void shouldRejectABadPeriodAndBoundsTooSmallToResolve() {
        assertThatThrownBy(() -> JerkLimiter.create(twoJoints(), 0))
                .hasMessage("jerk limiter: control period must be finite and > 0 s, was 0.0");
        assertThatThrownBy(() -> JerkLimiter.create(twoJoints(), Double.NaN))
                .hasMessage("jerk limiter: control period must be finite and > 0 s, was NaN");
        JointLimits tiny = JointLimits.builder().joint("wrist", -1000, 1000, 1, 1, 1e-3).build();
        assertThatThrownBy(() -> JerkLimiter.create(tiny, 1e-4))
                .hasMessageStartingWith("joint 0 'wrist': jerk bound 0.001 is too small to be resolved at control period 1.0E-4 s");
    }

    @Test
    void shouldCheckArrayLengths() {
        JerkLimiter l = JerkLimiter.create(twoJoints(), DT);
        assertThatThrownBy(() -> l.apply(new double[1], new double[2]))
                .hasMessage("jerk limiter: target must have length 2, was 1");
        assertThatThrownBy(() -> l.brake(null))
                .hasMessage("jerk limiter: command must have length 2, was null");
    }

    @Test
    void shouldRefuseResetOutsideTheRangeOrTooFastToStop() {
        JerkLimiter l = JerkLimiter.create(twoJoints(), DT);
        assertThat(l.reset(new double[] {0.2, -0.3})).isTrue();
        // elbow operating range is [-1.9, 1.9] because of its inner margin
        assertThat(l.reset(new double[] {0.0, 1.95})).isFalse();
        assertThat(l.reset(new double[] {Double.NaN, 0})).isFalse();
        // 0.99 m/s toward a bound 0.01 away cannot stop in range with amax 5, jmax 50
        assertThat(l.reset(new double[] {0.99, 0}, new double[] {0.99, 0}, new double[] {0, 0})).isFalse();
        assertThat(l.position(0)).isEqualTo(0.2);
    }

    @Test
    void nonFiniteTargetIsNeverPassedOnAndTheJointHolds() {
        JerkLimiter l = JerkLimiter.create(twoJoints(), DT);
        l.reset(new double[] {0, 0});
        double[] cmd = new double[2];
        for (int k = 0; k < 300; k++) {
            l.apply(new double[] {0.8, 0.5}, cmd);
        }
        assertThat(l.velocity(0)).isPositive();
        double[][] bad = {{Double.NaN, 0.5}, {Double.POSITIVE_INFINITY, 0.5}, {Double.NEGATIVE_INFINITY, 0.5}};
        int flags = 0;
        for (int k = 0; k < 2000; k++) {
            flags = l.apply(bad[k % 3], cmd);
            assertThat(flags & JerkLimiter.NON_FINITE_TARGET).isNotZero();
            assertThat(l.flags(0) & JerkLimiter.NON_FINITE_TARGET).isNotZero();
            assertThat(l.flags(1) & JerkLimiter.NON_FINITE_TARGET).isZero();
            assertThat(Double.isFinite(cmd[0])).isTrue();
        }
        // the joint braked to a hold short of the old target
        assertThat(l.velocity(0)).isZero();
        assertThat(l.acceleration(0)).isZero();
        assertThat(cmd[0]).isLessThan(0.8);
        double held = cmd[0];
        l.apply(bad[0], cmd);
        assertThat(cmd[0]).isEqualTo(held);
    }

    @Test
    void brakesEarlyForAPositionBoundInsteadOfClipping() {
        JointLimits limits = JointLimits.builder().joint("slide", 0.0, 1.0, 2.0, 4.0, 40.0).build();
        JerkLimiter l = JerkLimiter.create(limits, DT);
        l.reset(new double[] {0.0});
        BoundChecker checker = new BoundChecker(limits, DT);
        checker.start(new double[] {0.0}, null, null);
        double[] cmd = new double[1];
        double[] far = {1e9};
        int firstDecel = -1;
        int restTick = -1;
        double prevV = 0;
        double prevQ = 0;
        for (int k = 1; k <= 5000; k++) {
            int f = l.apply(far, cmd);
            checker.accept(k, cmd);
            assertThat(f & JerkLimiter.POSITION).as("target beyond the bound is reported").isNotZero();
            double v = (cmd[0] - prevQ) / DT;
            if (firstDecel < 0 && v < prevV - 1e-12 && prevV > 0.5) {
                firstDecel = k;
            }
            if (restTick < 0 && l.atRest()) {
                restTick = k;
            }
            prevV = v;
            prevQ = cmd[0];
        }
        assertThat(checker.violations).as(checker.firstViolation).isZero();
        assertThat(restTick).isPositive();
        // Deceleration began while the slide was still short of the bound by at least the stopping distance
        // from the peak speed (v^2 / (2 amax) is a lower bound on any jerk-limited stopping distance).
        assertThat(cmd[0]).isCloseTo(1.0, within(1e-9));
        assertThat(firstDecel).isPositive().isLessThan(restTick);
    }

    @Test
    void reportsWhichBoundShapedTheCommand() {
        JointLimits limits = JointLimits.builder().joint("x", -10, 10, 1.0, 2.0, 20.0).build();
        JerkLimiter l = JerkLimiter.create(limits, DT);
        l.reset(new double[] {0});
        double[] cmd = new double[1];
        int seen = 0;
        int first = l.apply(new double[] {5}, cmd);
        assertThat(first).isEqualTo(JerkLimiter.JERK);
        for (int k = 0; k < 3000; k++) {
            seen |= l.apply(new double[] {5}, cmd);
        }
        assertThat(seen & JerkLimiter.ACCELERATION).isNotZero();
        assertThat(seen & JerkLimiter.VELOCITY).isNotZero();
        assertThat(seen & JerkLimiter.POSITION).isZero();
        assertThat(l.apply(new double[] {11}, cmd) & JerkLimiter.POSITION).isNotZero();
        assertThat(seen & JerkLimiter.FAULT_FLAGS).isZero();
    }

    @Test
    void arrivesAtAConstantTargetWithoutOvershootFromRandomStarts() {
        SplittableRandom rng = new SplittableRandom(7);
        for (int trial = 0; trial < 200; trial++) {
            JointLimits limits = LimiterPropertyTest.randomLimits(rng, 1);
            JerkLimiter l = JerkLimiter.create(limits, DT);
            double lo = limits.operatingMin(0);
            double hi = limits.operatingMax(0);
            double start = LimiterPropertyTest.uniform(rng, lo, hi);
            double goal = LimiterPropertyTest.uniform(rng, lo, hi);
            l.reset(new double[] {start});
            double[] cmd = new double[1];
            double worst = 0;
            for (int k = 0; k < 20_000 && !(l.atRest() && k > 0 && cmd[0] == goal); k++) {
                l.apply(new double[] {goal}, cmd);
                double beyond = goal > start ? cmd[0] - goal : goal - cmd[0];
                worst = Math.max(worst, beyond);
            }
            assertThat(worst).as("overshoot in trial %d", trial).isLessThanOrEqualTo(1e-12 * Math.max(1, Math.abs(goal)));
            assertThat(cmd[0]).isCloseTo(goal, within(1e-9));
        }
    }

    @Test
    void followsARampWithoutLagOnceMatchedAndASlowSineClosely() {
        JointLimits limits = JointLimits.builder().joint("x", -10, 10, 1.0, 5.0, 50.0).build();
        JerkLimiter l = JerkLimiter.create(limits, DT);
        l.reset(new double[] {0});
        double[] cmd = new double[1];
        double[] zero = {0};
        double worstLate = 0;
        for (int k = 1; k <= 8000; k++) {
            double r = 0.4 * k * DT;
            l.apply(new double[] {r}, new double[] {0.4}, zero, cmd);
            if (k > 6000) {
                worstLate = Math.max(worstLate, Math.abs(cmd[0] - r));
            }
        }
        // the plan's own rate is fed forward: a ramp is followed exactly, not a stopping distance behind
        assertThat(worstLate).isLessThan(1e-8);
        l.reset(new double[] {0});
        double worstSine = 0;
        for (int k = 1; k <= 8000; k++) {
            double t = k * DT;
            double r = 0.5 * Math.sin(0.8 * t);
            l.apply(new double[] {r}, new double[] {0.4 * Math.cos(0.8 * t)}, new double[] {-0.32 * Math.sin(0.8 * t)}, cmd);
            if (k > 3000) {
                worstSine = Math.max(worstSine, Math.abs(cmd[0] - r));
            }
        }
        assertThat(worstSine).isLessThan(1e-6);
        System.out.printf("tracking: ramp error %.3g, sine error %.3g%n", worstLate, worstSine);
    }

    @Test
    void aPoseExactlyAtTheOperatingBoundHoldsWithoutAFlag() {
        // reset accepts a pose at the operating bound; holding there must not raise NOT_VIABLE
        JointLimits limits = twoJoints();
        double[] pose = {limits.operatingMin(0), limits.operatingMax(1)};
        JerkLimiter l = JerkLimiter.create(limits, DT);
        assertThat(l.reset(pose)).isTrue();
        double[] cmd = new double[2];
        int flags = 0;
        for (int k = 0; k < 1000; k++) {
            flags |= l.brake(cmd);
        }
        assertThat(flags).isZero();
        assertThat(cmd).containsExactly(pose);
        // a target at the bound itself: the planning range keeps a rounding slack inside the
        // bound (so POSITION may be flagged), but never a fault
        for (int k = 0; k < 1000; k++) {
            flags |= l.apply(pose, cmd);
        }
        assertThat(flags & JerkLimiter.FAULT_FLAGS).isZero();
        assertThat(cmd[0]).isCloseTo(pose[0], within(1e-12));
        assertThat(cmd[1]).isCloseTo(pose[1], within(1e-12));
        // and a plan that leaves the bound inward is followed from there
        flags = 0;
        for (int k = 1; k <= 3000; k++) {
            flags |= l.apply(new double[] {pose[0] + 0.2, pose[1] - 0.2}, cmd);
        }
        assertThat(flags & JerkLimiter.FAULT_FLAGS).isZero();
        assertThat(cmd[0]).isCloseTo(pose[0] + 0.2, within(1e-9));
    }

    @Test
    void nonFiniteVelocityOrAccelerationOfThePlanIsANonFiniteTarget() {
        JerkLimiter l = JerkLimiter.create(twoJoints(), DT);
        l.reset(new double[] {0.2, 0.1});
        double[] cmd = new double[2];
        int f = l.apply(new double[] {0.2, 0.1}, new double[] {Double.NaN, 0}, new double[] {0, Double.POSITIVE_INFINITY}, cmd);
        assertThat(f & JerkLimiter.NON_FINITE_TARGET).isNotZero();
        assertThat(l.flags(0) & JerkLimiter.NON_FINITE_TARGET).isNotZero();
        assertThat(l.flags(1) & JerkLimiter.NON_FINITE_TARGET).isNotZero();
        assertThat(cmd).containsExactly(0.2, 0.1);
    }

    @Test
    void boundCheckerCatchesAViolationThatAPlainClampWouldMake() {
        // Guard against a check that cannot fail: a position clamp of a step violates every derivative bound.
        JointLimits limits = twoJoints();
        BoundChecker checker = new BoundChecker(limits, DT);
        checker.start(new double[] {0, 0}, null, null);
        checker.accept(1, new double[] {0.5, 0});
        assertThat(checker.violations).isEqualTo(3);
        assertThat(checker.firstViolation).isEqualTo("tick 1 joint 0 velocity 500.0");
    }

    @Test
    void steadyStateTicksAllocateNothing() {
        JerkLimiter l = JerkLimiter.create(twoJoints(), DT);
        l.reset(new double[] {0, 0});
        double[] target = new double[2];
        double[] cmd = new double[2];
        SplittableRandom rng = new SplittableRandom(3);
        double[] noise = new double[4096];
        for (int i = 0; i < noise.length; i++) {
            noise[i] = rng.nextDouble() * 4 - 2;
        }
        noise[17] = Double.NaN;
        for (int k = 0; k < 50_000; k++) {
            target[0] = noise[k & 4095];
            target[1] = noise[(k * 7) & 4095];
            l.apply(target, cmd);
            l.brake(cmd);
        }
        long bytes = AllocationMeter.leastBytes(() -> {
            for (int k = 0; k < 100_000; k++) {
                target[0] = noise[k & 4095];
                target[1] = noise[(k * 7) & 4095];
                l.apply(target, cmd);
                if ((k & 15) == 0) {
                    l.brake(cmd);
                }
            }
        });
        assertThat(bytes).as("bytes allocated by 100k ticks").isZero();
    }
}
