package dev.weft.runtime.recording;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import dev.weft.runtime.BadInputException;
import io.jhdf.HdfFile;
import io.jhdf.WritableHdfFile;
import io.jhdf.api.DatasetCreationOptions;
import io.jhdf.api.WritableGroup;
import io.jhdf.object.datatype.FixedPoint;
import java.io.File;
import java.lang.management.ManagementFactory;
import java.nio.ByteBuffer;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Optional;
import java.util.function.Consumer;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Camera streams in HDF5 recordings, on files written here by jhdf (see {@link Hdf5RecordingTest}
 * for why no other writer is used). jhdf 0.13.0 writes unsigned 8-bit integers when a dataset is
 * created with {@code DatasetCreationOptions.builder().unsigned()}; each test file is checked to
 * hold that type before it is read, so the reader is tested on the type a camera recording stores.
 */
class RecordedFramesTest {

    /** Unsigned integer storage: with byte data, the uint8 camera recorders write. */
    private static final DatasetCreationOptions UNSIGNED = DatasetCreationOptions.builder().unsigned().build();

    private static final int H = 48;
    private static final int W = 64;

    @TempDir
    Path dir;

    private Path h5(String name, Consumer<WritableHdfFile> content) {
        Path p = dir.resolve(name);
        try (WritableHdfFile w = HdfFile.write(p)) {
            content.accept(w);
        }
        return p;
    }

    /** The byte of frame {@code i} at row {@code y}, column {@code x}, channel {@code c}: every value 0..255 occurs. */
    private static byte pixel(int i, int y, int x, int c) {
        return (byte) (i * 37 + y * 5 + x * 3 + c * 101);
    }

    private static byte[][][][] frames(int n, int h, int w, int channels) {
        byte[][][][] f = new byte[n][h][w][channels];
        for (int i = 0; i < n; i++) {
            for (int y = 0; y < h; y++) {
                for (int x = 0; x < w; x++) {
                    for (int c = 0; c < channels; c++) {
                        f[i][y][x][c] = pixel(i, y, x, c);
                    }
                }
            }
        }
        return f;
    }

    /** Frame times of a 30 Hz camera that starts 10 ms after the joint state: 0.010 + i / 30 s. */
    private static double[] cameraTimes(int n) {
        double[] t = new double[n];
        for (int i = 0; i < n; i++) {
            t[i] = 0.010 + i / 30.0;
        }
        return t;
    }

    /** Joint state at 100 Hz for 1 s (100 samples), a 30 Hz rgb8 camera (30 frames 48 × 64 × 3), a grey8 camera. */
    private Path withCameras() {
        return h5("cell.h5", w -> {
            double[] t = new double[100];
            double[][] q = new double[100][2];
            double[] a0 = new double[100];
            double[] a1 = new double[100];
            for (int i = 0; i < 100; i++) {
                t[i] = i / 100.0;
                q[i][0] = 0.01 * i;
                q[i][1] = -0.01 * i;
                a0[i] = 0.02 * i;
                a1[i] = -0.02 * i;
            }
            w.putDataset("time", t);
            w.putGroup("obs").putDataset("state", q);
            WritableGroup act = w.putGroup("act");
            act.putDataset("shoulder", a0);
            act.putDataset("elbow", a1);
            WritableGroup wrist = w.putGroup("cam").putGroup("wrist");
            wrist.putDataset("rgb", frames(30, H, W, 3), UNSIGNED);
            wrist.putDataset("t", cameraTimes(30));
            // a second camera at 10 Hz, chunked and compressed as recorders often store images, in chunks that do
            // not divide the shape (edge chunks are partly outside it)
            WritableGroup top = w.putGroup("top");
            top.putDataset("grey", frames(10, 12, 20, 1),
                    DatasetCreationOptions.builder().unsigned().chunkDimensions(3, 5, 7, 1).deflate().build());
            top.putDataset("t", new float[] {0, 0.1f, 0.2f, 0.3f, 0.4f, 0.5f, 0.6f, 0.7f, 0.8f, 0.9f});
        });
    }

