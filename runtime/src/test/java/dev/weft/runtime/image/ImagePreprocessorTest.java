package dev.weft.runtime.image;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import ai.onnxruntime.OnnxTensor;
import ai.onnxruntime.OrtEnvironment;
import ai.onnxruntime.OrtSession;
import dev.weft.onnxkit.OnnxGraph;
import dev.weft.onnxkit.OnnxGraph.Element;
import dev.weft.runtime.image.ImagePreprocessor.Layout;
import dev.weft.runtime.image.ImagePreprocessor.Resize;
import dev.weft.runtime.image.ImagePreprocessor.Settings;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.FloatBuffer;
import java.util.Map;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

class ImagePreprocessorTest {

    /** ImageNet's per-channel statistics, RGB, on the [0, 1] scale (common practice, from memory). */
    private static final double[] MEAN = {0.485, 0.456, 0.406};
    private static final double[] STD = {0.229, 0.224, 0.225};

    private static ByteBuffer randomFrame(int h, int w, int c, long seed) {
        SplittableRandom r = new SplittableRandom(seed);
        ByteBuffer b = ByteBuffer.allocateDirect(h * w * c);
        for (int i = 0; i < h * w * c; i++) {
            b.put(i, (byte) r.nextInt(256));
        }
        return b;
    }

    /** The frame as an NCHW float tensor of its 0 … 255 values: the reference graph's input. */
    private static float[] nchw(ByteBuffer frame, int h, int w, int c) {
        float[] v = new float[h * w * c];
        for (int y = 0; y < h; y++) {
            for (int x = 0; x < w; x++) {
                for (int k = 0; k < c; k++) {
                    v[(k * h + y) * w + x] = frame.get((y * w + x) * c + k) & 0xFF;
                }
            }
        }
        return v;
    }

    private static float[] run(OnnxGraph g, float[] input, long... shape) throws Exception {
        OrtEnvironment env = OrtEnvironment.getEnvironment();
        try (OrtSession session = env.createSession(g.toBytes(), new OrtSession.SessionOptions());
             OnnxTensor t = OnnxTensor.createTensor(env, FloatBuffer.wrap(input), shape);
             OrtSession.Result r = session.run(Map.of("img", t))) {
            FloatBuffer out = ((OnnxTensor) r.get(0)).getFloatBuffer();
            float[] v = new float[out.remaining()];
            out.get(v);
            return v;
        }
    }

    /** (x / 255 − mean) / std per channel, after the given resizing node, as ONNX operators. */
    private static String normalise(OnnxGraph g, String x, int c) {
        float[] mean = new float[c];
        float[] std = new float[c];
        for (int k = 0; k < c; k++) {
            mean[k] = (float) MEAN[k];
            std[k] = (float) STD[k];
        }
        String unit = g.op("Div", x, g.floats("full_scale", new float[] {255f}, 1));
        String centred = g.op("Sub", unit, g.floats("mean", mean, 1, c, 1, 1));
        g.opNamed("Div", "out", centred, g.floats("std", std, 1, c, 1, 1));
        return "out";
    }

    private static float[] weft(Settings s, ByteBuffer frame) {
        ImagePreprocessor p = new ImagePreprocessor(s);
        FloatBuffer out = ByteBuffer.allocateDirect(4 * p.outputValues()).order(ByteOrder.nativeOrder()).asFloatBuffer();
        p.apply(frame, 0, out);
        float[] v = new float[p.outputValues()];
        out.get(0, v);
        return v;
    }

    private static Settings normalised(Settings s, int c) {
        double[] m = new double[c];
        double[] d = new double[c];
        System.arraycopy(MEAN, 0, m, 0, c);
        System.arraycopy(STD, 0, d, 0, c);
        return s.withValues(true, m, d, ImagePreprocessor.Element.FLOAT32);
    }

    @ParameterizedTest(name = "{0}x{1}x{2}, crop {3},{4} {5}x{6}, to {7}x{8}")
    @CsvSource({
            "480, 640, 3, 40, 80, 400, 480, 224, 224",  // a camera frame, cropped and shrunk
            "37, 53, 3, 0, 0, 37, 53, 64, 20",          // grown in one axis, shrunk in the other
            "8, 8, 3, 1, 2, 6, 5, 13, 5",               // a small window, grown
            "30, 30, 1, 3, 3, 24, 24, 7, 9"})           // grey
    void bilinearMatchesOnnxRuntimesResizeWithHalfPixelCoordinatesAndTheNormalisation(int h, int w, int c, int top,
            int left, int ch, int cw, int oh, int ow) throws Exception {
        ByteBuffer frame = randomFrame(h, w, c, 31L * h + w);
        // the reference: ONNX Runtime's Slice, Resize (linear, half_pixel), Div, Sub, Div
        OnnxGraph g = OnnxGraph.named("resize_reference");
        g.input("img", Element.FLOAT, 1, c, h, w);
        String crop = g.op("Slice", "img", g.longs("starts", new long[] {top, left}, 2),
                g.longs("ends", new long[] {top + ch, left + cw}, 2), g.longs("axes", new long[] {2, 3}, 2));
        String resized = g.opWith("Resize", Map.of("mode", "linear", "coordinate_transformation_mode", "half_pixel"),
                crop, "", "", g.longs("sizes", new long[] {1, c, oh, ow}, 4));
        g.output(normalise(g, resized, c), Element.FLOAT, 1, c, oh, ow);
        float[] want = run(g, nchw(frame, h, w, c), 1, c, h, w);

        Settings s = new Settings(h, w, c, false, top, left, ch, cw, oh, ow, Resize.BILINEAR, false, Layout.NCHW,
                true, new double[c], ones(c), ImagePreprocessor.Element.FLOAT32);
        float[] got = weft(normalised(s, c), frame);
        assertThat(got).hasSameSizeAs(want);
        for (int i = 0; i < want.length; i++) {
            assertThat((double) got[i]).as("value %d", i).isCloseTo(want[i], within(1e-6));
        }
    }

