package dev.weft.runtime.image;

import java.nio.ByteBuffer;
import java.nio.FloatBuffer;
import java.util.Arrays;

/**
 * Turns a camera frame (8-bit pixels, rows top to bottom, channels interleaved: {@code H × W × C})
 * into a model's image tensor: crop, resize, channel order, layout, scale to [0, 1], per-channel
 * mean and standard deviation, and the tensor's element type.
 *
 * <p>Order of operations, per output value: the crop window is cut out of the frame; it is
 * resized to the output size; the channel is picked in the output's order; the value is divided
 * by 255 when {@link Settings#scaleToUnit()}; then {@code (v − mean[c]) / std[c]}; it is written at
 * its place in the layout ({@code NCHW}: {@code c·H·W + y·W + x}; {@code NHWC}:
 * {@code (y·W + x)·C + c}).
 *
 * <p>Resize methods:
 * <ul>
 *   <li>{@link Resize#BILINEAR}: the {@code half_pixel} coordinate convention of ONNX's
 *   {@code Resize} operator (mode {@code linear}): output index {@code x} samples the input at
 *   {@code (x + 0.5)/(out/in) − 0.5}, clamped to {@code [0, in − 1]}, between its two neighbours
 *   with linear weights, rows and columns alike; the coordinates are computed in float32, as ONNX
 *   Runtime computes them. No antialiasing when shrinking (the operator's default). The test checks
 *   it against ONNX Runtime's {@code Resize}.</li>
 *   <li>{@link Resize#AREA}: for shrinking only: each output pixel is the mean of the input area it
 *   covers, {@code [x·in/out, (x + 1)·in/out)} in each axis, partly covered pixels weighted by
 *   the part covered (a box filter; with a whole-number factor, exactly the block mean, as
 *   {@code AveragePool} with kernel and stride equal to the factor).</li>
 * </ul>
 *
 * <p>Values are computed in double precision and rounded once to float32 (or, for a
 * {@link Element#UINT8} tensor, to the nearest whole number, halves up, which needs neither
 * scaling nor normalisation).
 *
 * <p>Allocation: the constructor precomputes every tap and weight; {@link #apply} allocates
 * nothing and does not block. Threading: one thread at a time.
 */
public final class ImagePreprocessor {

    /** How the crop window is brought to the output size. */
    public enum Resize {
        BILINEAR("bilinear"), AREA("area");

        private final String label;

        Resize(String label) {
            this.label = label;
        }

        public String label() {
            return label;
        }
    }

    /** The image tensor's axis order (batch of one). */
    public enum Layout {
        NCHW("nchw"), NHWC("nhwc");

        private final String label;

        Layout(String label) {
            this.label = label;
        }

        public String label() {
            return label;
        }
    }

    /** The image tensor's element type. */
    public enum Element {
        UINT8("uint8"), FLOAT32("float32");

        private final String label;

        Element(String label) {
            this.label = label;
        }

        public String label() {
            return label;
        }
    }

