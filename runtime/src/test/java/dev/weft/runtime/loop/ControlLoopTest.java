package dev.weft.runtime.loop;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.weft.runtime.policy.Policy;
import dev.weft.runtime.port.CommandFrame;
import dev.weft.runtime.port.CommandPort;
import dev.weft.safety.Cause;
import dev.weft.safety.SupervisorState;
import dev.weft.safety.WatchdogCondition;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class ControlLoopTest {

    @TempDir
    Path dir;

    /** Records every frame it gets; optionally advances the manual clock or throws at a tick. */
    static final class RecordingPort implements CommandPort {
        final List<double[]> positions = new ArrayList<>();
        final List<Long> ticks = new ArrayList<>();
        final List<Byte> states = new ArrayList<>();
        ManualClock clock;
        long stallAtTick = -1;
        long stallNanos;
        long throwAtTick = -1;

        @Override
        public void open(int joints) {
        }

        @Override
        public boolean emit(CommandFrame f) {
            if (f.tick == throwAtTick) {
                throw new IllegalStateException("driver crashed at tick " + f.tick);
            }
            positions.add(f.positions.clone());
            ticks.add(f.tick);
            states.add(f.state);
            if (f.tick == stallAtTick) {
                clock.advance(stallNanos);
            }
            return true;
        }

        @Override
        public boolean faulted() {
            return false;
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
            return "recording";
        }

        @Override
        public void close() {
        }
    }

    private static void runTicks(ControlLoop loop, int n) {
        for (int i = 0; i < n; i++) {
            loop.runTick();
        }
    }

    @Test
    void disarmedHoldsThenArmsAndTracksThePlanWithinLimits() throws Exception {
        LoopFixture f = new LoopFixture();
        ControlLoop loop = f.build(LoopFixture.constantGoal(3, 16, 0.5));
        loop.prepare();
        runTicks(loop, 50);
        assertThat(loop.supervisor().state()).isEqualTo(SupervisorState.DISARMED);
        assertThat(f.plant.position(0)).isCloseTo(0.0, within(1e-12));
        // arm from the loop thread's point of view: the command is carried out at the next tick
        Thread armer = new Thread(() -> loop.arm(5_000_000_000L));
        armer.start();
        while (armer.isAlive()) {
            loop.runTick();
        }
        runTicks(loop, 3000);
        assertThat(loop.supervisor().state()).isEqualTo(SupervisorState.ARMED);
        for (int j = 0; j < 3; j++) {
            assertThat(f.plant.position(j)).isCloseTo(0.5, within(1e-3));
        }
        assertThat(f.transitions.size()).isGreaterThanOrEqualTo(2);
        assertThat(f.transitions.cause(0)).isEqualTo(Cause.ARM_REQUEST);
    }

    @Test
    void aPolicyThatThrowsStopsTheRobotAndLatchesAFault() throws Exception {
        LoopFixture f = new LoopFixture();
        f.port = new RecordingPort();
        f.source = new FixedSource(new double[3], f.clock);
        Policy good = LoopFixture.constantGoal(3, 16, 0.2);
        long[] calls = {0};
        boolean[] broken = {false};
        Policy flaky = new Policy() {
            public int observationSize() { return 3; }
            public int chunkLength() { return 16; }
            public int actionSize() { return 3; }
            public void infer(double[] o, long t, double[] c) {
                calls[0]++;
                if (broken[0]) {
                    throw new IllegalStateException("model crashed");
                }
                good.infer(o, t, c);
            }
            public void close() { }
        };
        ControlLoop loop = f.build(flaky);
        loop.prepare();
        runTicks(loop, 10);
        int[] armed = {-99};
        Thread armer = new Thread(() -> armed[0] = loop.arm(5_000_000_000L));
        armer.start();
        while (armer.isAlive()) {
            loop.runTick();
        }
        assertThat(armed[0]).as(Cause.message(armed[0])).isZero();
        runTicks(loop, 500);
        assertThat(loop.supervisor().state()).isEqualTo(SupervisorState.ARMED);
        long before = calls[0];
        broken[0] = true;
        runTicks(loop, 2000);
        assertThat(loop.supervisor().state()).isEqualTo(SupervisorState.FAULTED);
        // its own cause, with the exception's class and message, not "non-finite output"
        assertThat(loop.supervisor().latchedCause()).isEqualTo(WatchdogCondition.POLICY_FAILED.code());
        assertThat(loop.faultDetail(WatchdogCondition.POLICY_FAILED.code()))
                .contains("IllegalStateException").contains("model crashed");
        assertThat(loop.status().inferenceFailures()).isGreaterThan(0);
        // the failure did not kill the inference path: requests kept being served
        assertThat(calls[0]).isGreaterThan(before + 100);
    }

    @Test
    void aPlanThatRunsOutStopsTheRobotEvenWithStarvationSwitchedOff() throws Exception {
        LoopFixture f = new LoopFixture();
        f.port = new RecordingPort();
        f.source = new FixedSource(new double[3], f.clock);
        f.queryEvery = 200;   // one chunk of 16 ticks every 200 ticks: the plan runs out in between
        f.watchdog = dev.weft.safety.Watchdog.builder()
                .maxInferenceLatencyNanos(1_000_000_000L).maxConsecutiveOverruns(1000)
                .disable(WatchdogCondition.PLAN_STARVED, "test: the supervisor must stop on its own")
                .disable(WatchdogCondition.PLAN_LOW, "test: the supervisor must stop on its own")
                .build();
        ControlLoop loop = f.build(LoopFixture.constantGoal(3, 16, 0.0));
        loop.prepare();
        runTicks(loop, 5);
        int[] armed = {Cause.ARM_REFUSED_NO_PLAN};
        // the plan covers only 16 of every 200 ticks: ask while a fresh chunk still has most of its
        // ticks ahead, so the request lands inside it however the threads are scheduled
        for (int attempt = 0; attempt < 50 && armed[0] == Cause.ARM_REFUSED_NO_PLAN; attempt++) {
            for (int k = 0; k < 400 && loop.status().planTicks() < 12; k++) {
                loop.runTick();
            }
            Thread armer = new Thread(() -> armed[0] = loop.arm(5_000_000_000L));
            armer.start();
            while (armer.isAlive()) {
                loop.runTick();
            }
        }
        assertThat(armed[0]).as(Cause.message(armed[0])).isZero();
        runTicks(loop, 400);
        assertThat(loop.supervisor().state()).isEqualTo(SupervisorState.FAULTED);
        assertThat(loop.supervisor().latchedCause()).isEqualTo(Cause.NON_FINITE_TARGET);
    }

    @Test
    void aStalledTickIsAnOverrunAndMissedDeadlinesAreSkippedNotCaughtUp() throws Exception {
        LoopFixture f = new LoopFixture();
        RecordingPort port = new RecordingPort();
        port.clock = (ManualClock) f.clock;
        port.stallAtTick = 10;
        port.stallNanos = 5 * LoopFixture.PERIOD_NANOS + LoopFixture.PERIOD_NANOS / 2;
        f.port = port;
        f.source = new FixedSource(new double[3], f.clock);
        ControlLoop loop = f.build(LoopFixture.constantGoal(3, 16, 0.0));
        loop.prepare();
        runTicks(loop, 20);
        // tick 10 ended 5.5 periods late: ticks 11 to 14 were skipped, tick 15 ran next
        assertThat(port.ticks.subList(9, 13)).containsExactly(9L, 10L, 15L, 16L);
        assertThat(loop.status().overruns()).isEqualTo(1);
        assertThat(loop.status().skipped()).isEqualTo(4);
        assertThat(port.ticks).hasSize(20);
    }

    @Test
    void aPortThatThrowsIsContainedAtTheTickAndEveryTickStillReachesTheTelemetryFile() throws Exception {
        LoopFixture f = new LoopFixture();
        RecordingPort port = new RecordingPort();
        port.throwAtTick = 777;
        f.port = port;
        f.maxTicks = 1500;
        f.source = new FixedSource(new double[3], f.clock);
        f.telemetryFile = dir.resolve("telemetry.csv");
        ControlLoop loop = f.build(LoopFixture.constantGoal(3, 16, 0.0));
        loop.start("test-loop");
        assertThat(loop.awaitEnd(30_000_000_000L)).isTrue();
        // the loop did not die: it ran to its bound, and the exception became a cause of its own
        assertThat(loop.failure()).isNull();
        assertThat(loop.status().ticks()).isEqualTo(1500);
        assertThat(loop.tickFaults()).isEqualTo(1);
        assertThat(loop.faultDetail(WatchdogCondition.PORT_EXCEPTION.code()))
                .isEqualTo("port.emit: java.lang.IllegalStateException: driver crashed at tick 777");
        f.telemetry.close();
        List<String> lines = Files.readAllLines(f.telemetryFile);
        assertThat(lines.get(0)).startsWith("tick,time_s,period_error_us,compute_us,state,watchdog,limiter,plan_ticks");
        assertThat(lines).hasSize(1 + 1500);
        String[] row777 = lines.get(1 + 777).split(",");
        String[] row778 = lines.get(1 + 778).split(",");
        assertThat(row777[0]).isEqualTo("777");
        assertThat(row777[9]).as("emitted at the throwing tick").isEqualTo("0");
        assertThat(row778[9]).as("emitted at the next tick").isEqualTo("1");
        // the emit fault is seen after tick 777's command went out, so tick 778's watchdog reports it
        int bit = WatchdogCondition.PORT_EXCEPTION.bit();
        assertThat(Integer.parseInt(row777[5]) & bit).isZero();
        assertThat(Integer.parseInt(row778[5]) & bit).isEqualTo(bit);
        assertThat(Integer.parseInt(lines.get(1 + 779).split(",")[5]) & bit).as("cleared once emit works again").isZero();
    }

    @Test
    void boundedRunWritesExactlyOneRowPerTick() throws Exception {
        LoopFixture f = new LoopFixture();
        f.maxTicks = 5000;
        f.telemetryFile = dir.resolve("t.csv");
        ControlLoop loop = f.build(LoopFixture.constantGoal(3, 16, 0.1));
        loop.start("test-loop");
        assertThat(loop.awaitEnd(30_000_000_000L)).isTrue();
        assertThat(loop.failure()).isNull();
        f.telemetry.close();
        assertThat(Files.readAllLines(f.telemetryFile)).hasSize(5001);
        assertThat(f.telemetry.lost()).isZero();
    }
}