    private static RecordingSpec spec(List<CameraSpec> cameras) {
        return new RecordingSpec(Optional.empty(), "/time", Columns.matrix("/obs/state"),
                Columns.list(List.of("/act/shoulder", "act/elbow")), 2, Specs.JOINTS, cameras);
    }

    private static final CameraSpec WRIST = new CameraSpec("wrist", "/cam/wrist/rgb", "/cam/wrist/t", PixelFormat.RGB8);
    private static final CameraSpec TOP = new CameraSpec("top", "top/grey", "top/t", PixelFormat.GREY8);

    private List<String> problems(Path file, RecordingSpec spec, long frameBytesMax) {
        BadInputException e = catchThrowableOfType(() -> Recordings.readCameras(file, spec, frameBytesMax),
                BadInputException.class);
        assertThat(e).as("reading the cameras of %s must fail", file).isNotNull();
        String prefix = dir + File.separator;
        return e.problems().stream().map(x -> x.toString().replace(prefix, "")).toList();
    }

    @Test
    void theTestFilesHoldUnsigned8BitFrames() throws Exception {
        try (HdfFile h = new HdfFile(withCameras())) {
            for (String path : List.of("/cam/wrist/rgb", "/top/grey")) {
                FixedPoint type = (FixedPoint) h.getDatasetByPath(path).getDataType();
                assertThat(type.isSigned()).as(path).isFalse();
                assertThat(type.getBitPrecision()).as(path).isEqualTo((short) 8);
            }
        }
    }

    @Test
    void everyFrameOfA30HzCameraBesideA100HzJointStateReadsByteExact() throws Exception {
        Path f = withCameras();
        RecordingSpec spec = spec(List.of(WRIST, TOP));
        Recording joints = Recordings.read(f, spec);
        assertThat(joints.length()).isEqualTo(100);
        List<RecordedFrames> cameras = Recordings.readCameras(f, spec);
        assertThat(cameras).hasSize(2);

        RecordedFrames wrist = cameras.get(0);
        assertThat(wrist.camera()).isEqualTo("wrist");
        assertThat(wrist.source()).isEqualTo(f + " (dataset /cam/wrist/rgb)");
        assertThat(wrist.pixelFormat()).isEqualTo(PixelFormat.RGB8);
        assertThat(wrist.frameCount()).isEqualTo(30);
        assertThat(wrist.height()).isEqualTo(48);
        assertThat(wrist.width()).isEqualTo(64);
        assertThat(wrist.channels()).isEqualTo(3);
        assertThat(wrist.frameBytes()).isEqualTo(48 * 64 * 3);
        double[] t = cameraTimes(30);
        ByteBuffer out = ByteBuffer.allocateDirect(7 + wrist.frameBytes() + 5);
        for (int i = 0; i < 30; i++) {
            assertThat(wrist.time(i)).isEqualTo(t[i]);
            // a marker before and after the frame shows the copy stays inside its bytes
            out.put(6, (byte) 0x5a).put(7 + wrist.frameBytes(), (byte) 0xa5);
            wrist.copyFrame(i, out, 7);
            assertThat(out.position()).isZero();
            assertThat(out.get(6)).isEqualTo((byte) 0x5a);
            assertThat(out.get(7 + wrist.frameBytes())).isEqualTo((byte) 0xa5);
            for (int y = 0; y < H; y++) {
                for (int x = 0; x < W; x++) {
                    for (int c = 0; c < 3; c++) {
                        int at = 7 + (y * W + x) * 3 + c;
                        if (out.get(at) != pixel(i, y, x, c)) {
                            throw new AssertionError("frame " + i + " row " + y + " column " + x + " channel " + c
                                    + ": read " + (out.get(at) & 0xff) + ", wrote " + (pixel(i, y, x, c) & 0xff));
                        }
                    }
                }
            }
        }
        // values above 127 come through as the unsigned bytes written: frame 1, pixel (0, 1), channel 1 is
        // 37 + 3 + 101 = 141
        wrist.copyFrame(1, out, 0);
        assertThat(out.get(3 + 1) & 0xff).isEqualTo(141);

        RecordedFrames top = cameras.get(1);
        assertThat(top.pixelFormat()).isEqualTo(PixelFormat.GREY8);
        assertThat(top.frameCount()).isEqualTo(10);
        assertThat(top.channels()).isEqualTo(1);
        assertThat(top.time(3)).isEqualTo((double) 0.3f);
        ByteBuffer heap = ByteBuffer.allocate(12 * 20);
        for (int i = 0; i < 10; i++) {
            top.copyFrame(i, heap, 0);
            for (int y = 0; y < 12; y++) {
                for (int x = 0; x < 20; x++) {
                    assertThat(heap.get(y * 20 + x)).isEqualTo(pixel(i, y, x, 0));
                }
            }
        }
    }

