package dev.weft.safety;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import org.junit.jupiter.api.Test;

class SupervisorTest {

    private static final double DT = 1e-3;
    private static final long NS = 1_000_000L;

    private static JointLimits limits() {
        return JointLimits.builder()
                .joint("shoulder", -2.0, 2.0, 1.0, 5.0, 50.0)
                .joint("elbow", -2.0, 2.0, 1.5, 8.0, 80.0, 0.05)
                .build();
    }

    /** A moving plan inside the range, reachable under the full limits. */
    private static void plan(long tick, double[] out) {
        double t = tick * DT;
        out[0] = 0.3 + 0.2 * Math.sin(0.5 * t);
        out[1] = -0.2 + 0.3 * Math.sin(0.3 * t);
    }

    /** The plan's velocity and acceleration, analytic. */
    private static void planRates(long tick, double[] velocity, double[] acceleration) {
        double t = tick * DT;
        velocity[0] = 0.2 * 0.5 * Math.cos(0.5 * t);
        velocity[1] = 0.3 * 0.3 * Math.cos(0.3 * t);
        acceleration[0] = -0.2 * 0.25 * Math.sin(0.5 * t);
        acceleration[1] = -0.3 * 0.09 * Math.sin(0.3 * t);
    }

    private static final class Rig {
        final TransitionLog log = new TransitionLog(64);
        final Supervisor sup;
        final BoundChecker checker;
        final double[] target = new double[2];
        final double[] velocity = new double[2];
        final double[] acceleration = new double[2];
        final double[] cmd = new double[2];
        long tick;

        Rig(StopCategory category, double[] pose) {
            sup = Supervisor.builder(limits(), DT).listener(log).stopCategory(category)
                    .maxArmingOffset(0.5).armingTolerance(1e-4).build(pose);
            checker = new BoundChecker(limits(), DT);
            checker.start(pose, null, null);
        }

        SupervisorState step(int watchdogCode) {
            tick++;
            plan(tick, target);
            planRates(tick, velocity, acceleration);
            SupervisorState s = sup.step(tick, tick * NS, target, velocity, acceleration, watchdogCode, cmd);
            checker.accept(tick, cmd);
            return s;
        }

        void armAndRunUntilArmed(double[] pose) {
            double[] first = new double[2];
            plan(tick + 1, first);
            assertThat(sup.arm(tick, tick * NS, pose, first)).isZero();
            for (int k = 0; k < 20_000 && sup.state() != SupervisorState.ARMED; k++) {
                step(0);
            }
            assertThat(sup.state()).isEqualTo(SupervisorState.ARMED);
        }
    }

    @Test
    void shouldHoldWhileDisarmedAndValidateTheInitialPose() {
        assertThatThrownBy(() -> Supervisor.builder(limits(), DT).build(new double[] {0, 1.98}))
                .hasMessage("supervisor: initial pose of joint 1 'elbow' is 1.98, outside the operating range [-1.95, 1.95]");
        Rig r = new Rig(StopCategory.CATEGORY_2, new double[] {0.1, 0.2});
        for (int k = 0; k < 100; k++) {
            assertThat(r.step(0)).isEqualTo(SupervisorState.DISARMED);
            assertThat(r.cmd).containsExactly(0.1, 0.2);
        }
    }

    @Test
    void armingIsRefusedWhenThePlanIsTooFarFromTheMeasuredPose() {
        Rig r = new Rig(StopCategory.CATEGORY_2, new double[] {0, 0});
        int code = r.sup.arm(5, 5 * NS, new double[] {0, 0}, new double[] {0.1, 0.6});
        assertThat(code).isEqualTo(Cause.ARM_REFUSED_OFFSET);
        assertThat(r.sup.refusedJoint()).isEqualTo(1);
        assertThat(Cause.message(code)).isEqualTo("arming refused: first planned action is too far from the measured pose");
        assertThat(r.sup.state()).isEqualTo(SupervisorState.DISARMED);
        assertThat(r.sup.arm(5, 5 * NS, new double[] {Double.NaN, 0}, new double[] {0, 0}))
                .isEqualTo(Cause.ARM_REFUSED_POSE);
        assertThat(r.sup.refusedJoint()).isZero();
        assertThat(r.sup.arm(5, 5 * NS, new double[] {0, 0}, new double[] {0, Double.POSITIVE_INFINITY}))
                .isEqualTo(Cause.ARM_REFUSED_PLAN);
        r.step(WatchdogCondition.STALE_OBSERVATION.code());
        assertThat(r.sup.arm(6, 6 * NS, new double[] {0, 0}, new double[] {0, 0})).isEqualTo(Cause.ARM_REFUSED_CONDITION);
        assertThat(r.log.size()).isEqualTo(4);
        assertThat(r.log.from(0)).isEqualTo(SupervisorState.DISARMED);
        assertThat(r.log.to(0)).isEqualTo(SupervisorState.DISARMED);
        assertThat(r.log.tick(0)).isEqualTo(5);
    }