    /**
     * Everything the preprocessing does.
     *
     * @param height frame rows
     * @param width frame columns
     * @param channels 1 (grey) or 3 (colour)
     * @param frameBgr whether a colour frame's channels are blue, green, red (else red, green, blue)
     * @param cropTop first row of the crop window
     * @param cropLeft first column of the crop window
     * @param cropHeight rows of the crop window (the whole frame: {@code height} with {@code cropTop = 0})
     * @param cropWidth columns of the crop window
     * @param outHeight the tensor's rows
     * @param outWidth the tensor's columns
     * @param resize how the window is brought to {@code outHeight × outWidth}
     * @param tensorBgr whether the tensor's channels are blue, green, red (else red, green, blue)
     * @param layout the tensor's axis order
     * @param scaleToUnit divide by 255 before the mean and standard deviation
     * @param mean per channel, in the tensor's channel order, in the units after scaling
     * @param std per channel, {@code > 0}
     * @param element the tensor's element type
     */
    public record Settings(int height, int width, int channels, boolean frameBgr, int cropTop, int cropLeft,
                           int cropHeight, int cropWidth, int outHeight, int outWidth, Resize resize, boolean tensorBgr,
                           Layout layout, boolean scaleToUnit, double[] mean, double[] std, Element element) {

        public Settings {
            mean = mean.clone();
            std = std.clone();
        }

        /** The whole frame to {@code outHeight × outWidth}, bilinear, NCHW float32 in [0, 1], RGB, no normalisation. */
        public static Settings plain(int height, int width, int outHeight, int outWidth) {
            return new Settings(height, width, 3, false, 0, 0, height, width, outHeight, outWidth, Resize.BILINEAR,
                    false, Layout.NCHW, true, new double[] {0, 0, 0}, new double[] {1, 1, 1}, Element.FLOAT32);
        }

        @Override
        public double[] mean() {
            return mean.clone();
        }

        @Override
        public double[] std() {
            return std.clone();
        }

        /** The same with another crop window. */
        public Settings withCrop(int top, int left, int rows, int columns) {
            return new Settings(height, width, channels, frameBgr, top, left, rows, columns, outHeight, outWidth,
                    resize, tensorBgr, layout, scaleToUnit, mean, std, element);
        }

        /** The same with another resize method, layout and channel orders. */
        public Settings with(Resize r, Layout l, boolean frameIsBgr, boolean tensorIsBgr) {
            return new Settings(height, width, channels, frameIsBgr, cropTop, cropLeft, cropHeight, cropWidth,
                    outHeight, outWidth, r, tensorIsBgr, l, scaleToUnit, mean, std, element);
        }

        /** The same with another scaling, normalisation and element type. */
        public Settings withValues(boolean unit, double[] means, double[] stds, Element e) {
            return new Settings(height, width, channels, frameBgr, cropTop, cropLeft, cropHeight, cropWidth,
                    outHeight, outWidth, resize, tensorBgr, layout, unit, means, stds, e);
        }
    }

    private final Settings s;
    private final int channels;
    private final int outValues;
    /** Per output column: taps into the crop window's columns (already offset by cropLeft). */
    private final Taps columns;
    private final Taps rows;
    /** Tensor channel → frame channel. */
    private final int[] frameChannel;
    private final double[] scale;
    private final double[] offset;

    /** Separable taps of one axis: output index o reads {@code index[first[o] .. first[o + 1])}. */
    private static final class Taps {
        final int[] first;
        final int[] index;
        final double[] weight;

        Taps(int[] first, int[] index, double[] weight) {
            this.first = first;
            this.index = index;
            this.weight = weight;
        }
    }