    @Test
    void theLatestFrameAtOrBeforeATimeIsFoundOnTheCamerasOwnClock() throws Exception {
        Path f = withCameras();
        RecordingSpec spec = spec(List.of(WRIST));
        RecordedFrames wrist = Recordings.readCameras(f, spec).get(0);
        Recording joints = Recordings.read(f, spec);
        // by hand: frame i is at 0.010 + i/30 s, so frame 1 at 0.04333…, frame 14 at 0.47667, frame 15 at 0.51
        assertThat(wrist.frameAtOrBefore(0.0)).isEqualTo(-1);
        assertThat(wrist.frameAtOrBefore(0.0099)).isEqualTo(-1);
        assertThat(wrist.frameAtOrBefore(Double.NaN)).isEqualTo(-1);
        assertThat(wrist.frameAtOrBefore(0.010)).isEqualTo(0);
        assertThat(wrist.frameAtOrBefore(0.043)).isEqualTo(0);
        assertThat(wrist.frameAtOrBefore(0.010 + 1 / 30.0)).isEqualTo(1);
        assertThat(wrist.frameAtOrBefore(0.5)).isEqualTo(14);
        assertThat(wrist.frameAtOrBefore(0.51)).isEqualTo(15);
        assertThat(wrist.frameAtOrBefore(0.976)).isEqualTo(28);
        assertThat(wrist.frameAtOrBefore(0.99)).isEqualTo(29);
        assertThat(wrist.frameAtOrBefore(1e9)).isEqualTo(29);
        // the joint state keeps its own 100 Hz clock: at 0.5 s it is sample 50, the camera frame 14
        assertThat(joints.sampleAtOrBefore(0.5)).isEqualTo(50);
        assertThat(joints.sampleAtOrBefore(0.043)).isEqualTo(4);
    }