    @Test
    void softStartRampsFromTheMeasuredPoseUnderScaledLimitsThenFollowsThePlan() {
        double[] pose = {0.0, 0.1};
        Rig r = new Rig(StopCategory.CATEGORY_2, pose);
        double[] first = new double[2];
        plan(1, first);
        assertThat(r.sup.arm(0, 0, pose, first)).isZero();
        assertThat(r.log.to(0)).isEqualTo(SupervisorState.ARMING);
        assertThat(r.log.cause(0)).isEqualTo(Cause.ARM_REQUEST);
        double prevQ = pose[0];
        double worstSpeed = 0;
        while (r.step(0) == SupervisorState.ARMING) {
            worstSpeed = Math.max(worstSpeed, Math.abs(r.cmd[0] - prevQ) / DT);
            prevQ = r.cmd[0];
        }
        assertThat(r.sup.state()).isEqualTo(SupervisorState.ARMED);
        assertThat(r.log.cause(1)).isEqualTo(Cause.ARMING_COMPLETE);
        // soft start keeps a quarter of the shoulder's velocity bound (1.0)
        assertThat(worstSpeed).isGreaterThan(0.2).isLessThanOrEqualTo(0.25 * (1 + BoundChecker.RELATIVE_TOLERANCE));
        for (int k = 0; k < 5000; k++) {
            r.step(0);
        }
        plan(r.tick, r.target);
        assertThat(r.cmd[0]).isCloseTo(r.target[0], org.assertj.core.api.Assertions.within(1e-3));
        assertThat(r.checker.violations).as(r.checker.firstViolation).isZero();
    }

    @Test
    void aFaultSeenAtTickNStartsTheStopAtTickNAndLatches() {
        double[] pose = {0.3, -0.2};
        Rig r = new Rig(StopCategory.CATEGORY_2, pose);
        r.armAndRunUntilArmed(pose);
        for (int k = 0; k < 2000; k++) {
            r.step(0);
        }
        // Twin limiter with the same history: its brake step is what tick n must emit.
        double v0 = r.sup.commandVelocity(0);
        double a0 = r.sup.commandAcceleration(0);
        double v1 = r.sup.commandVelocity(1);
        double a1 = r.sup.commandAcceleration(1);
        assertThat(Math.abs(v0) + Math.abs(v1)).isPositive();
        long n = r.tick + 1;
        int before = r.log.size();
        assertThat(r.step(WatchdogCondition.PLAN_STARVED.code())).isIn(SupervisorState.STOPPING, SupervisorState.FAULTED);
        assertThat(r.log.tick(before)).isEqualTo(n);
        assertThat(r.log.timeNanos(before)).isEqualTo(n * NS);
        assertThat(r.log.from(before)).isEqualTo(SupervisorState.ARMED);
        assertThat(r.log.to(before)).isEqualTo(SupervisorState.STOPPING);
        assertThat(r.log.cause(before)).isEqualTo(WatchdogCondition.PLAN_STARVED.code());
        assertThat(r.log.message(before)).isEqualTo("no plan left ahead of the current tick");
        // the stop from tick n, against the analytic minimum stopping time plus two ticks
        double bound = Math.max(StopTimes.minimum(v0, a0, 5.0, 50.0), StopTimes.minimum(v1, a1, 8.0, 80.0)) + 2 * DT;
        long stopTicks = 1;
        while (r.sup.state() == SupervisorState.STOPPING) {
            r.step(0);
            stopTicks++;
        }
        assertThat(stopTicks * DT).isLessThanOrEqualTo(bound);
        assertThat(r.sup.state()).isEqualTo(SupervisorState.FAULTED);
        assertThat(r.log.cause(r.log.size() - 1)).isEqualTo(Cause.STANDSTILL);
        assertThat(r.sup.latchedCause()).isEqualTo(WatchdogCondition.PLAN_STARVED.code());
        assertThat(r.sup.powerRemovalRequested()).isFalse();
        // latched: healthy ticks do not leave FAULTED, and the command is held
        double[] held = r.cmd.clone();
        for (int k = 0; k < 500; k++) {
            assertThat(r.step(0)).isEqualTo(SupervisorState.FAULTED);
            assertThat(r.cmd).containsExactly(held);
        }
        assertThat(r.checker.violations).as(r.checker.firstViolation).isZero();
    }