    /**
     * @throws IllegalArgumentException naming the setting that is out of range
     */
    public ImagePreprocessor(Settings settings) {
        this.s = settings;
        check(s.height() >= 1 && s.width() >= 1, "the frame must be at least 1 × 1, got " + s.height() + " × " + s.width());
        check(s.channels() == 1 || s.channels() == 3, "channels must be 1 or 3, got " + s.channels());
        check((long) s.height() * s.width() * s.channels() <= Integer.MAX_VALUE, "a frame of " + s.height() + " × "
                + s.width() + " × " + s.channels() + " is over 2 GiB");
        check(s.cropTop() >= 0 && s.cropLeft() >= 0 && s.cropHeight() >= 1 && s.cropWidth() >= 1
                && (long) s.cropTop() + s.cropHeight() <= s.height() && (long) s.cropLeft() + s.cropWidth() <= s.width(),
                "the crop window (top " + s.cropTop() + ", left " + s.cropLeft() + ", " + s.cropHeight() + " × "
                        + s.cropWidth() + ") must lie inside the " + s.height() + " × " + s.width() + " frame");
        check(s.outHeight() >= 1 && s.outWidth() >= 1, "the output must be at least 1 × 1, got " + s.outHeight()
                + " × " + s.outWidth());
        check((long) s.outHeight() * s.outWidth() * s.channels() <= 1L << 26, "the output of " + s.outHeight() + " × "
                + s.outWidth() + " × " + s.channels() + " is too large");
        if (s.resize() == Resize.AREA) {
            check(s.outHeight() <= s.cropHeight() && s.outWidth() <= s.cropWidth(), "area resize only shrinks: "
                    + s.cropHeight() + " × " + s.cropWidth() + " to " + s.outHeight() + " × " + s.outWidth()
                    + " grows; use bilinear");
        }
        this.channels = s.channels();
        check(s.mean().length == channels && s.std().length == channels, "mean and std need " + channels
                + " values each, got " + s.mean().length + " and " + s.std().length);
        double[] mean = s.mean();
        double[] std = s.std();
        for (int c = 0; c < channels; c++) {
            check(Double.isFinite(mean[c]), "mean " + c + " must be finite, got " + mean[c]);
            check(std[c] > 0 && Double.isFinite(std[c]), "std " + c + " must be finite and > 0, got " + std[c]);
        }
        if (s.element() == Element.UINT8) {
            boolean identity = !s.scaleToUnit();
            for (int c = 0; c < channels; c++) {
                identity &= mean[c] == 0 && std[c] == 1;
            }
            check(identity, "a uint8 tensor takes the resized pixel values as they are: no scaling to [0, 1],"
                    + " mean 0 and std 1");
        }
        this.outValues = s.outHeight() * s.outWidth() * channels;
        this.columns = taps(s.resize(), s.cropWidth(), s.outWidth(), s.cropLeft());
        this.rows = taps(s.resize(), s.cropHeight(), s.outHeight(), s.cropTop());
        this.frameChannel = new int[channels];
        for (int c = 0; c < channels; c++) {
            frameChannel[c] = channels == 3 && s.frameBgr() != s.tensorBgr() ? 2 - c : c;
        }
        this.scale = new double[channels];
        this.offset = new double[channels];
        for (int c = 0; c < channels; c++) {
            double unit = s.scaleToUnit() ? 1.0 / 255.0 : 1.0;
            // v' = (v·unit − mean) / std, as one multiply and one add
            scale[c] = unit / std[c];
            offset[c] = -mean[c] / std[c];
        }
    }

    private static void check(boolean ok, String message) {
        if (!ok) {
            throw new IllegalArgumentException(message);
        }
    }

    private static Taps taps(Resize r, int in, int out, int base) {
        int[] first = new int[out + 1];
        if (r == Resize.BILINEAR) {
            int[] index = new int[2 * out];
            double[] weight = new double[2 * out];
            // in float32, as ONNX Runtime computes them (scale = out / in, then divided by), so that
            // the taps and weights are the operator's own to the last bit
            float scale = (float) out / (float) in;
            for (int o = 0; o < out; o++) {
                float x = (o + 0.5f) / scale - 0.5f;
                x = Math.max(0.0f, Math.min(x, in - 1.0f));
                int x0 = (int) Math.floor(x);
                int x1 = Math.min(x0 + 1, in - 1);
                double w1 = x - x0;
                first[o] = 2 * o;
                index[2 * o] = base + x0;
                weight[2 * o] = 1.0 - w1;
                index[2 * o + 1] = base + x1;
                weight[2 * o + 1] = w1;
            }
            first[out] = 2 * out;
            return new Taps(first, index, weight);
        }
        // area: output o covers [o·ratio, (o + 1)·ratio) of the input axis
        double ratio = (double) in / out;
        int[] index = new int[out * ((int) Math.ceil(ratio) + 2)];
        double[] weight = new double[index.length];
        int n = 0;
        for (int o = 0; o < out; o++) {
            first[o] = n;
            double lo = o * ratio;
            double hi = Math.min(in, (o + 1) * ratio);
            for (int i = (int) Math.floor(lo); i < in && i < hi; i++) {
                double covered = Math.min(i + 1.0, hi) - Math.max(i, lo);
                if (covered > 0) {
                    index[n] = base + i;
                    weight[n] = covered / (hi - lo);
                    n++;
                }
            }
        }
        first[out] = n;
        return new Taps(first, Arrays.copyOf(index, n), Arrays.copyOf(weight, n));
    }

