package dev.weft.runtime.recording;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.BadInputException.Problem;
import dev.weft.runtime.config.WeftConfig;
import io.jhdf.HdfFile;
import io.jhdf.WritableHdfFile;
import io.jhdf.api.DatasetCreationOptions;
import java.nio.ByteBuffer;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** {@code recording.cameras} in the configuration, and cameras read with the spec it gives. */
class RecordingCamerasConfigTest {

    @TempDir
    Path dir;

    @BeforeEach
    void model() throws Exception {
        Files.writeString(dir.resolve("arm.onnx"), "the configuration reader only checks that the file exists");
    }

    /** The sections after the base's 30 lines: {@code recording:} is line 31. */
    private WeftConfig parse(String sections) throws BadInputException {
        return WeftConfig.parse(RecordingSectionsTest.BASE + sections, dir, "weft.yaml");
    }

    private List<String> problems(String sections) {
        BadInputException e = catchThrowableOfType(() -> parse(sections), BadInputException.class);
        assertThat(e).as("the configuration must be refused").isNotNull();
        return e.problems().stream().map(Problem::toString).toList();
    }

    @Test
    void camerasGiveASpecThatReadsTheirFrames() throws Exception {
        WeftConfig c = parse("""
                recording:
                  time: /time
                  observation: /obs
                  action: /act
                  cameras:
                    wrist: {frames: /cam/wrist/rgb, time: /cam/wrist/t, pixel_format: rgb8}
                    top:
                      frames: top/grey
                      time: top/t
                      pixel_format: grey8
                """);
        RecordingSpec spec = c.recordingSpec().orElseThrow();
        assertThat(spec.cameras()).containsExactly(
                new CameraSpec("wrist", "/cam/wrist/rgb", "/cam/wrist/t", PixelFormat.RGB8),
                new CameraSpec("top", "top/grey", "top/t", PixelFormat.GREY8));
        assertThat(c.recording().orElseThrow().cameras()).isEqualTo(spec.cameras());

        Path f = dir.resolve("cell.h5");
        DatasetCreationOptions unsigned = DatasetCreationOptions.builder().unsigned().build();
        try (WritableHdfFile w = HdfFile.write(f)) {
            w.putDataset("time", new double[] {0, 0.5});
            w.putDataset("obs", new double[][] {{1, 2, 3}, {4, 5, 6}});
            w.putDataset("act", new double[][] {{1, 2}, {3, 4}});
            w.putGroup("cam").putGroup("wrist").putDataset("rgb",
                    new byte[][][][] {{{{1, 2, 3}, {4, 5, 6}}}, {{{(byte) 200, 8, 9}, {10, 11, (byte) 255}}}}, unsigned);
        }
        // this file lacks the wrist's times and the top camera; the next one has them
        BadInputException missing = catchThrowableOfType(() -> Recordings.readCameras(f, spec),
                BadInputException.class);
        assertThat(missing.problems()).extracting(Problem::toString).containsExactly(
                f + " (dataset /cam/wrist/t): not found: /cam/wrist holds no \"t\"; /cam/wrist holds: rgb (dataset "
                        + "[2, 1, 2, 3] integer)",
                f + " (dataset /top/grey): not found: / holds no \"top\"; / holds: act (dataset [2, 2] float64), "
                        + "cam (group), obs (dataset [2, 3] float64), time (dataset [2] float64)",
                f + " (dataset /top/t): not found: / holds no \"top\"; / holds: act (dataset [2, 2] float64), "
                        + "cam (group), obs (dataset [2, 3] float64), time (dataset [2] float64)");

        Path g = dir.resolve("cell2.h5");
        try (WritableHdfFile w = HdfFile.write(g)) {
            w.putDataset("time", new double[] {0, 0.5});
            w.putDataset("obs", new double[][] {{1, 2, 3}, {4, 5, 6}});
            w.putDataset("act", new double[][] {{1, 2}, {3, 4}});
            var wrist = w.putGroup("cam").putGroup("wrist");
            wrist.putDataset("rgb",
                    new byte[][][][] {{{{1, 2, 3}, {4, 5, 6}}}, {{{(byte) 200, 8, 9}, {10, 11, (byte) 255}}}}, unsigned);
            wrist.putDataset("t", new double[] {0.01, 0.04});
            var top = w.putGroup("top");
            top.putDataset("grey", new byte[][][][] {{{{7}}}}, unsigned);
            top.putDataset("t", new double[] {0.2});
        }
        List<RecordedFrames> frames = Recordings.readCameras(g, spec);
        assertThat(frames).extracting(RecordedFrames::camera).containsExactly("wrist", "top");
        ByteBuffer out = ByteBuffer.allocate(6);
        frames.get(0).copyFrame(1, out, 0);
        assertThat(out.array()).containsExactly((byte) 200, 8, 9, 10, 11, (byte) 255);
        assertThat(frames.get(1).frameAtOrBefore(0.1)).isEqualTo(-1);
        assertThat(frames.get(1).frameAtOrBefore(0.2)).isEqualTo(0);
    }

    @Test
    void aCsvRecordingHasNoCameras() {
        assertThat(problems("""
                recording:
                  format: csv
                  time: t
                  observation: [q0, q1, q2]
                  action: [a0, a1]
                  cameras:
                    wrist: {frames: /cam/wrist/rgb, time: /cam/wrist/t, pixel_format: rgb8}
                """)).containsExactly(
                "recording.cameras (line 36): camera frames are read only from an HDF5 recording, and "
                        + "recording.format is csv");
    }

    @Test
    void everyWrongCameraEntryIsNamedByItsKey() {
        assertThat(problems("""
                recording:
                  time: /time
                  observation: /obs
                  action: /act
                  cameras:
                    wrist: {frames: /cam/wrist/rgb, pixel_format: rgb}
                    top: /top/grey
                    side: {frames: "", time: /side/t, pixel_format: grey8, rate: 30}
                """)).containsExactly(
                "recording.cameras.wrist.time (line 36): is required",
                "recording.cameras.wrist.pixel_format (line 36): must be one of rgb8, bgr8, grey8, got \"rgb\"",
                "recording.cameras.top (line 37): must be a map, got \"/top/grey\"",
                "recording.cameras.side.frames (line 38): must not be empty",
                "recording.cameras.side.rate (line 38): unknown key");
        assertThat(problems("""
                recording:
                  time: /time
                  observation: /obs
                  action: /act
                  cameras: {}
                """)).containsExactly(
                "recording.cameras (line 35): must name at least one camera, or be left out");
        assertThat(problems("""
                recording:
                  time: /time
                  observation: /obs
                  action: /act
                  cameras: [wrist]
                """)).containsExactly(
                "recording.cameras (line 35): must be a map, got a list");
        assertThat(problems("""
                recording:
                  time: /time
                  observation: /obs
                  action: /act
                  cameras:
                    "": {frames: /rgb, time: /t, pixel_format: rgb8}
                    wrist:
                """)).containsExactly(
                "recording.cameras[\"\"] (line 36): a camera's name must not be empty",
                "recording.cameras.wrist (line 37): has no value");
        assertThat(problems("""
                recording:
                  time: /time
                  observation: /obs
                  action: /act
                  cameras:
                """)).containsExactly("recording.cameras (line 35): has no value");
    }
}