    @Test
    void faultsAtRandomTicksStopAtThatTickAndWithinTheMinimumStoppingTime() {
        java.util.SplittableRandom rng = new java.util.SplittableRandom(21);
        for (int trial = 0; trial < 100; trial++) {
            double[] pose = {0.3, -0.2};
            Rig r = new Rig(StopCategory.CATEGORY_2, pose);
            r.armAndRunUntilArmed(pose);
            double f0 = 0.5 + 4 * rng.nextDouble();
            double f1 = 0.5 + 4 * rng.nextDouble();
            int faultAfter = 1 + rng.nextInt(3000);
            for (int k = 0; k < faultAfter; k++) {
                r.tick++;
                double t = r.tick * DT;
                r.target[0] = 0.9 * Math.sin(f0 * t);
                r.target[1] = 1.2 * Math.sin(f1 * t + 1);
                r.sup.step(r.tick, r.tick * NS, r.target, 0, r.cmd);
                r.checker.accept(r.tick, r.cmd);
            }
            double tmin = Math.max(StopTimes.minimum(r.sup.commandVelocity(0), r.sup.commandAcceleration(0), 5.0, 50.0),
                    StopTimes.minimum(r.sup.commandVelocity(1), r.sup.commandAcceleration(1), 8.0, 80.0));
            int code = 1 + rng.nextInt(8);
            int before = r.log.size();
            long n = r.tick + 1;
            r.step(code);
            assertThat(r.log.tick(before)).isEqualTo(n);
            assertThat(r.log.cause(before)).isEqualTo(code);
            long ticks = 1;
            while (r.sup.state() == SupervisorState.STOPPING) {
                r.step(0);
                ticks++;
            }
            assertThat(r.sup.state()).isEqualTo(SupervisorState.FAULTED);
            assertThat(ticks * DT).as("trial %d", trial).isLessThanOrEqualTo(tmin + 2 * DT);
            assertThat(r.checker.violations).as(r.checker.firstViolation).isZero();
        }
    }

    @Test
    void resetOnlyWhenFaultedAndTheConditionHasCleared() {
        double[] pose = {0.3, -0.2};
        Rig r = new Rig(StopCategory.CATEGORY_2, pose);
        assertThat(r.sup.reset(1, NS)).isEqualTo(Cause.RESET_REFUSED_STATE);
        r.armAndRunUntilArmed(pose);
        while (r.step(WatchdogCondition.PORT_FAULT.code()) != SupervisorState.FAULTED) {
            assertThat(r.sup.state()).isEqualTo(SupervisorState.STOPPING);
        }
        assertThat(r.sup.reset(r.tick, r.tick * NS)).isEqualTo(Cause.RESET_REFUSED_CONDITION);
        assertThat(r.sup.state()).isEqualTo(SupervisorState.FAULTED);
        r.step(0);
        assertThat(r.sup.reset(r.tick, r.tick * NS)).isZero();
        assertThat(r.sup.state()).isEqualTo(SupervisorState.DISARMED);
        assertThat(r.log.cause(r.log.size() - 1)).isEqualTo(Cause.RESET);
        assertThat(r.sup.latchedCause()).isZero();
    }