    /**
     * The lookup against NumPy's {@code searchsorted(times, t, side="right") - 1} (the index of the
     * last time {@code <= t}, -1 before the first; NumPy's documented meaning of side="right"), on a
     * camera with jittered times and on queries at, between, before and after the frames.
     */
    @Test
    void theLatestFrameAtOrBeforeMatchesNumpySearchsorted() throws Exception {
        int n = 90;
        double[] t = new double[n];
        for (int i = 0; i < n; i++) {
            t[i] = 0.25 + i / 30.0 + 0.004 * Math.sin(7.0 * i);
        }
        Path f = h5("jitter.h5", w -> {
            w.putDataset("rgb", frames(n, 2, 2, 3), UNSIGNED);
            w.putDataset("t", t);
        });
        RecordedFrames cam = Recordings.readCameras(f,
                spec(List.of(new CameraSpec("wrist", "rgb", "t", PixelFormat.RGB8))), Hdf5FrameReader.FRAME_BYTES_MAX)
                .get(0);
        java.util.Random random = new java.util.Random(12);
        double[] q = new double[1000];
        for (int k = 0; k < q.length; k++) {
            q[k] = switch (k % 4) {
                case 0 -> t[random.nextInt(n)];
                case 1 -> Math.nextDown(t[random.nextInt(n)]);
                default -> random.nextDouble() * 3.6;
            };
        }
        StringBuilder in = new StringBuilder();
        for (double v : t) {
            in.append(v).append(' ');
        }
        in.append('\n');
        for (double v : q) {
            in.append(v).append(' ');
        }
        in.append('\n');
        String script = "import sys, numpy as np\n"
                + "t = np.array([float(x) for x in sys.stdin.readline().split()])\n"
                + "q = np.array([float(x) for x in sys.stdin.readline().split()])\n"
                + "print(' '.join(str(int(i)) for i in np.searchsorted(t, q, side='right') - 1))\n";
        Process p = new ProcessBuilder(dev.weft.runtime.Python3.withNumpy(), "-c", script).start();
        p.getOutputStream().write(in.toString().getBytes(java.nio.charset.StandardCharsets.US_ASCII));
        p.getOutputStream().close();
        String answer = new String(p.getInputStream().readAllBytes(), java.nio.charset.StandardCharsets.US_ASCII);
        String errors = new String(p.getErrorStream().readAllBytes(), java.nio.charset.StandardCharsets.UTF_8);
        assertThat(p.waitFor()).as("python3 with NumPy: %s", errors).isZero();
        String[] expected = answer.trim().split(" ");
        assertThat(expected).hasSize(q.length);
        int before = 0;
        for (int k = 0; k < q.length; k++) {
            assertThat(cam.frameAtOrBefore(q[k])).as("t = %s", q[k]).isEqualTo(Integer.parseInt(expected[k]));
            before += cam.frameAtOrBefore(q[k]) < 0 ? 1 : 0;
        }
        assertThat(before).as("queries before the first frame").isPositive();
    }

    @Test
    void copyingAFrameAllocatesNothing() throws Exception {
        RecordedFrames wrist = Recordings.readCameras(withCameras(), spec(List.of(WRIST))).get(0);
        com.sun.management.ThreadMXBean threads =
                (com.sun.management.ThreadMXBean) ManagementFactory.getThreadMXBean();
        long id = Thread.currentThread().getId();
        ByteBuffer direct = ByteBuffer.allocateDirect(wrist.frameBytes() * 2);
        ByteBuffer heap = ByteBuffer.allocate(wrist.frameBytes());
        long sink = 0;
        for (int round = 0; round < 3; round++) {
            long before = threads.getThreadAllocatedBytes(id);
            for (int k = 0; k < 20_000; k++) {
                int i = wrist.frameAtOrBefore(k * 0.0001);
                if (i >= 0) {
                    wrist.copyFrame(i, direct, (k & 1) * wrist.frameBytes());
                    wrist.copyFrame(i, heap, 0);
                    sink += direct.get(k & 1) + heap.get(k % wrist.frameBytes());
                }
            }
            long bytes = threads.getThreadAllocatedBytes(id) - before;
            if (round > 0) {
                // the counter's own call costs a few dozen bytes at most; one small object per copy would
                // show as hundreds of kilobytes
                assertThat(bytes).as("bytes allocated by 40,000 frame copies, round %d", round).isLessThan(1_000);
            }
        }
        assertThat(sink).isNotZero();
    }

