package dev.weft.runtime.loop;

import static org.assertj.core.api.Assertions.assertThat;

import dev.weft.runtime.source.FrameRing;
import dev.weft.runtime.source.SharedFrameReader;
import dev.weft.safety.SupervisorState;
import dev.weft.safety.WatchdogCondition;
import java.nio.ByteBuffer;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * A watched camera on virtual time: its frame age is in every telemetry row, arming waits for its
 * first frame, and a camera that stops stops the robot once its latest frame is older than the
 * bound, with its own cause.
 */
class CameraWatchTest {

    private static final long MS = 1_000_000L;
    /** 30 Hz frames. */
    private static final long FRAME_NANOS = 33_333_333L;
    private static final long BOUND = 100 * MS;
    /** The fixture's manual clock starts here; telemetry times count from it. */
    private static final long RUN_START = 1_000_000_000L;

    @TempDir
    Path dir;

    @Test
    void aFrameStampedInAnotherClockDomainIsStaleNotForeverFresh() throws Exception {
        LoopFixture f = new LoopFixture();
        FrameRing ring = new FrameRing("top", 2, 4, 4, 1, SharedFrameReader.GREY8);
        ControlLoop loop = f.build(LoopFixture.constantGoal(3, 16, 0.2));
        loop.watchCameras(List.of(new ControlLoop.Camera("top", ring.reader(), BOUND)));
        loop.prepare();
        // wall-clock epoch nanoseconds: decades ahead of the loop's monotonic clock
        ring.offer(1_764_000_000_000_000_000L, ByteBuffer.allocateDirect(16), 0);
        for (int n = 0; n < 5; n++) {
            loop.runTick();
        }
        assertThat(loop.status().watchdogMask() & WatchdogCondition.FRAME_STALE.bit()).isNotZero();
        assertThat(loop.faultDetail(WatchdogCondition.FRAME_STALE.code()))
                .startsWith("camera top: the latest frame is stamped ")
                .endsWith(" ms ahead of the loop clock: the camera must stamp frames with CLOCK_MONOTONIC (System.nanoTime)");
    }

    @Test
    void aCameraThatStopsStopsTheRobotOnceItsFrameIsOlderThanTheBound() throws Exception {
        LoopFixture f = new LoopFixture();
        f.telemetryFile = dir.resolve("telemetry.csv");
        FrameRing ring = new FrameRing("wrist", 3, 12, 16, 3, SharedFrameReader.RGB8);
        ByteBuffer frame = ByteBuffer.allocateDirect(ring.frameBytes());
        f.cameraNames = List.of("wrist");
        f.armWhenPlanned = true;
        ControlLoop loop = f.build(LoopFixture.constantGoal(3, 16, 0.2));
        loop.watchCameras(List.of(new ControlLoop.Camera("wrist", ring.reader(), BOUND)));
        loop.prepare();
        ManualClock clock = (ManualClock) f.clock;
        // no frame yet: the condition is present, and the loop, which arms by itself at the first
        // planned tick free of watchdog conditions, stays disarmed (6 virtual seconds)
        for (int n = 0; n < 3_000; n++) {
            loop.runTick();
        }
        assertThat(loop.status().watchdogMask() & WatchdogCondition.FRAME_STALE.bit()).isNotZero();
        assertThat(loop.supervisor().state()).as("arming waits for the camera").isEqualTo(SupervisorState.DISARMED);
        assertThat(loop.faultDetail(WatchdogCondition.FRAME_STALE.code())).startsWith("camera wrist: no frame yet");
        // frames at 30 Hz from now on, until the camera stops after 4 s
        long stopAt = clock.nanoTime() + 4_000 * MS;
        long firstFrame = clock.nanoTime();
        long[] next = {clock.nanoTime()};
        long[] lastFrame = {-1};
        Runnable tick = () -> {
            long now = clock.nanoTime();
            if (now >= next[0] && now < stopAt) {
                ring.offer(now, frame, 0);
                lastFrame[0] = now;
                next[0] += FRAME_NANOS;
            }
            loop.runTick();
        };
        boolean sawArmed = false;
        long stoppedTick = -1;
        for (int n = 0; n < 3_500; n++) {
            tick.run();
            SupervisorState st = loop.supervisor().state();
            sawArmed |= st == SupervisorState.ARMED;
            if (stoppedTick < 0 && sawArmed && (st == SupervisorState.STOPPING || st == SupervisorState.FAULTED)) {
                stoppedTick = loop.status().ticks();
                // the stop starts at the first tick whose latest frame is older than the bound
                long age = clock.nanoTime() - lastFrame[0];
                assertThat(age).isGreaterThan(BOUND).isLessThanOrEqualTo(BOUND + 2 * LoopFixture.PERIOD_NANOS);
                assertThat(clock.nanoTime()).isGreaterThan(stopAt);
            }
        }
        assertThat(loop.autoArmResult()).as("the loop armed by itself once frames came").isZero();
        assertThat(sawArmed).as("armed while the camera's frames came; state %s, latched cause %d",
                loop.supervisor().state(), loop.supervisor().latchedCause()).isTrue();
        assertThat(stoppedTick).as("the robot was stopped; state %s, cause %d", loop.supervisor().state(),
                loop.supervisor().latchedCause()).isPositive();
        assertThat(loop.supervisor().state()).isEqualTo(SupervisorState.FAULTED);
        assertThat(loop.supervisor().latchedCause()).isEqualTo(WatchdogCondition.FRAME_STALE.code());
        assertThat(loop.faultDetail(WatchdogCondition.FRAME_STALE.code()))
                .startsWith("camera wrist: latest frame 0.10").endsWith(" s old (bound 0.100 s)");
        f.telemetry.close();
        // the telemetry's frame-age column: -1 before the first frame, then under one frame period
        // (plus a tick) while frames come, growing after the camera stopped
        List<String> rows = Files.readAllLines(f.telemetryFile);
        String[] header = rows.get(0).split(",");
        assertThat(header[header.length - 1]).isEqualTo("frame_age_ms.wrist");
        assertThat(rows.get(1)).endsWith(",-1");
        double worstWhileFlowing = 0;
        double last = 0;
        // the rows between the first frame and the camera's stop (times relative to the run's start,
        // which may be far into virtual time when the first arm request took many ticks)
        double from = (firstFrame - RUN_START) / 1e9 + 0.1;
        double to = (stopAt - RUN_START) / 1e9;
        int flowingRows = 0;
        for (String row : rows.subList(1, rows.size())) {
            String[] v = row.split(",");
            double t = Double.parseDouble(v[1]);
            double age = Double.parseDouble(v[v.length - 1]);
            if (t >= from && t < to) {
                flowingRows++;
                worstWhileFlowing = Math.max(worstWhileFlowing, age);
            }
            last = age;
        }
        assertThat(flowingRows).isGreaterThan(500);
        assertThat(worstWhileFlowing).isGreaterThan(20).isLessThanOrEqualTo(33.4 + 2);
        assertThat(last).isGreaterThan(100);
    }
}