    @Test
    void nonFiniteTargetStopsInTheSameTick() {
        double[] pose = {0.3, -0.2};
        Rig r = new Rig(StopCategory.CATEGORY_2, pose);
        r.armAndRunUntilArmed(pose);
        r.step(0);
        long n = r.tick + 1;
        r.tick = n;
        double[] bad = {Double.NaN, 0.0};
        int before = r.log.size();
        r.sup.step(n, n * NS, bad, 0, r.cmd);
        r.checker.accept(n, r.cmd);
        assertThat(r.cmd[0]).isFinite();
        assertThat(r.log.tick(before)).isEqualTo(n);
        assertThat(r.log.cause(before)).isEqualTo(Cause.NON_FINITE_TARGET);
        assertThat(r.sup.state()).isIn(SupervisorState.STOPPING, SupervisorState.FAULTED);
        while (r.sup.state() == SupervisorState.STOPPING) {
            r.step(0);
        }
        assertThat(r.sup.state()).isEqualTo(SupervisorState.FAULTED);
        assertThat(r.checker.violations).as(r.checker.firstViolation).isZero();
    }

    @Test
    void categoryOneAsksForPowerRemovalAtStandstillAndDisarmIsNotAFault() {
        double[] pose = {0.3, -0.2};
        Rig r = new Rig(StopCategory.CATEGORY_1, pose);
        r.armAndRunUntilArmed(pose);
        r.sup.requestDisarm();
        while (r.step(0) != SupervisorState.DISARMED) {
            assertThat(r.sup.state()).isEqualTo(SupervisorState.STOPPING);
            assertThat(r.sup.powerRemovalRequested()).isFalse();
        }
        assertThat(r.sup.powerRemovalRequested()).isTrue();
        assertThat(r.sup.latchedCause()).isZero();
        int last = r.log.size() - 1;
        assertThat(r.log.cause(last - 1)).isEqualTo(Cause.DISARM_REQUEST);
        assertThat(r.log.to(last)).isEqualTo(SupervisorState.DISARMED);
        assertThat(r.checker.violations).as(r.checker.firstViolation).isZero();
    }

    @Test
    void aFaultDuringADisarmStopLatches() {
        double[] pose = {0.3, -0.2};
        Rig r = new Rig(StopCategory.CATEGORY_2, pose);
        r.armAndRunUntilArmed(pose);
        for (int k = 0; k < 1500; k++) {
            r.step(0);
        }
        r.sup.requestDisarm();
        r.step(0);
        assertThat(r.sup.state()).isEqualTo(SupervisorState.STOPPING);
        r.step(WatchdogCondition.OPERATOR_STOP.code());
        while (r.sup.state() == SupervisorState.STOPPING) {
            r.step(0);
        }
        assertThat(r.sup.state()).isEqualTo(SupervisorState.FAULTED);
        assertThat(r.sup.latchedCause()).isEqualTo(WatchdogCondition.OPERATOR_STOP.code());
    }

    @Test
    void aStopDuringTheSoftStartUsesTheSameLimits() {
        double[] pose = {0.0, 0.1};
        Rig r = new Rig(StopCategory.CATEGORY_2, pose);
        double[] first = new double[2];
        plan(1, first);
        assertThat(r.sup.arm(0, 0, pose, first)).isZero();
        for (int k = 0; k < 800; k++) {
            assertThat(r.step(0)).isEqualTo(SupervisorState.ARMING);
        }
        assertThat(r.step(WatchdogCondition.INFERENCE_LATE.code())).isEqualTo(SupervisorState.STOPPING);
        while (r.sup.state() == SupervisorState.STOPPING) {
            r.step(0);
        }
        assertThat(r.sup.state()).isEqualTo(SupervisorState.FAULTED);
        assertThat(r.checker.violations).as(r.checker.firstViolation).isZero();
    }

    @Test
    void theSoftStartBeginsAtTheHeldPoseSoTheCommandsStayWithinBoundsAcrossArming() {
        // held at the initial pose; the sensors read a little off it (noise, a settled offset)
        double[] held = {0.0, 0.1};
        Rig r = new Rig(StopCategory.CATEGORY_2, held);
        for (int k = 0; k < 10; k++) {
            r.step(0);
        }
        double[] measured = {0.06, 0.04};
        double[] first = new double[2];
        plan(r.tick + 1, first);
        assertThat(r.sup.arm(r.tick, r.tick * NS, measured, first)).isZero();
        r.step(0);
        // the first command of the soft start is one bounded step from the held pose, not a jump
        // to the measured one (6 cm in one 1 ms tick would be 60 m/s)
        assertThat(Math.abs(r.cmd[0] - held[0])).isLessThan(1e-6);
        while (r.sup.state() == SupervisorState.ARMING) {
            r.step(0);
        }
        assertThat(r.sup.state()).isEqualTo(SupervisorState.ARMED);
        assertThat(r.checker.violations).as(r.checker.firstViolation).isZero();
    }