    @Test
    void aFrameIndexOrATargetOutOfRangeIsRefused() throws Exception {
        RecordedFrames wrist = Recordings.readCameras(withCameras(), spec(List.of(WRIST))).get(0);
        ByteBuffer out = ByteBuffer.allocate(wrist.frameBytes());
        assertThatThrownBy(() -> wrist.copyFrame(30, out, 0)).isInstanceOf(IndexOutOfBoundsException.class);
        assertThatThrownBy(() -> wrist.copyFrame(-1, out, 0)).isInstanceOf(IndexOutOfBoundsException.class);
        assertThatThrownBy(() -> wrist.copyFrame(0, out, 1)).isInstanceOf(IndexOutOfBoundsException.class);
        assertThatThrownBy(() -> wrist.copyFrame(0, out.asReadOnlyBuffer(), 0))
                .isInstanceOf(java.nio.ReadOnlyBufferException.class);
    }

    @Test
    void everyWrongCameraIsNamedByFileAndDatasetAtOnce() {
        Path f = h5("bad.h5", w -> {
            w.putDataset("f32", new float[2][2][2][3]);
            w.putDataset("u16", new short[2][2][2][3], UNSIGNED);
            w.putDataset("i8", frames(2, 2, 2, 3));
            w.putDataset("rank3", new byte[2][2][2], UNSIGNED);
            w.putDataset("four", frames(2, 2, 2, 4), UNSIGNED);
            w.putDataset("grey", frames(2, 2, 2, 1), UNSIGNED);
            w.putDataset("ok", frames(3, 2, 2, 3), UNSIGNED);
            w.putDataset("t2", new double[] {0, 1});
            w.putDataset("t3", new double[] {0, 1, 2});
            w.putDataset("t3wide", new double[][] {{0, 1}, {1, 2}, {2, 3}});
            w.putDataset("t3text", new String[] {"0", "1", "2"});
            w.putDataset("big", frames(4, 4, 4, 3), UNSIGNED);
            w.putDataset("t4", new double[] {0, 1, 2, 3});
        });
        List<CameraSpec> cameras = List.of(
                new CameraSpec("a", "f32", "t2", PixelFormat.RGB8),
                new CameraSpec("b", "u16", "t2", PixelFormat.RGB8),
                new CameraSpec("c", "i8", "t2", PixelFormat.BGR8),
                new CameraSpec("d", "rank3", "t2", PixelFormat.GREY8),
                new CameraSpec("e", "four", "t2", PixelFormat.RGB8),
                new CameraSpec("f", "grey", "t2", PixelFormat.RGB8),
                new CameraSpec("g", "ok", "t2", PixelFormat.RGB8),
                new CameraSpec("h", "ok", "t3wide", PixelFormat.RGB8),
                new CameraSpec("i", "ok", "t3text", PixelFormat.RGB8),
                new CameraSpec("j", "missing", "/cam/t", PixelFormat.RGB8),
                new CameraSpec("k", "big", "t4", PixelFormat.RGB8));
        // 4 frames of 4 × 4 × 3 are 192 bytes: over a bound of 191, which the test sets in place of 2 GiB
        assertThat(problems(f, spec(cameras), 191)).containsExactly(
                "bad.h5 (dataset /f32): holds float32 values; recording.cameras.a.frames needs unsigned 8-bit "
                        + "integers (uint8), one byte per channel",
                "bad.h5 (dataset /u16): holds unsigned 16-bit integer values; recording.cameras.b.frames needs "
                        + "unsigned 8-bit integers (uint8), one byte per channel",
                "bad.h5 (dataset /i8): holds signed 8-bit integer values; recording.cameras.c.frames needs unsigned "
                        + "8-bit integers (uint8), one byte per channel",
                "bad.h5 (dataset /rank3): has shape [2, 2, 2]; recording.cameras.d.frames needs a 4-D dataset [n, "
                        + "height, width, channels]",
                "bad.h5 (dataset /four): has 4 channels (shape [2, 2, 2, 4]); recording.cameras.e.pixel_format is "
                        + "rgb8, which has 3",
                "bad.h5 (dataset /grey): has 1 channel (shape [2, 2, 2, 1]); recording.cameras.f.pixel_format is "
                        + "rgb8, which has 3",
                "bad.h5 (dataset /t2): has 2 times (shape [2]) but recording.cameras.g.frames (/ok) has 3 frames",
                "bad.h5 (dataset /t3wide): has shape [3, 2]; recording.cameras.h.time needs a 1-D dataset [n] (or "
                        + "[n, 1]) of frame times in seconds",
                "bad.h5 (dataset /t3text): holds text values; recording.cameras.i.time needs numbers: float64, "
                        + "float32 or integers",
                "bad.h5 (dataset /missing): not found: / holds no \"missing\"; / holds: big (dataset [4, 4, 4, 3] "
                        + "integer), f32 (dataset [2, 2, 2, 3] float32), four (dataset [2, 2, 2, 4] integer), grey "
                        + "(dataset [2, 2, 2, 1] integer), i8 (dataset [2, 2, 2, 3] integer), ok (dataset [3, 2, 2, 3] "
                        + "integer), rank3 (dataset [2, 2, 2] integer), t2 (dataset [2] float64), t3 (dataset [3] "
                        + "float64), t3text (dataset [3] text), t3wide (dataset [3, 2] float64), t4 (dataset [4] "
                        + "float64), u16 (dataset [2, 2, 2, 3] integer)",
                "bad.h5 (dataset /cam/t): not found: / holds no \"cam\"; / holds: big (dataset [4, 4, 4, 3] integer), "
                        + "f32 (dataset [2, 2, 2, 3] float32), four (dataset [2, 2, 2, 4] integer), grey (dataset "
                        + "[2, 2, 2, 1] integer), i8 (dataset [2, 2, 2, 3] integer), ok (dataset [3, 2, 2, 3] "
                        + "integer), rank3 (dataset [2, 2, 2] integer), t2 (dataset [2] float64), t3 (dataset [3] "
                        + "float64), t3text (dataset [3] text), t3wide (dataset [3, 2] float64), t4 (dataset [4] "
                        + "float64), u16 (dataset [2, 2, 2, 3] integer)",
                "bad.h5 (dataset /big): holds 192 bytes of frames (4 × 4 × 4 × 3); a camera is read into memory "
                        + "whole and may hold at most 191 bytes");
        // the same file within the bound: camera k reads
        assertThat(catchThrowableOfType(() -> Recordings.readCameras(f, spec(List.of(cameras.get(10))), 192),
                BadInputException.class)).isNull();
    }

