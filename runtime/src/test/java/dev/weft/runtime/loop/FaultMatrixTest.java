package dev.weft.runtime.loop;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import dev.weft.runtime.policy.Policy;
import dev.weft.runtime.port.CommandFrame;
import dev.weft.runtime.port.CommandPort;
import dev.weft.runtime.source.ObservationSource;
import dev.weft.safety.JointLimits;
import dev.weft.safety.SupervisorState;
import dev.weft.safety.Watchdog;
import dev.weft.safety.WatchdogCondition;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.CopyOnWriteArrayList;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The fault matrix, at the loop: one test per fault, each injected while the robot is armed and
 * moving (a 0.5 Hz cosine plan, up to 1.1 rad/s) and each asserting the same things:
 * the fault is detected under its own cause code, the controlled stop starts at a known tick
 * relative to the injection, every emitted command keeps the bounds (finite differences at the
 * control period), the telemetry file holds one row per tick run, the loop thread survives, and
 * the cause's detail is one line (no stack trace).
 *
 * <p>Faults seen before the tick's command goes out (observation, policy, plan, a port's
 * {@code faulted()}) stop at the injection tick itself; faults that happen while the command
 * goes out or after it (the port's {@code emit}, telemetry) are reported at the next tick, so the
 * stop starts one tick later. Rows about the telemetry file (write failures, a full disk), the UDP
 * link and the command line are in their own suites; see the table in {@code docs/safety.md}.
 *
 * <p>Most rows run on virtual time (a manual clock), where the injection tick and the stop tick
 * are exact. The rows that need a thread to be stuck (a blocking port, a stalled policy) run on
 * the wall clock at 500 Hz; their tick bounds are loose on purpose (CI machines are noisy) and
 * no duration is asserted.
 */
class FaultMatrixTest {

    static final int JOINTS = 3;
    static final int STEPS = 16;
    /** Arm at tick 10, inject 2 s (1000 ticks at 500 Hz) after arming. */
    static final long INJECT_AFTER_ARMING = 1000;

    @TempDir
    Path dir;

    // ---- the parts a fault is injected into -------------------------------------------------

    enum PolicyMode { MOVES, THROWS, HUGE, NON_FINITE, BLOCKS }

    /** Plans a smooth move per joint from the request's tick; switchable into a failure mode. */
    static final class MovingPolicy implements Policy {
        final int steps;
        volatile PolicyMode mode = PolicyMode.MOVES;
        /** The plan is at rest at 0 until this tick (set once the robot is armed). */
        volatile long moveFrom = Long.MAX_VALUE;
        final List<Long> requests = new CopyOnWriteArrayList<>();
        volatile boolean sawNonFinite;
        final CountDownLatch release = new CountDownLatch(1);

        MovingPolicy(int steps) {
            this.steps = steps;
        }

        @Override
        public int observationSize() {
            return JOINTS;
        }

        @Override
        public int chunkLength() {
            return steps;
        }

        @Override
        public int actionSize() {
            return JOINTS;
        }

        @Override
        public void infer(double[] observation, long tick, double[] chunk) {
            for (double v : observation) {
                if (!Double.isFinite(v)) {
                    sawNonFinite = true;
                }
            }
            requests.add(tick);
            switch (mode) {
                case THROWS -> throw new IllegalStateException("model crashed on purpose");
                case BLOCKS -> {
                    try {
                        release.await();
                    } catch (InterruptedException e) {
                        Thread.currentThread().interrupt();
                    }
                }
                default -> { }
            }
            for (int k = 0; k < steps; k++) {
                for (int j = 0; j < JOINTS; j++) {
                    double v = plan(tick + k - moveFrom, j);
                    chunk[k * JOINTS + j] = switch (mode) {
                        case HUGE -> 1e300;
                        case NON_FINITE -> k == steps / 2 ? Double.NaN : v;
                        default -> v;
                    };
                }
            }
        }

        @Override
        public void close() {
            release.countDown();
        }

        /**
         * At rest at 0 until the move begins, then {@code a (1 - cos(pi t))} with t in seconds from
         * there: it starts at rest, and it is moving at up to {@code pi a} (0.79 to 1.1 rad/s)
         * when the fault comes; it never leaves [0, 0.7].
         */
        static double plan(long sinceMove, int joint) {
            if (sinceMove <= 0) {
                return 0.0;
            }
            double a = 0.25 * (1 + 0.2 * joint);
            return a * (1 - Math.cos(Math.PI * sinceMove * LoopFixture.PERIOD));
        }
    }

    /** Fresh values stamped with the loop clock; can go NaN, stamp ahead, or die. */
    static final class ScriptedSource implements ObservationSource {
        final LoopClock clock;
        final double[] values = new double[JOINTS];
        volatile long aheadNanos;
        volatile boolean dead;
        volatile boolean nan;
        long lastStamp = -1;

        ScriptedSource(LoopClock clock) {
            this.clock = clock;
        }

        @Override
        public int size() {
            return JOINTS;
        }

        @Override
        public void start() {
        }

        @Override
        public long latest(double[] out) {
            System.arraycopy(values, 0, out, 0, JOINTS);
            if (nan) {
                out[1] = Double.NaN;
            }
            if (!dead || lastStamp < 0) {
                lastStamp = clock.nanoTime() + aheadNanos;
            }
            return lastStamp;
        }

        @Override
        public long accepted() {
            return 0;
        }

        @Override
        public long rejected() {
            return 0;
        }

        @Override
        public String describe() {
            return "scripted source";
        }

        @Override
        public void close() {
        }
    }

    /** Records every frame; can throw, block, report a fault, or take longer than a period. */
    static final class FaultyPort implements CommandPort {
        final List<double[]> positions = new ArrayList<>();
        final List<Long> ticks = new ArrayList<>();
        volatile long throwAt = -1;
        volatile boolean throwAlways;
        volatile long blockAt = -1;
        volatile boolean faulted;
        ManualClock slowClock;
        long slowNanos;
        final CountDownLatch unblock = new CountDownLatch(1);
        final AtomicLong stalledAt = new AtomicLong(-1);
        final AtomicLong emitCalls = new AtomicLong();

        @Override
        public void open(int joints) {
        }

        @Override
        public synchronized boolean emit(CommandFrame f) {
            emitCalls.incrementAndGet();
            // every command offered is kept for the bound check, including the ones refused
            positions.add(f.positions.clone());
            if (f.tick == throwAt || (throwAlways && throwAt >= 0 && f.tick >= throwAt)) {
                throw new IllegalStateException("driver crashed at tick " + f.tick);
            }
            if (blockAt >= 0 && f.tick >= blockAt) {
                try {
                    unblock.await();
                } catch (InterruptedException e) {
                    Thread.currentThread().interrupt();
                }
                blockAt = -1;
            }
            ticks.add(f.tick);
            if (slowClock != null) {
                slowClock.advance(slowNanos);
            }
            return true;
        }

        @Override
        public boolean faulted() {
            return faulted;
        }

        @Override
        public long emitted() {
            return ticks.size();
        }

        @Override
        public long dropped() {
            return 0;
        }

        @Override
        public String describe() {
            return "faulty port";
        }

        @Override
        public void loopStalled(long tick) {
            stalledAt.compareAndSet(-1, tick);
        }

        @Override
        public void close() {
            unblock.countDown();
        }

        synchronized List<double[]> positions() {
            return new ArrayList<>(positions);
        }
    }

    // ---- one run on virtual time ------------------------------------------------------------

    final class VirtualRun {
        final LoopFixture f = new LoopFixture();
        final MovingPolicy policy;
        final FaultyPort port = new FaultyPort();
        final ScriptedSource source;
        ControlLoop loop;
        long injectedAt = -1;

        VirtualRun(int steps) {
            policy = new MovingPolicy(steps);
            source = new ScriptedSource(f.clock);
            f.port = port;
            f.source = source;
            f.joints = JOINTS;
            f.queryEvery = 4;
            f.telemetryFile = dir.resolve("telemetry.csv");
        }

        VirtualRun start() throws Exception {
            loop = f.build(policy);
            loop.prepare();
            ticks(10);
            int[] armed = {-99};
            Thread armer = new Thread(() -> armed[0] = loop.arm(5_000_000_000L));
            armer.start();
            while (armer.isAlive()) {
                loop.runTick();
            }
            assertThat(armed[0]).as("arming").isZero();
            for (int i = 0; i < 500 && loop.supervisor().state() == SupervisorState.ARMING; i++) {
                loop.runTick();
            }
            policy.moveFrom = loop.status().ticks() + 20;
            ticks(INJECT_AFTER_ARMING);
            StringBuilder t = new StringBuilder();
            for (int i = 0; i < f.transitions.size(); i++) {
                t.append(f.transitions.tick(i)).append(' ').append(f.transitions.from(i)).append("->")
                        .append(f.transitions.to(i)).append(' ').append(f.transitions.message(i)).append('\n');
            }
            assertThat(loop.supervisor().state()).as("armed before the fault; " + t).isEqualTo(SupervisorState.ARMED);
            return this;
        }

        void ticks(long n) {
            for (long i = 0; i < n; i++) {
                loop.runTick();
            }
        }

        /** Marks the next tick as the injection tick (the fault is in place before it runs). */
        long inject() {
            injectedAt = loop.status().ticks();
            return injectedAt;
        }

        /** Runs on to a standstill and closes the telemetry; returns the checks' findings. */
        Findings finish(long ticksAfter) throws Exception {
            ticks(ticksAfter);
            f.telemetry.close();
            return new Findings(this);
        }
    }

    /** What every row asserts, gathered from one run. */
    static final class Findings {
        final ControlLoop loop;
        final LoopFixture f;
        final long injectedAt;
        final List<double[]> emitted;
        final long ticksRun;

        Findings(VirtualRun r) {
            this.loop = r.loop;
            this.f = r.f;
            this.injectedAt = r.injectedAt;
            this.emitted = r.port.positions();
            this.ticksRun = r.loop.status().ticks();
        }

        /** The tick of the first transition out of ARMED at or after the injection. */
        long stopTick() {
            for (int i = 0; i < f.transitions.size(); i++) {
                if (f.transitions.tick(i) >= injectedAt && f.transitions.from(i) == SupervisorState.ARMED) {
                    return f.transitions.tick(i);
                }
            }
            return -1;
        }

        int stopCause() {
            for (int i = 0; i < f.transitions.size(); i++) {
                if (f.transitions.tick(i) >= injectedAt && f.transitions.from(i) == SupervisorState.ARMED) {
                    return f.transitions.cause(i);
                }
            }
            return -1;
        }

        void assertContained(WatchdogCondition expected, long stopOffsetMin, long stopOffsetMax) throws Exception {
            int code = expected.code();
            assertThat(stopCause()).as("the stop's cause: " + dev.weft.safety.Cause.message(stopCause()))
                    .isEqualTo(code);
            assertThat(loop.supervisor().latchedCause()).as("latched").isEqualTo(code);
            assertThat(loop.supervisor().state()).isEqualTo(SupervisorState.FAULTED);
            assertThat(stopTick() - injectedAt).as("stop tick relative to the injection")
                    .isBetween(stopOffsetMin, stopOffsetMax);
            String detail = loop.faultDetail(code);
            if (detail != null) {
                assertThat(detail).as("one line, no stack trace").doesNotContain("\n").doesNotContain("\tat ");
            }
            assertThat(loop.failure()).as("the loop thread's failure").isNull();
            assertBoundsHeld(f.limits(), emitted);
            // the robot ended at rest: the last commands do not move
            double[] a = emitted.get(emitted.size() - 2);
            double[] b = emitted.get(emitted.size() - 1);
            assertThat(b).containsExactly(a);
            assertThat(Files.readAllLines(f.telemetryFile)).as("one telemetry row per tick")
                    .hasSize((int) ticksRun + 1);
        }
    }

    /**
     * Backward finite differences at the control period, the definition the limits are stated in
     * (common practice for sampled command streams): v = Δq/dt, a = Δv/dt, j = Δa/dt, from rest.
     */
    static void assertBoundsHeld(JointLimits limits, List<double[]> q) {
        double dt = LoopFixture.PERIOD;
        double tol = 1e-9;
        double[] q1 = q.get(0).clone();
        double[] v1 = new double[JOINTS];
        double[] a1 = new double[JOINTS];
        for (int n = 1; n < q.size(); n++) {
            double[] p = q.get(n);
            for (int j = 0; j < JOINTS; j++) {
                assertThat(Double.isFinite(p[j])).as("finite command, frame %d joint %d", n, j).isTrue();
                double v = (p[j] - q1[j]) / dt;
                double a = (v - v1[j]) / dt;
                double jk = (a - a1[j]) / dt;
                assertThat(p[j]).as("position, frame %d joint %d", n, j)
                        .isBetween(limits.operatingMin(j), limits.operatingMax(j));
                assertThat(Math.abs(v)).as("velocity, frame %d joint %d", n, j)
                        .isLessThanOrEqualTo(limits.velocity(j) * (1 + tol));
                assertThat(Math.abs(a)).as("acceleration, frame %d joint %d", n, j)
                        .isLessThanOrEqualTo(limits.acceleration(j) * (1 + tol));
                assertThat(Math.abs(jk)).as("jerk, frame %d joint %d", n, j)
                        .isLessThanOrEqualTo(limits.jerk(j) * (1 + tol));
                q1[j] = p[j];
                v1[j] = v;
                a1[j] = a;
            }
        }
    }

    // ---- rows found failing before, now contained -------------------------------------------

    @Test
    void aPortWhoseEmitThrowsStopsAtTheNextTickAndCommandsKeepGoingOut() throws Exception {
        VirtualRun r = new VirtualRun(STEPS).start();
        r.port.throwAt = r.inject();
        Findings x = r.finish(1500);
        x.assertContained(WatchdogCondition.PORT_EXCEPTION, 1, 1);
        // every tick offered the port a command, and it took all but the one it threw on
        assertThat(x.emitted).hasSize((int) x.ticksRun);
        assertThat(r.port.emitted()).isEqualTo(x.ticksRun - 1);
        assertThat(x.loop.faultDetail(WatchdogCondition.PORT_EXCEPTION.code()))
                .contains("IllegalStateException").contains("driver crashed at tick " + r.injectedAt);
    }

    @Test
    void aPortWhoseEmitThrowsOnEveryTickStillEndsInALatchedStopAndEveryTickIsRecorded() throws Exception {
        VirtualRun r = new VirtualRun(STEPS).start();
        r.port.throwAlways = true;
        r.port.throwAt = r.inject();
        r.ticks(1500);
        r.f.telemetry.close();
        Findings x = new Findings(r);
        assertThat(x.stopCause()).isEqualTo(WatchdogCondition.PORT_EXCEPTION.code());
        assertThat(x.stopTick() - r.injectedAt).isEqualTo(1);
        assertThat(x.loop.supervisor().state()).isIn(SupervisorState.STOPPING, SupervisorState.FAULTED);
        assertThat(x.loop.failure()).isNull();
        assertThat(x.loop.tickFaults()).isEqualTo(1500);
        assertThat(r.port.emitCalls.get()).as("the loop kept offering commands").isEqualTo(x.ticksRun);
        assertThat(Files.readAllLines(r.f.telemetryFile)).hasSize((int) x.ticksRun + 1);
        assertBoundsHeld(r.f.limits(), x.emitted);
    }

    @Test
    void aPlanFarOutsideTheJointRangeIsAPolicyFaultNotAClampedPlan() throws Exception {
        VirtualRun r = new VirtualRun(STEPS).start();
        r.policy.mode = PolicyMode.HUGE;
        r.inject();
        Findings x = r.finish(1500);
        // the next query (every 4 ticks) plus 3 ticks of modelled latency, then the chunk is
        // refused on arrival, before the blender sees it
        x.assertContained(WatchdogCondition.PLAN_OUT_OF_RANGE, 3, 4 + 3);
        assertThat(x.loop.faultDetail(WatchdogCondition.PLAN_OUT_OF_RANGE.code())).contains("1.0E300");
        assertThat(x.loop.rejectedChunks()).isGreaterThan(0);
        // the stop did not drive toward the bound (2.0): no command left the plan's own span [0, 0.7]
        for (double[] p : x.emitted) {
            for (double v : p) {
                assertThat(v).isBetween(-1e-9, 0.7 + 1e-9);
            }
        }
    }

    @Test
    void anObservationStampedAnHourAheadThenFrozenIsAFaultAtThatTick() throws Exception {
        VirtualRun r = new VirtualRun(STEPS).start();
        r.source.aheadNanos = TimeUnit.HOURS.toNanos(1);
        r.source.lastStamp = -1;
        r.source.dead = true;
        r.inject();
        Findings x = r.finish(1500);
        x.assertContained(WatchdogCondition.OBSERVATION_AHEAD, 0, 0);
        assertThat(x.loop.faultDetail(WatchdogCondition.OBSERVATION_AHEAD.code()))
                .contains("ahead of the loop clock").contains("3600000.000 ms");
    }

    @Test
    void aNonFiniteObservationIsAFaultAtTheTickItIsReadAndNoPolicySeesIt() throws Exception {
        VirtualRun r = new VirtualRun(STEPS).start();
        r.source.nan = true;
        r.inject();
        Findings x = r.finish(1500);
        x.assertContained(WatchdogCondition.NON_FINITE_OBSERVATION, 0, 0);
        assertThat(r.policy.sawNonFinite).as("a policy saw the NaN").isFalse();
        assertThat(x.loop.faultDetail(WatchdogCondition.NON_FINITE_OBSERVATION.code()))
                .contains("observation value 1 is NaN");
    }

    @Test
    void aPolicyThatThrowsIsReportedAsAPolicyExceptionWithItsClassAndMessage() throws Exception {
        VirtualRun r = new VirtualRun(STEPS).start();
        r.policy.mode = PolicyMode.THROWS;
        r.inject();
        Findings x = r.finish(1500);
        // the failure is known when the request's modelled latency has passed
        x.assertContained(WatchdogCondition.POLICY_FAILED, 3, 4 + 3);
        assertThat(x.loop.faultDetail(WatchdogCondition.POLICY_FAILED.code()))
                .contains("IllegalStateException").contains("model crashed on purpose");
    }

    @Test
    void aPortSlowerThanThePeriodSkipsDeadlinesButNeverLosesADueQuery() throws Exception {
        VirtualRun r = new VirtualRun(STEPS).start();
        // from here every emit takes 3.5 periods: the loop skips to the latest deadline each tick
        // (0, 3, 6, 9, ...), so a query due every 4 ticks falls on a skipped tick 3 times in 4
        int before = r.policy.requests.size();
        r.port.slowClock = (ManualClock) r.f.clock;
        r.port.slowNanos = 7 * LoopFixture.PERIOD_NANOS / 2;
        r.inject();
        r.ticks(400);
        List<Long> asked = r.policy.requests.subList(before, r.policy.requests.size());
        assertThat(asked.size()).as("queries asked in 400 slow ticks").isGreaterThan(150);
        for (int i = 1; i < asked.size(); i++) {
            // never more than the query interval plus one skipped step apart
            assertThat(asked.get(i) - asked.get(i - 1)).as("gap before query %d", i).isLessThanOrEqualTo(4 + 3);
        }
        r.f.telemetry.close();
    }

    // ---- rows that passed before, kept under the same checks --------------------------------

    @Test
    void aPolicyPlanWithANaNIsANonFiniteOutputFault() throws Exception {
        VirtualRun r = new VirtualRun(STEPS).start();
        r.policy.mode = PolicyMode.NON_FINITE;
        r.inject();
        Findings x = r.finish(1500);
        x.assertContained(WatchdogCondition.NON_FINITE_OUTPUT, 3, 4 + 3);
    }

    @Test
    void aSourceThatStopsUpdatingGoesStaleAfterItsBound() throws Exception {
        VirtualRun r = new VirtualRun(STEPS);
        r.f.watchdog = Watchdog.builder().maxObservationAgeNanos(20_000_000L).minPlanTicks(1)
                .maxInferenceLatencyNanos(1_000_000_000L).maxConsecutiveOverruns(1000).build();
        r.start();
        r.source.lastStamp = -1;
        r.source.dead = true;
        r.inject();
        Findings x = r.finish(1500);
        // stamped at the injection tick's start, older than 20 ms (10 periods) from the 11th tick on
        x.assertContained(WatchdogCondition.STALE_OBSERVATION, 10, 11);
    }

    @Test
    void aPortReportingAFaultStopsAtTheTickItSaysSo() throws Exception {
        VirtualRun r = new VirtualRun(STEPS).start();
        r.port.faulted = true;
        r.inject();
        Findings x = r.finish(1500);
        x.assertContained(WatchdogCondition.PORT_FAULT, 0, 0);
    }

    // ---- rows that need a stuck thread: the wall clock at 500 Hz ----------------------------

    /** A wall-clock loop at 500 Hz on its own thread. */
    final class WallRun {
        final LoopFixture f = new LoopFixture();
        final MovingPolicy policy;
        final FaultyPort port = new FaultyPort();
        final List<Integer> alarms = new CopyOnWriteArrayList<>();
        ControlLoop loop;

        WallRun(int steps, Watchdog watchdog, int stallPeriods) throws Exception {
            policy = new MovingPolicy(steps);
            f.clock = LoopClock.system();
            f.wait = WaitStrategy.parkThenSpin(200_000);
            f.latencyTicks = -1;
            f.port = port;
            f.source = new ScriptedSource(f.clock);
            f.queryEvery = 4;
            f.watchdog = watchdog;
            f.stallPeriods = stallPeriods;
            loop = f.build(policy);
            loop.alarmListener((tick, time, from, to, cause) -> alarms.add(cause));
            loop.start("fault-matrix-loop");
        }

        void armAndRun(long ticksAfterArming) throws Exception {
            int result = -99;
            long until = System.nanoTime() + TimeUnit.SECONDS.toNanos(10);
            while (System.nanoTime() < until) {
                result = loop.arm(5_000_000_000L);
                if (result != ControlLoop.ARM_REFUSED_NO_PLAN) {
                    break;
                }
                Thread.sleep(10);
            }
            assertThat(result).as(dev.weft.safety.Cause.message(result)).isZero();
            while (loop.supervisor().state() == SupervisorState.ARMING && System.nanoTime() < until) {
                Thread.sleep(5);
            }
            long armedAt = loop.status().ticks();
            policy.moveFrom = armedAt + 20;
            while (loop.status().ticks() < armedAt + ticksAfterArming) {
                Thread.sleep(5);
            }
            assertThat(loop.supervisor().state()).as("armed before the fault; latched: "
                    + dev.weft.safety.Cause.message(loop.supervisor().latchedCause())).isEqualTo(SupervisorState.ARMED);
        }
    }

    @Test
    @Timeout(60)
    void aPortThatBlocksForeverRaisesTheLoopStalledAlarmAndCloseSaysTheThreadIsStuck() throws Exception {
        // a busy CI machine can hold a thread off the CPU for tens of milliseconds; 100 periods
        // (200 ms) keeps the alarm to the injected fault, the default of 3 is for a robot computer
        WallRun w = new WallRun(STEPS, Watchdog.builder().maxObservationAgeNanos(500_000_000L).minPlanTicks(1)
                .maxInferenceLatencyNanos(1_000_000_000L).maxConsecutiveOverruns(100_000).build(), 100);
        w.armAndRun(200);
        long injected = w.loop.status().ticks();
        w.port.blockAt = injected;
        long until = System.nanoTime() + TimeUnit.SECONDS.toNanos(20);
        // the monitor sets the state, calls the port's hook, then tells the listener
        while (w.alarms.isEmpty() && System.nanoTime() < until) {
            Thread.sleep(2);
        }
        assertThat(w.loop.state()).as("state while the port blocks").isEqualTo(SupervisorState.STALLED);
        assertThat(w.loop.stalls()).isEqualTo(1);
        assertThat(w.alarms).containsExactly(WatchdogCondition.LOOP_STALLED.code());
        assertThat(w.port.stalledAt.get()).as("the port's hook heard of it").isGreaterThanOrEqualTo(injected);
        String detail = w.loop.faultDetail(WatchdogCondition.LOOP_STALLED.code());
        assertThat(detail).contains("has been at work for").contains("FaultyPort.emit").doesNotContain("\n");
        // close() does not pretend: the thread is stuck in the port, and it says where
        assertThatThrownBy(w.loop::close).isInstanceOf(IllegalStateException.class)
                .hasMessageContaining("did not end").hasMessageContaining("FaultyPort.emit");
        // once the port lets go, the loop's next tick latches the stall and stops the robot
        w.port.unblock.countDown();
        assertThat(w.loop.awaitEnd(TimeUnit.SECONDS.toNanos(20))).as("the loop ends after the port lets go").isTrue();
        assertThat(w.loop.supervisor().latchedCause()).isEqualTo(WatchdogCondition.LOOP_STALLED.code());
        assertThat(w.loop.failure()).isNull();
        assertBoundsHeld(w.f.limits(), w.port.positions());
    }

    @Test
    @Timeout(60)
    void aPolicyThatNeverAnswersIsLateInferenceWithinItsBound() throws Exception {
        // a 256-step chunk (512 ms) outlasts the 150 ms latency bound, so lateness is seen before
        // the plan runs out; 150 ms also keeps a busy CI machine from tripping it before the fault
        WallRun w = new WallRun(256, Watchdog.builder().maxObservationAgeNanos(500_000_000L).minPlanTicks(1)
                .maxInferenceLatencyNanos(150_000_000L).maxConsecutiveOverruns(100_000).build(), 100);
        w.armAndRun(200);
        long injected = w.loop.status().ticks();
        w.policy.mode = PolicyMode.BLOCKS;
        long until = System.nanoTime() + TimeUnit.SECONDS.toNanos(20);
        while (w.loop.supervisor().latchedCause() == 0 && System.nanoTime() < until) {
            Thread.sleep(5);
        }
        w.loop.close();
        w.policy.release.countDown();
        assertThat(w.loop.supervisor().latchedCause()).isEqualTo(WatchdogCondition.INFERENCE_LATE.code());
        long stop = -1;
        for (int i = 0; i < w.f.transitions.size(); i++) {
            if (w.f.transitions.from(i) == SupervisorState.ARMED) {
                stop = w.f.transitions.tick(i);
                break;
            }
        }
        // 75 periods of latency after the first request that blocked: one asked up to a query
        // interval before the switch may be the one the worker takes after it, and one asked after
        // it comes at most a query interval later; the upper bound is loose for a noisy machine
        assertThat(stop - injected).isBetween(75L - 4 - 1, 75L + 4 + 200);
        assertThat(w.loop.failure()).isNull();
        assertBoundsHeld(w.f.limits(), w.port.positions());
    }
}
