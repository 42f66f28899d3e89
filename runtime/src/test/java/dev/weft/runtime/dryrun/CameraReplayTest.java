package dev.weft.runtime.dryrun;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.catchThrowableOfType;
import static org.assertj.core.api.Assertions.within;

import dev.weft.onnxkit.OnnxGraph;
import dev.weft.onnxkit.OnnxGraph.Element;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.ConfiguredRun;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.loop.ManualClock;
import dev.weft.runtime.policy.OnnxPolicy;
import dev.weft.runtime.policy.PolicyInput;
import dev.weft.runtime.recording.RecordedFrames;
import dev.weft.runtime.recording.Recording;
import dev.weft.runtime.recording.Recordings;
import dev.weft.safety.WatchdogCondition;
import io.jhdf.HdfFile;
import io.jhdf.WritableHdfFile;
import io.jhdf.api.DatasetCreationOptions;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * A policy with a camera input, run on a recording's camera frames at their own times: each call
 * reads the newest frame stamped at or before its observation's time, a query waits for the
 * camera's first frame, and a camera whose frames end stops the robot on the frame-stale
 * condition once its newest frame is older than the camera's age bound.
 */
class CameraReplayTest {

    private static final double PERIOD = 0.01;
    private static final int K = 4;
    /** Camera frames: 10 Hz from 0.013 s, nine of them, then the camera stops (last at 0.813 s). */
    private static final int FRAMES = 9;
    private static final double FIRST_FRAME = 0.013;
    private static final double FRAME_PERIOD = 0.1;
    private static final double AGE_MAX = 0.15;
    /** Each action value is the observation's plus GAIN × the image tensor's mean. */
    private static final double GAIN = 0.001;

    @TempDir
    Path dir;

    private Path recordingFile;

    /** Frame i: every byte {@code 20 + 10 i}, so the frame a call read shows in its chunk. */
    private static int pixel(int i) {
        return 20 + 10 * i;
    }

    private static double frameTime(int i) {
        return FIRST_FRAME + FRAME_PERIOD * i;
    }

    @BeforeEach
    void files() throws Exception {
        // the model: actions[k][d] = state[d] + GAIN · mean(image), image [1, 3, 2, 2] float32
        OnnxGraph g = OnnxGraph.named("camera-mean");
        String image = g.input("image", Element.FLOAT, 1, 3, 2, 2);
        String state = g.input("state", Element.FLOAT, 1, 2);
        String mean = g.opWith("ReduceMean", Map.of("axes", new long[] {1, 2, 3}, "keepdims", 1L), image);
        String scaled = g.mul(g.reshape(mean, 1, 1, 1), g.floats("gain", new float[] {(float) GAIN}, 1, 1, 1));
        String spread = g.add(scaled, g.floats("zeros", new float[K], 1, K, 1));
        g.opNamed("Add", "actions", g.reshape(state, 1, 1, 2), spread);
        g.output("actions", Element.FLOAT, 1, K, 2);
        g.write(dir.resolve("camera-mean.onnx"));

        // two joints at rest, 100 Hz for 2 s; the camera's 4 × 4 rgb8 frames on a clock of their own
        int n = 201;
        double[] t = new double[n];
        double[][] q = new double[n][2];
        for (int i = 0; i < n; i++) {
            t[i] = i * PERIOD;
        }
        double[] ft = new double[FRAMES];
        byte[][][][] px = new byte[FRAMES][4][4][3];
        for (int i = 0; i < FRAMES; i++) {
            ft[i] = frameTime(i);
            for (byte[][] row : px[i]) {
                for (byte[] p : row) {
                    java.util.Arrays.fill(p, (byte) pixel(i));
                }
            }
        }
        recordingFile = dir.resolve("cell.h5");
        try (WritableHdfFile w = HdfFile.write(recordingFile)) {
            w.putDataset("time", t);
            w.putDataset("obs", q);
            w.putDataset("act", q);
            w.putGroup("cam").putDataset("frames", px, DatasetCreationOptions.builder().unsigned().build());
            w.putDataset("cam_time", ft);
        }
    }