    @Test
    void theCameraErrorExampleInTheConfigurationDocsIsWhatTheReaderSays() throws Exception {
        String doc = Files.readString(Path.of("..", "docs", "configuration.md"));
        int at = doc.indexOf("Cameras are reported the same way");
        assertThat(at).as("docs/configuration.md has the camera error example").isPositive();
        int start = doc.indexOf("```\n", at) + 4;
        String example = doc.substring(start, doc.indexOf("```", start)).strip();
        Path f = h5("episode.h5", w -> {
            WritableGroup cam = w.putGroup("cam");
            WritableGroup wrist = cam.putGroup("wrist");
            wrist.putDataset("rgb", frames(30, 24, 32, 3));
            wrist.putDataset("t", cameraTimes(30));
            WritableGroup top = cam.putGroup("top");
            top.putDataset("grey", frames(30, 24, 32, 3), UNSIGNED);
            top.putDataset("t", cameraTimes(30));
            WritableGroup side = cam.putGroup("side");
            side.putDataset("rgb", frames(30, 24, 32, 3), UNSIGNED);
            side.putDataset("t", cameraTimes(29));
        });
        List<CameraSpec> cameras = List.of(
                new CameraSpec("wrist", "/cam/wrist/rgb", "/cam/wrist/t", PixelFormat.RGB8),
                new CameraSpec("top", "/cam/top/grey", "/cam/top/t", PixelFormat.GREY8),
                new CameraSpec("side", "/cam/side/rgb", "/cam/side/t", PixelFormat.RGB8));
        BadInputException e = catchThrowableOfType(() -> Recordings.readCameras(f, spec(cameras)),
                BadInputException.class);
        String prefix = dir + File.separator;
        assertThat(e.getMessage().replace(prefix, "").replace(System.lineSeparator(), "\n")).isEqualTo(example);
    }