    @Test
    void armingIsRefusedWhenTheMeasuredPoseIsFarFromTheHeldPose() {
        Rig r = new Rig(StopCategory.CATEGORY_2, new double[] {0, 0});
        r.step(0);
        // the rig allows 0.5 between measured pose and plan, and so between measured and held pose
        assertThat(r.sup.arm(1, NS, new double[] {0.0, 0.6}, new double[] {0.0, 0.6}))
                .isEqualTo(Cause.ARM_REFUSED_DRIFT);
        assertThat(r.sup.refusedJoint()).isEqualTo(1);
        assertThat(Cause.message(Cause.ARM_REFUSED_DRIFT))
                .isEqualTo("arming refused: the measured pose is too far from the held pose");
        assertThat(r.sup.state()).isEqualTo(SupervisorState.DISARMED);
    }

    @Test
    void aRampArmsOntoAPlanMovingFasterThanTheSoftLimitsAllow() {
        double[] pose = {0.0, 0.0};
        TransitionLog log = new TransitionLog(16);
        Supervisor sup = Supervisor.builder(limits(), DT).listener(log).maxArmingOffset(0.5)
                .armingRampTicks(1000).armingTimeoutTicks(5000).build(pose);
        BoundChecker checker = new BoundChecker(limits(), DT);
        checker.start(pose, null, null);
        double[] target = new double[2];
        double[] cmd = new double[2];
        // the plan sweeps the shoulder at 0.3 rad/s, above the soft start's 0.25 rad/s
        double[] velocity = {0.3, 0.0};
        double[] acceleration = new double[2];
        java.util.function.LongConsumer plan = k -> {
            target[0] = 0.1 + 0.3 * k * DT;
            target[1] = 0.05;
        };
        plan.accept(0);
        assertThat(sup.arm(0, 0, pose, target)).isZero();
        long k = 0;
        while (sup.state() == SupervisorState.ARMING && k < 5000) {
            plan.accept(++k);
            sup.step(k, k * NS, target, velocity, acceleration, 0, cmd);
            checker.accept(k, cmd);
        }
        assertThat(sup.state()).isEqualTo(SupervisorState.ARMED);
        // the ramp ends at tick 1000 behind the plan (the soft start's 0.25 rad/s cannot keep up with
        // 0.3 rad/s); the full-limit limiter then closes the gap, and hands over on the plan
        assertThat(k).as("hand-over after the one-second ramp and the catch-up").isBetween(1000L, 3000L);
        assertThat(Math.abs(cmd[0] - target[0])).as("on the plan at the hand-over").isLessThanOrEqualTo(1e-2);
        assertThat(log.cause(1)).isEqualTo(Cause.ARMING_COMPLETE);
        for (int n = 0; n < 2000; n++) {
            plan.accept(++k);
            sup.step(k, k * NS, target, velocity, acceleration, 0, cmd);
            checker.accept(k, cmd);
        }
        assertThat(cmd[0]).as("following the plan under the full limits").isCloseTo(target[0], org.assertj.core.api.Assertions.within(1e-4));
        assertThat(checker.violations).as(checker.firstViolation).isZero();
    }

    @Test
    void armingTimesOutIntoAFault() {
        double[] pose = {0.3, -0.2};
        TransitionLog log = new TransitionLog(8);
        Supervisor sup = Supervisor.builder(limits(), DT).listener(log).armingTimeoutTicks(50).maxArmingOffset(0.35).build(pose);
        assertThat(sup.arm(0, 0, pose, new double[] {0.4, -0.2})).isZero();
        double[] cmd = new double[2];
        long k = 0;
        while (sup.state() == SupervisorState.ARMING) {
            sup.step(++k, k, new double[] {0.4, -0.2}, 0, cmd);
        }
        assertThat(k).isEqualTo(50);
        assertThat(log.cause(1)).isEqualTo(Cause.ARMING_TIMEOUT);
        assertThat(sup.latchedCause()).isEqualTo(Cause.ARMING_TIMEOUT);
    }