    private static String yaml(String cameraKeys) {
        return """
                robot:
                  name: camera-check
                  joints:
                    - {name: a, position: {min: -3, max: 3}, velocity: 10, acceleration: 100, jerk: 1.0e4}
                    - {name: b, position: {min: -3, max: 3}, velocity: 10, acceleration: 100, jerk: 1.0e4}
                timing:
                  control_period: 0.01
                  policy_step: 0.02
                  query: {schedule: fixed, every_ticks: 5}
                cameras:
                  overhead: {height: 4, width: 4, pixel_format: rgb8, age_max: 0.15}
                policy:
                  model: camera-mean.onnx
                  observation_size: 2
                  inputs:
                    image: {source: camera, camera: overhead, %s}
                    state: {source: observation}
                  output: {name: actions, layout: 1xKxD}
                blending: {method: ensemble, interpolation: linear}
                watchdog:
                  observation_age_max: 0.05
                  inference_latency_max: 0.1
                  overruns_max: 5
                arming:
                  pose_distance_max: 0.5
                source: {kind: embedded}
                port: {kind: discard}
                recording:
                  format: hdf5
                  time: /time
                  observation: /obs
                  action: /act
                  cameras:
                    overhead: {frames: /cam/frames, time: /cam_time, pixel_format: rgb8}
                """.formatted(cameraKeys);
    }

    private ConfiguredRun run(String cameraKeys) throws BadInputException {
        return ConfiguredRun.of(WeftConfig.parse(yaml(cameraKeys), dir, "camera-check.yaml"));
    }

    @Test
    void eachCallReadsTheNewestFrameStampedAtOrBeforeItsObservationTime() throws Exception {
        ConfiguredRun run = run("resize: area, layout: nchw");
        WeftConfig c = run.config();
        List<RecordedFrames> frames = Recordings.readCameras(recordingFile, c.recordingSpec().orElseThrow());
        ManualClock clock = new ManualClock(5_000_000_000L);
        long start = clock.nanoTime();
        RecordedCamera camera = new RecordedCamera(frames.get(0), clock, start, 0.0);
        try (OnnxPolicy p = run.loadPolicy()) {
            assertThat(p.cameras()).containsExactly("overhead");
            double[] chunk = new double[K * 2];
            // outside a run (warm-up, latency probe) the image is black
            p.infer(new double[] {0.25, -0.5}, 0, chunk);
            assertThat(chunk[0]).isCloseTo(0.25, within(1e-7));
            PolicyInput in = PolicyInput.forPolicy(p);
            in.stamp(3, start + 30_000_000L);
            assertThatThrownBy(() -> p.infer(in, chunk)).hasMessageContaining("the run gave the policy no frames");
            p.attachFrames("overhead", camera);
            for (int i = 0; i < FRAMES; i++) {
                long at = start + Math.round(frameTime(i) * 1e9);
                // exactly at a frame's stamp it is that frame; one nanosecond before, the one before it
                in.stamp(0, at);
                p.infer(in, chunk);
                assertThat(chunk[K * 2 - 1]).as("at frame %d's stamp", i)
                        .isCloseTo(GAIN * pixel(i) / 255.0, within(1e-7));
                assertThat(p.lastFrameStamp("overhead")).isEqualTo(at);
                in.stamp(0, at - 1);
                if (i == 0) {
                    assertThatThrownBy(() -> p.infer(in, chunk))
                            .hasMessageContaining("no frame stamped at or before the observation's time");
                } else {
                    p.infer(in, chunk);
                    assertThat(chunk[0]).as("just before frame %d", i)
                            .isCloseTo(GAIN * pixel(i - 1) / 255.0, within(1e-7));
                }
            }
            // long after the camera stopped, the last frame is the newest at or before
            in.stamp(0, start + 1_900_000_000L);
            p.infer(in, chunk);
            assertThat(chunk[1]).isCloseTo(GAIN * pixel(FRAMES - 1) / 255.0, within(1e-7));
        }
    }