    @Test
    void frameTimesMustBeFiniteAndIncreaseStrictly() {
        Path f = h5("times.h5", w -> {
            w.putDataset("rgb", frames(5, 2, 2, 3), UNSIGNED);
            w.putDataset("t", new double[] {0, 0.1, 0.1, Double.NaN, 0.05});
            w.putDataset("grey", frames(3, 2, 2, 1), UNSIGNED);
            w.putDataset("t_grey", new long[][] {{3}, {2}, {4}});
        });
        List<CameraSpec> cameras = List.of(new CameraSpec("wrist", "rgb", "t", PixelFormat.RGB8),
                new CameraSpec("top", "grey", "t_grey", PixelFormat.GREY8));
        assertThat(problems(f, spec(cameras), Hdf5FrameReader.FRAME_BYTES_MAX)).containsExactly(
                "times.h5 (dataset /t, index [3]): is not finite: NaN",
                "times.h5 (dataset /t_grey, index [1, 0]): time 2 is not after 3 at [0, 0]; times must increase "
                        + "strictly");
        Path g = h5("order.h5", w -> {
            w.putDataset("rgb", frames(3, 2, 2, 3), UNSIGNED);
            w.putDataset("t", new double[] {0, 0.1, 0.1});
        });
        assertThat(problems(g, spec(List.of(cameras.get(0))), Hdf5FrameReader.FRAME_BYTES_MAX)).containsExactly(
                "order.h5 (dataset /t, index [2]): time 0.1 is not after 0.1 at [1]; times must increase strictly");
    }

    /**
     * Edits the shape of the one 4-D dataset of {@code file} shaped {@code from} to {@code to}: jhdf
     * cannot write a dataset with no elements (it takes the element type from the first one), so
     * empty cameras are files jhdf wrote with a non-empty shape whose dataspace is then edited, and
     * the object header's checksum recomputed (HDF5 file format specification: version 2 dataspace
     * message, version 2 object header "OHDR" whose chunk ends in a Jenkins lookup3 checksum of it,
     * recomputed with jhdf's own {@code ChecksumUtils}). jhdf reading the edited shape back shows
     * the edit made a well-formed file.
     */
    private static void editShape(Path file, String dataset, long[] from, long[] to) throws Exception {
        byte[] b = Files.readAllBytes(file);
        ByteBuffer le = ByteBuffer.wrap(b).order(java.nio.ByteOrder.LITTLE_ENDIAN);
        int dims = -1;
        for (int i = 0; i + 36 <= b.length; i++) {
            // version 2, rank 4, no maximum dimensions, simple dataspace; then the 8-byte lengths
            if (b[i] == 2 && b[i + 1] == 4 && b[i + 2] == 0 && b[i + 3] == 1 && le.getLong(i + 4) == from[0]
                    && le.getLong(i + 12) == from[1] && le.getLong(i + 20) == from[2] && le.getLong(i + 28) == from[3]) {
                assertThat(dims).as("one dataspace %s in the file", java.util.Arrays.toString(from)).isEqualTo(-1);
                dims = i + 4;
            }
        }
        assertThat(dims).isPositive();
        int header = -1;
        for (int i = 0; i < dims; i++) {
            if (b[i] == 'O' && b[i + 1] == 'H' && b[i + 2] == 'D' && b[i + 3] == 'R') {
                header = i;
            }
        }
        assertThat(b[header + 4]).as("object header version").isEqualTo((byte) 2);
        int flags = b[header + 5];
        int at = header + 6 + ((flags & 0x20) != 0 ? 16 : 0) + ((flags & 0x10) != 0 ? 4 : 0);
        int sizeWidth = 1 << (flags & 3);
        long chunk = sizeWidth == 1 ? b[at] & 0xff : sizeWidth == 2 ? le.getShort(at) & 0xffff
                : sizeWidth == 4 ? le.getInt(at) & 0xffffffffL : le.getLong(at);
        int end = (int) (at + sizeWidth + chunk);
        assertThat(end).isGreaterThan(dims);
        assertThat(io.jhdf.checksum.ChecksumUtils.checksum(java.util.Arrays.copyOfRange(b, header, end)))
                .as("checksum before the edit").isEqualTo(le.getInt(end));
        for (int k = 0; k < 4; k++) {
            le.putLong(dims + 8 * k, to[k]);
        }
        le.putInt(end, io.jhdf.checksum.ChecksumUtils.checksum(java.util.Arrays.copyOfRange(b, header, end)));
        Files.write(file, b);
        try (HdfFile h = new HdfFile(file)) {
            int[] shape = h.getDatasetByPath(dataset).getDimensions();
            for (int k = 0; k < 4; k++) {
                assertThat((long) shape[k]).isEqualTo(to[k]);
            }
        }
    }