    @ParameterizedTest(name = "{0}x{1} by {2}")
    @CsvSource({"48, 64, 4", "30, 45, 3", "7, 7, 7"})
    void areaAtAWholeFactorIsTheBlockMeanOfOnnxRuntimesAveragePool(int h, int w, int f) throws Exception {
        ByteBuffer frame = randomFrame(h, w, 3, 7L * h + w);
        OnnxGraph g = OnnxGraph.named("area_reference");
        g.input("img", Element.FLOAT, 1, 3, h, w);
        String pooled = g.opWith("AveragePool", Map.of("kernel_shape", new long[] {f, f}, "strides", new long[] {f, f}),
                "img");
        g.output(normalise(g, pooled, 3), Element.FLOAT, 1, 3, h / f, w / f);
        float[] want = run(g, nchw(frame, h, w, 3), 1, 3, h, w);
        Settings s = Settings.plain(h, w, h / f, w / f).with(Resize.AREA, Layout.NCHW, false, false);
        float[] got = weft(normalised(s, 3), frame);
        for (int i = 0; i < want.length; i++) {
            assertThat((double) got[i]).as("value %d", i).isCloseTo(want[i], within(1e-6));
        }
    }

    @Test
    void areaAtAFractionalFactorWeighsPartlyCoveredPixelsByTheirCover() {
        // one row [0, 90, 180] to two pixels: each covers 1.5 input pixels, so
        // (1·0 + 0.5·90) / 1.5 = 30 and (0.5·90 + 1·180) / 1.5 = 150 (worked by hand)
        ByteBuffer frame = ByteBuffer.allocate(3);
        frame.put(0, (byte) 0).put(1, (byte) 90).put(2, (byte) 180);
        Settings s = new Settings(1, 3, 1, false, 0, 0, 1, 3, 1, 2, Resize.AREA, false, Layout.NCHW, false,
                new double[] {0}, new double[] {1}, ImagePreprocessor.Element.FLOAT32);
        assertThat(weft(s, frame)).containsExactly(30f, 150f);
    }

    @Test
    void channelOrderAndLayoutMoveTheSameValues() {
        int h = 12;
        int w = 10;
        ByteBuffer frame = randomFrame(h, w, 3, 5);
        Settings base = normalised(Settings.plain(h, w, 6, 4), 3);
        float[] rgbNchw = weft(base, frame);
        // a BGR frame read into an RGB tensor: the same picture when its bytes are the RGB frame's swapped
        ByteBuffer bgr = ByteBuffer.allocate(h * w * 3);
        for (int i = 0; i < h * w; i++) {
            bgr.put(3 * i, frame.get(3 * i + 2)).put(3 * i + 1, frame.get(3 * i + 1)).put(3 * i + 2, frame.get(3 * i));
        }
        assertThat(weft(base.with(Resize.BILINEAR, Layout.NCHW, true, false), bgr)).containsExactly(rgbNchw);
        float[] nhwc = weft(base.with(Resize.BILINEAR, Layout.NHWC, false, false), frame);
        for (int c = 0; c < 3; c++) {
            for (int i = 0; i < 24; i++) {
                assertThat(nhwc[i * 3 + c]).isEqualTo(rgbNchw[c * 24 + i]);
            }
        }
        // an RGB frame into a BGR tensor: channel planes reversed (the normalisation follows the tensor's channels)
        float[] plain = weft(Settings.plain(h, w, 6, 4), frame);
        float[] reversed = weft(Settings.plain(h, w, 6, 4).with(Resize.BILINEAR, Layout.NCHW, false, true), frame);
        for (int c = 0; c < 3; c++) {
            for (int i = 0; i < 24; i++) {
                assertThat(reversed[c * 24 + i]).isEqualTo(plain[(2 - c) * 24 + i]);
            }
        }
    }