    @Test
    void aCameraWhoseFramesEndStopsTheRobotOnceItsNewestFrameIsTooOld() throws Exception {
        ConfiguredRun run = run("resize: area, layout: nchw");
        WeftConfig c = run.config();
        Recording rec = Recordings.read(recordingFile, c.recordingSpec().orElseThrow());
        List<RecordedFrames> frames = Recordings.readCameras(recordingFile, c.recordingSpec().orElseThrow());
        DryRun.Result r = DryRun.run(run, rec, frames, new DryRun.Options(dir.resolve("out"), "camera", false, false,
                2, GateThresholds.DEFAULTS, null));
        // armed while frames came, then one stop: the newest frame (0.813 s) older than 0.15 s
        assertThat(r.summary().stops()).hasSize(1);
        DryRunSummary.Stop stop = r.summary().stops().get(0);
        assertThat(stop.causeCode()).isEqualTo(WatchdogCondition.FRAME_STALE.code());
        double lastFrame = frameTime(FRAMES - 1);
        long firstStaleTick = (long) Math.floor((lastFrame + AGE_MAX) / PERIOD) + 1;
        assertThat(stop.tick()).isBetween(firstStaleTick, firstStaleTick + 1);
        // the plan the robot followed came from the camera: joint a's targets rose with the frames' values
        double[] target = r.trace().joints().get(0).target();
        int late = (int) Math.round(0.85 / PERIOD);
        assertThat(target[late]).isGreaterThan(GAIN * pixel(FRAMES - 3) / 255.0);
        // the report's frames: at four ticks, each the newest frame at or before its tick
        assertThat(r.trace().frames()).hasSize(4);
        for (DryRunTrace.FrameSnapshot f : r.trace().frames()) {
            int newest = -1;
            for (int i = 0; i < FRAMES; i++) {
                if (frameTime(i) <= f.tickSeconds() + 1e-9) {
                    newest = i;
                }
            }
            assertThat(newest).as("a frame before %s s", f.tickSeconds()).isNotNegative();
            assertThat(f.frameSeconds()).isCloseTo(frameTime(newest), within(1e-9));
            assertThat(f.pixels()[0] & 0xff).isEqualTo(pixel(newest));
        }
        Path html = dir.resolve("out").resolve("report.html");
        dev.weft.runtime.report.HtmlReport.write(html, "camera", List.of(
                new dev.weft.runtime.report.HtmlReport.Episode(r.summary(), r.trace())));
        assertThat(Files.readString(html)).contains("Camera frames").contains("data:image/png;base64,");
        // frame ages are in the telemetry, one column for the camera
        List<String> telemetry = Files.readAllLines(r.telemetry());
        assertThat(telemetry.get(0)).contains("frame_age_ms.overhead");
    }

    @Test
    void aCameraInputThatDoesNotFitTheModelOrTheCamerasIsRefusedNamingWhere() throws Exception {
        // NHWC against the model's [1, 3, 2, 2]: the channel axis is 2, not 3
        BadInputException layout = catchThrowableOfType(() -> run("layout: nhwc").loadPolicy(),
                BadInputException.class);
        assertThat(layout.getMessage()).contains("input 'image'").contains("has 2 channels")
                .contains("is the layout nchw?");
        BadInputException unknown = catchThrowableOfType(() -> WeftConfig.parse(
                yaml("layout: nchw").replace("camera: overhead", "camera: wrist"), dir, "c.yaml"),
                BadInputException.class);
        assertThat(unknown.getMessage()).contains("policy.inputs.image.camera").contains("no camera \"wrist\"");
        BadInputException mean = catchThrowableOfType(() -> WeftConfig.parse(
                yaml("layout: nchw, mean: [0.5, 0.5]"), dir, "c.yaml"), BadInputException.class);
        assertThat(mean.getMessage()).contains("policy.inputs.image.mean").contains("needs 3 values");
        BadInputException crop = catchThrowableOfType(() -> WeftConfig.parse(
                yaml("layout: nchw, crop: {top: 2, left: 0, height: 4, width: 4}"), dir, "c.yaml"),
                BadInputException.class);
        assertThat(crop.getMessage()).contains("policy.inputs.image.crop").contains("does not fit");
    }

    @Test
    void aLiveRunRefusesACameraWithNoSourceAndAPolicyWhoseCameraIsNotWatched() throws Exception {
        ConfiguredRun run = run("layout: nchw");
        try (OnnxPolicy p = run.loadPolicy()) {
            dev.weft.runtime.Weft.Builder b = run.builderWithoutSource(p, new dev.weft.runtime.port.NullPort());
            BadInputException noSource = catchThrowableOfType(() -> run.watchCameras(b), BadInputException.class);
            assertThat(noSource.getMessage()).startsWith("cameras.overhead: has no source");
            assertThatThrownBy(b::build).isInstanceOf(IllegalArgumentException.class)
                    .hasMessageContaining("the policy reads camera overhead, which the run does not watch");
        }
    }