    @Test
    void aCameraWithNoFramesOrEmptyFramesIsRefused() throws Exception {
        Path f = h5("empty.h5", w -> {
            w.putDataset("rgb", new byte[1][5][7][3], UNSIGNED);
            w.putDataset("flat", new byte[2][3][4][1], UNSIGNED);
            w.putDataset("t", new double[] {0});
            w.putDataset("t2", new double[] {0, 1});
        });
        editShape(f, "rgb", new long[] {1, 5, 7, 3}, new long[] {0, 5, 7, 3});
        editShape(f, "flat", new long[] {2, 3, 4, 1}, new long[] {2, 0, 4, 1});
        assertThat(problems(f, spec(List.of(new CameraSpec("wrist", "rgb", "t", PixelFormat.RGB8),
                new CameraSpec("top", "flat", "t2", PixelFormat.GREY8))), Hdf5FrameReader.FRAME_BYTES_MAX))
                .containsExactly(
                        "empty.h5 (dataset /rgb): has no frames (shape [0, 5, 7, 3])",
                        "empty.h5 (dataset /flat): has empty frames (shape [2, 0, 4, 1]); a frame needs a height and "
                                + "a width of at least 1");
    }

    @Test
    void aCsvRecordingWithCamerasIsRefusedNamingTheKey() throws Exception {
        Path csv = dir.resolve("bench.csv");
        Files.writeString(csv, "time,q.shoulder,q.elbow,a.shoulder,a.elbow\n0,1,2,3,4\n");
        RecordingSpec spec = new RecordingSpec(Optional.empty(), "time", Columns.list(List.of("q.shoulder", "q.elbow")),
                Columns.list(List.of("a.shoulder", "a.elbow")), 2, Specs.JOINTS, List.of(WRIST, TOP));
        assertThat(problems(csv, spec, Hdf5FrameReader.FRAME_BYTES_MAX)).containsExactly(
                "bench.csv: is read as CSV, but recording.cameras names 2 cameras (wrist, top); camera frames are "
                        + "read only from an HDF5 recording");
        // the joint state of the same file still reads; a spec with no cameras reads no frames
        assertThat(Recordings.read(csv, spec).length()).isEqualTo(1);
        assertThat(Recordings.readCameras(csv, Specs.csv())).isEmpty();
        assertThatThrownBy(() -> new RecordingSpec(Optional.of(RecordingFormat.CSV), "time",
                Columns.list(List.of("q.shoulder", "q.elbow")), Columns.list(List.of("a.shoulder", "a.elbow")), 2,
                Specs.JOINTS, List.of(WRIST))).isInstanceOf(IllegalArgumentException.class);
    }
}
