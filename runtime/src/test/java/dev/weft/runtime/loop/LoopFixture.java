package dev.weft.runtime.loop;

import dev.weft.filters.ChunkBlender;
import dev.weft.filters.Interpolation;
import dev.weft.filters.TemporalEnsembleBlender;
import dev.weft.runtime.policy.Policy;
import dev.weft.runtime.port.CommandPort;
import dev.weft.runtime.port.SimPort;
import dev.weft.runtime.source.ObservationSource;
import dev.weft.runtime.source.SimulatedPlant;
import dev.weft.runtime.source.SimulatedSource;
import dev.weft.runtime.telemetry.CsvRecorder;
import dev.weft.runtime.telemetry.TargetFile;
import dev.weft.runtime.telemetry.TelemetryFormat;
import dev.weft.runtime.telemetry.TelemetryRow;
import dev.weft.safety.JointLimits;
import dev.weft.safety.StopCategory;
import dev.weft.safety.Supervisor;
import dev.weft.safety.TransitionLog;
import dev.weft.safety.Watchdog;
import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;

/** Builds control loops for tests: a simulated plant on virtual time unless told otherwise. */
final class LoopFixture {

    static final double PERIOD = 0.002;
    static final long PERIOD_NANOS = 2_000_000L;

    int joints = 3;
    double range = 2.0;
    long maxTicks = 0;
    int queryEvery = 0;
    LoopClock clock = new ManualClock(1_000_000_000L);
    WaitStrategy wait = WaitStrategy.virtual();
    Watchdog watchdog;
    Path telemetryFile;
    CommandPort port;
    ObservationSource source;
    SimulatedPlant plant;
    final TransitionLog transitions = new TransitionLog(1024);
    CsvRecorder<TelemetryRow> telemetry;
    Inference worker;
    /** Ticks of modelled inference latency; negative = a real worker thread. */
    long latencyTicks = 3;
    int stallPeriods = LoopSettings.DEFAULT_STALL_PERIODS;
    double planRangeSlack = 0.0;
    /** Cameras the telemetry has a frame-age column for (watch them with {@link ControlLoop#watchCameras}). */
    List<String> cameraNames = List.of();
    /** Arm by itself at the first planned tick free of watchdog conditions (deterministic, no arming thread). */
    boolean armWhenPlanned = false;

    JointLimits limits() {
        JointLimits.Builder b = JointLimits.builder();
        for (int i = 0; i < joints; i++) {
            b.joint("j" + i, -range, range, 2.0, 20.0, 400.0);
        }
        return b.build();
    }

    List<String> names() {
        List<String> n = new ArrayList<>();
        for (int i = 0; i < joints; i++) {
            n.add("j" + i);
        }
        return n;
    }

    ControlLoop build(Policy policy) throws IOException {
        return buildWithPeriod(policy, PERIOD_NANOS);
    }

    ControlLoop buildWithPeriod(Policy policy, long periodNanos) throws IOException {
        double period = periodNanos / 1e9;
        if (port == null) {
            SimPort sim = new SimPort(8.0, 0.9, false, 0.0, 1);
            plant = sim.attach(new double[joints], period);
            port = sim;
        }
        if (source == null) {
            source = new SimulatedSource(plant, clock);
        }
        if (watchdog == null) {
            watchdog = Watchdog.builder()
                    .maxObservationAgeNanos(100_000_000L)
                    .minPlanTicks(1)
                    .maxInferenceLatencyNanos(1_000_000_000L)
                    .maxConsecutiveOverruns(1000)
                    .build();
        }
        ChunkBlender blender = TemporalEnsembleBlender.oldestFirst(joints, policy.chunkLength(), 1.0,
                Interpolation.LINEAR, 0.01);
        if (latencyTicks >= 0) {
            worker = new ModelledLatencyInference(policy, latencyTicks, periodNanos);
        } else {
            InferenceWorker w = new InferenceWorker(policy, clock, 64, "test-inference");
            w.start();
            worker = w;
        }
        if (telemetryFile != null) {
            // a special file (/dev/full, a FIFO) is written straight into; a regular one as a run does
            telemetry = java.nio.file.Files.exists(telemetryFile) && !java.nio.file.Files.isRegularFile(telemetryFile)
                    ? CsvRecorder.openStraightForTests(telemetryFile, 1 << 12, CsvRecorder.DEFAULT_DRAIN_TIMEOUT_NANOS,
                            () -> new TelemetryRow(joints), new TelemetryFormat(names()), "test-telemetry")
                    : CsvRecorder.open(TargetFile.resolve(telemetryFile, true), 1 << 12,
                            CsvRecorder.DEFAULT_DRAIN_TIMEOUT_NANOS, () -> new TelemetryRow(joints, cameraNames.size()),
                            new TelemetryFormat(names(), cameraNames), "test-telemetry");
        }
        port.open(joints);
        JointLimits limits = limits();
        LoopSettings settings = new LoopSettings(periodNanos, queryEvery, LoopSettings.leadingPositions(joints), maxTicks,
                2_000_000_000L, 2_000_000_000L, armWhenPlanned, LoopSettings.DEFAULT_OBSERVATION_AHEAD_MAX_NANOS,
                planRangeSlack,
                stallPeriods);
        return new ControlLoop(clock, wait, settings, source, worker, blender, null, watchdog,
                pose -> Supervisor.builder(limits, period).maxArmingOffset(range).listener(transitions).build(pose),
                StopCategory.CATEGORY_2, port, telemetry);
    }

    /** A Java-coded policy: every action of the chunk is {@code goal}. */
    static Policy constantGoal(int joints, int steps, double goal) {
        return new Policy() {
            @Override
            public int observationSize() {
                return joints;
            }

            @Override
            public int chunkLength() {
                return steps;
            }

            @Override
            public int actionSize() {
                return joints;
            }

            @Override
            public void infer(double[] observation, long tick, double[] chunk) {
                java.util.Arrays.fill(chunk, 0, steps * joints, goal);
            }

            @Override
            public void close() {
            }
        };
    }
}