    @Test
    void aUint8TensorHoldsTheResizedPixelsRounded() {
        ByteBuffer frame = randomFrame(20, 30, 3, 9);
        Settings f = Settings.plain(20, 30, 9, 11).withValues(false, new double[3], ones(3),
                ImagePreprocessor.Element.FLOAT32);
        float[] exact = weft(f, frame);
        ImagePreprocessor p = new ImagePreprocessor(f.withValues(false, new double[3], ones(3),
                ImagePreprocessor.Element.UINT8));
        ByteBuffer out = ByteBuffer.allocateDirect(p.outputValues());
        p.apply(frame, 0, out);
        for (int i = 0; i < exact.length; i++) {
            assertThat((double) (out.get(i) & 0xFF)).as("value %d", i).isCloseTo(exact[i], within(0.5 + 1e-9));
        }
    }

    @Test
    void aHalfRoundsUpInAUint8Tensor() {
        // area: [1, 2] to one pixel is 1.5, [2, 2] is 2 and [0, 1] is 0.5: rounded half up to 2, 2, 1
        ByteBuffer frame = ByteBuffer.allocate(6);
        frame.put(0, (byte) 1).put(1, (byte) 2).put(2, (byte) 2).put(3, (byte) 2).put(4, (byte) 0).put(5, (byte) 1);
        ImagePreprocessor p = new ImagePreprocessor(new Settings(1, 6, 1, false, 0, 0, 1, 6, 1, 3, Resize.AREA, false,
                Layout.NCHW, false, new double[] {0}, new double[] {1}, ImagePreprocessor.Element.UINT8));
        ByteBuffer out = ByteBuffer.allocate(3);
        p.apply(frame, 0, out);
        assertThat(new int[] {out.get(0), out.get(1), out.get(2)}).containsExactly(2, 2, 1);
        // a frame or tensor buffer too small is refused before anything is written
        assertThatThrownBy(() -> p.apply(ByteBuffer.allocate(5), 0, out))
                .hasMessage("the frame buffer holds 5 bytes; a frame of 6 bytes from index 0 does not fit");
        assertThatThrownBy(() -> p.apply(frame, 0, ByteBuffer.allocate(2)))
                .hasMessage("the tensor buffer holds 2 values, the tensor 3");
    }

    @Test
    void settingsOutOfRangeAreRefusedNamingTheSetting() {
        Settings s = Settings.plain(480, 640, 224, 224);
        assertThatThrownBy(() -> new ImagePreprocessor(s.withCrop(300, 0, 200, 640)))
                .hasMessage("the crop window (top 300, left 0, 200 × 640) must lie inside the 480 × 640 frame");
        assertThatThrownBy(() -> new ImagePreprocessor(Settings.plain(100, 100, 200, 50)
                .with(Resize.AREA, Layout.NCHW, false, false)))
                .hasMessage("area resize only shrinks: 100 × 100 to 200 × 50 grows; use bilinear");
        assertThatThrownBy(() -> new ImagePreprocessor(s.withValues(true, new double[3], ones(3),
                ImagePreprocessor.Element.UINT8)))
                .hasMessageStartingWith("a uint8 tensor takes the resized pixel values as they are");
        assertThatThrownBy(() -> new ImagePreprocessor(s.withValues(true, new double[3], new double[] {1, 0, 1},
                ImagePreprocessor.Element.FLOAT32)))
                .hasMessage("std 1 must be finite and > 0, got 0.0");
    }

    @Test
    void applyingAllocatesNothing() {
        ByteBuffer frame = randomFrame(480, 640, 3, 3);
        ImagePreprocessor p = new ImagePreprocessor(normalised(Settings.plain(480, 640, 96, 128), 3));
        FloatBuffer out = ByteBuffer.allocateDirect(4 * p.outputValues()).order(ByteOrder.nativeOrder()).asFloatBuffer();
        com.sun.management.ThreadMXBean mx =
                (com.sun.management.ThreadMXBean) java.lang.management.ManagementFactory.getThreadMXBean();
        for (int i = 0; i < 50; i++) {
            p.apply(frame, 0, out);
        }
        // up to three windows of 20 frames: an allocation of apply itself shows in every window; the
        // JIT's own one-off work (a deoptimisation re-creating objects it had eliminated, about a
        // kilobyte once) can show in one, and is not the frame's
        long[] windows = new long[3];
        boolean clean = false;
        for (int w = 0; w < windows.length && !clean; w++) {
            long before = mx.getCurrentThreadAllocatedBytes();
            for (int i = 0; i < 20; i++) {
                p.apply(frame, 0, out);
            }
            windows[w] = mx.getCurrentThreadAllocatedBytes() - before;
            clean = windows[w] < 256;
        }
        // a frame's output as a new array would be 147 KB each time; boxing each value, megabytes
        assertThat(clean).as("a window of 20 frames allocating under 256 bytes; windows %s",
                java.util.Arrays.toString(windows)).isTrue();
    }

    private static double[] ones(int n) {
        double[] v = new double[n];
        java.util.Arrays.fill(v, 1.0);
        return v;
    }
}