    @Test
    void theArmingTimeoutSeenAtTickNMakesTickNTheFirstStopCommand() {
        double[] pose = {0.3, -0.2};
        JointLimits limits = limits();
        TransitionLog log = new TransitionLog(8);
        Supervisor sup = Supervisor.builder(limits, DT).listener(log).armingTimeoutTicks(50).maxArmingOffset(0.35).build(pose);
        assertThat(sup.arm(0, 0, pose, new double[] {0.4, -0.2})).isZero();
        double[] cmd = new double[2];
        double[] before = new double[6];
        for (long k = 1; k <= 49; k++) {
            assertThat(sup.step(k, k, new double[] {0.4, -0.2}, 0, cmd)).isEqualTo(SupervisorState.ARMING);
        }
        for (int i = 0; i < 2; i++) {
            before[3 * i] = cmd[i];
            before[3 * i + 1] = sup.commandVelocity(i);
            before[3 * i + 2] = sup.commandAcceleration(i);
        }
        // the twin: the full-limit limiter braking from the soft start's state after tick 49
        JerkLimiter twin = JerkLimiter.create(limits, DT);
        assertThat(twin.reset(new double[] {before[0], before[3]}, new double[] {before[1], before[4]},
                new double[] {before[2], before[5]})).isTrue();
        double[] expected = new double[2];
        twin.brake(expected);
        assertThat(sup.step(50, 50, new double[] {0.4, -0.2}, 0, cmd)).isIn(SupervisorState.STOPPING, SupervisorState.FAULTED);
        assertThat(log.tick(1)).isEqualTo(50);
        assertThat(log.cause(1)).isEqualTo(Cause.ARMING_TIMEOUT);
        assertThat(cmd).containsExactly(expected);
    }

    @Test
    void tickPathAllocatesNothing() {
        double[] pose = {0.3, -0.2};
        Rig[] rigs = new Rig[3];
        for (int i = 0; i < rigs.length; i++) {
            rigs[i] = new Rig(StopCategory.CATEGORY_2, pose);
            rigs[i].armAndRunUntilArmed(pose);
            for (int k = 0; k < 20_000; k++) {
                rigs[i].step(k == 10_000 ? 1 : 0);
            }
            rigs[i].sup.step(rigs[i].tick, 0, rigs[i].target, 0, rigs[i].cmd);
            rigs[i].sup.reset(rigs[i].tick, 0);
            rigs[i].armAndRunUntilArmed(rigs[i].cmd.clone());
        }
        double[] target = new double[2];
        double[] cmd = new double[2];
        int[] round = {0};
        // armed ticks, then a fault, the whole stop, and latched hold ticks: one rig per round
        long bytes = AllocationMeter.leastBytes(() -> {
            Supervisor sup = rigs[round[0]++].sup;
            for (long k = 100_000; k < 110_000; k++) {
                plan(k, target);
                sup.step(k, k, target, k == 105_000 ? 5 : 0, cmd);
            }
        });
        assertThat(bytes).isZero();
        for (Rig r : rigs) {
            assertThat(r.sup.state()).isEqualTo(SupervisorState.FAULTED);
        }
    }

    @Test
    void transitionLogKeepsTheNewestEntries() {
        TransitionLog log = new TransitionLog(2);
        log.onTransition(1, 10, SupervisorState.DISARMED, SupervisorState.ARMING, Cause.ARM_REQUEST);
        log.onTransition(2, 20, SupervisorState.ARMING, SupervisorState.ARMED, Cause.ARMING_COMPLETE);
        log.onTransition(3, 30, SupervisorState.ARMED, SupervisorState.STOPPING, 4);
        assertThat(log.size()).isEqualTo(2);
        assertThat(log.written()).isEqualTo(3);
        assertThat(log.tick(0)).isEqualTo(2);
        assertThat(log.message(1)).isEqualTo("observation is older than its bound");
        assertThatThrownBy(() -> log.tick(2)).isInstanceOf(IndexOutOfBoundsException.class);
    }
}