    /** Values in the tensor: {@code outHeight × outWidth × channels}. */
    public int outputValues() {
        return outValues;
    }

    /** Bytes a frame holds: {@code height × width × channels}. */
    public int frameBytes() {
        return s.height() * s.width() * channels;
    }

    /** The settings this was built with. */
    public Settings settings() {
        return s;
    }

    /**
     * Writes the float32 tensor into {@code out} (absolute indices from 0).
     *
     * @param frame the frame's bytes from index {@code frameStart} on (absolute gets; its position
     *     is not moved)
     * @param out at least {@link #outputValues()} floats
     */
    public void apply(ByteBuffer frame, int frameStart, FloatBuffer out) {
        if (s.element() != Element.FLOAT32) {
            throw new IllegalStateException("this preprocessing writes a uint8 tensor");
        }
        checkSizes(frame, frameStart, out.capacity());
        int h = s.outHeight();
        int w = s.outWidth();
        for (int y = 0; y < h; y++) {
            for (int x = 0; x < w; x++) {
                for (int c = 0; c < channels; c++) {
                    double v = sample(frame, frameStart, y, x, frameChannel[c]);
                    out.put(at(y, x, c), (float) (v * scale[c] + offset[c]));
                }
            }
        }
    }

    /** Writes the uint8 tensor into {@code out} (absolute indices from 0); see {@link #apply(ByteBuffer, int, FloatBuffer)}. */
    public void apply(ByteBuffer frame, int frameStart, ByteBuffer out) {
        if (s.element() != Element.UINT8) {
            throw new IllegalStateException("this preprocessing writes a float32 tensor");
        }
        checkSizes(frame, frameStart, out.capacity());
        int h = s.outHeight();
        int w = s.outWidth();
        for (int y = 0; y < h; y++) {
            for (int x = 0; x < w; x++) {
                for (int c = 0; c < channels; c++) {
                    double v = sample(frame, frameStart, y, x, frameChannel[c]);
                    long r = (long) Math.floor(v + 0.5);
                    out.put(at(y, x, c), (byte) Math.max(0, Math.min(255, r)));
                }
            }
        }
    }

    /** Before anything is written: the frame and the tensor buffer are large enough. */
    private void checkSizes(ByteBuffer frame, int frameStart, int outCapacity) {
        if (frameStart < 0 || (long) frameStart + frameBytes() > frame.capacity()) {
            throw new IllegalArgumentException("the frame buffer holds " + frame.capacity() + " bytes; a frame of "
                    + frameBytes() + " bytes from index " + frameStart + " does not fit");
        }
        if (outCapacity < outValues) {
            throw new IllegalArgumentException("the tensor buffer holds " + outCapacity + " values, the tensor "
                    + outValues);
        }
    }

    private int at(int y, int x, int c) {
        int h = s.outHeight();
        int w = s.outWidth();
        return s.layout() == Layout.NCHW ? (c * h + y) * w + x : (y * w + x) * channels + c;
    }

    /** The resized value of output pixel (y, x) in frame channel fc, 0 … 255. */
    private double sample(ByteBuffer frame, int start, int y, int x, int fc) {
        int rowStride = s.width() * channels;
        double sum = 0;
        for (int ty = rows.first[y]; ty < rows.first[y + 1]; ty++) {
            double wy = rows.weight[ty];
            if (wy == 0) {
                continue;
            }
            int rowBase = start + rows.index[ty] * rowStride + fc;
            double line = 0;
            for (int tx = columns.first[x]; tx < columns.first[x + 1]; tx++) {
                line += columns.weight[tx] * (frame.get(rowBase + columns.index[tx] * channels) & 0xFF);
            }
            sum += wy * line;
        }
        return sum;
    }
}