    /** An empty frame file for 4 × 4 × 3 frames, two slots, laid out as docs/ports.md gives it. */
    private Path frameFile(int format) throws Exception {
        java.nio.ByteBuffer b = java.nio.ByteBuffer.allocate(64 + 2 * 128).order(java.nio.ByteOrder.LITTLE_ENDIAN);
        b.put(0, "WEFTIMG1".getBytes(java.nio.charset.StandardCharsets.ISO_8859_1));
        b.putInt(8, 1).putInt(12, 2).putInt(16, 4).putInt(20, 4).putInt(24, 3).putInt(28, format).putLong(32, 128);
        return Files.write(dir.resolve("overhead-" + format + ".frames"), b.array());
    }

    @Test
    void aLiveRunMapsTheConfiguredFrameFileAndChecksItsPixelFormat() throws Exception {
        String live = "source: {kind: shared_memory, file: overhead-%d.frames}}";
        for (int format : new int[] {0, 1}) {
            frameFile(format);
            String yaml = yaml("layout: nchw").replace("age_max: 0.15}", "age_max: 0.15, " + live.formatted(format));
            ConfiguredRun run = ConfiguredRun.of(WeftConfig.parse(yaml, dir, "live.yaml"));
            try (OnnxPolicy p = run.loadPolicy()) {
                dev.weft.runtime.Weft.Builder b = run.builderWithoutSource(p, new dev.weft.runtime.port.NullPort());
                if (format == 0) {
                    run.watchCameras(b);
                    b.build().close();
                } else {
                    BadInputException bgr = catchThrowableOfType(() -> run.watchCameras(b), BadInputException.class);
                    assertThat(bgr.getMessage()).startsWith("cameras.overhead.pixel_format: is rgb8, the frame file "
                            + dir.resolve("overhead-1.frames") + " holds bgr8 frames");
                }
            }
        }
    }

    @Test
    void anEmbeddedCameraGetsARingTheEmbeddingProgramOffersFramesInto() throws Exception {
        String yaml = yaml("layout: nchw").replace("age_max: 0.15}", "age_max: 0.15, source: {kind: embedded}}");
        ConfiguredRun run = ConfiguredRun.of(WeftConfig.parse(yaml, dir, "embedded.yaml"));
        OnnxPolicy p = run.loadPolicy();
        dev.weft.runtime.Weft.Builder b = run.builderWithoutSource(p, new dev.weft.runtime.port.NullPort());
        run.watchCameras(b);
        try (dev.weft.runtime.Weft weft = b.build()) {
            dev.weft.runtime.source.FrameRing ring = weft.frameRing("overhead");
            assertThat(ring.frameBytes()).isEqualTo(4 * 4 * 3);
            java.nio.ByteBuffer frame = java.nio.ByteBuffer.allocate(48);
            assertThat(ring.offer(1_000, frame, 0)).isTrue();
            assertThat(ring.offer(1_000, frame, 0)).as("a stamp not newer is refused").isFalse();
            assertThatThrownBy(() -> weft.frameRing("wrist")).hasMessageContaining("no embedded camera named wrist");
        }
    }

    @Test
    void aConfiguredDryRunLatencyIsModelledWhateverThisMachineMeasures() throws Exception {
        String yaml = yaml("resize: area, layout: nchw").replace("  policy_step: 0.02\n",
                "  policy_step: 0.02\n  dry_run_latency: 0.025\n");
        ConfiguredRun run = ConfiguredRun.of(WeftConfig.parse(yaml, dir, "latency.yaml"));
        WeftConfig c = run.config();
        DryRun.Result r = DryRun.run(run, Recordings.read(recordingFile, c.recordingSpec().orElseThrow()),
                Recordings.readCameras(recordingFile, c.recordingSpec().orElseThrow()),
                new DryRun.Options(dir.resolve("latency"), "latency", false, false, -1, GateThresholds.DEFAULTS, null));
        // 0.025 s at 0.01 s per tick, rounded up
        assertThat(r.summary().latencyTicks()).isEqualTo(3);
        BadInputException bad = catchThrowableOfType(() -> WeftConfig.parse(
                yaml.replace("dry_run_latency: 0.025", "dry_run_latency: 0"), dir, "c.yaml"), BadInputException.class);
        assertThat(bad.getMessage()).contains("timing.dry_run_latency").contains("must be > 0");
    }
}
