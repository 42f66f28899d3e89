package dev.weft.runtime.policy;

import dev.weft.runtime.image.ImagePreprocessor;
import java.util.Arrays;

/**
 * Where the values of one model input come from on every inference call. Every input of the
 * model must be bound to exactly one source.
 */
public sealed interface InputBinding {

    /** The kinds of source, with the names configuration uses. */
    enum Kind {
        OBSERVATION("observation"), HISTORY("history"), CONSTANT("constant"), NOISE("noise"), STEP("step"),
        CAMERA("camera");

        private final String label;

        Kind(String label) {
            this.label = label;
        }

        public String label() {
            return label;
        }
    }

    /** Which kind of source this is. */
    Kind kind();

    /** The number of values this source supplies for an observation of {@code observationSize}. */
    int valueCount(int observationSize);

    /** The current observation vector (float32 or float64). */
    record Observation() implements InputBinding {
        @Override
        public Kind kind() {
            return Kind.OBSERVATION;
        }

        @Override
        public int valueCount(int observationSize) {
            return observationSize;
        }
    }

    /**
     * The observation stream sampled on a fixed time grid that ends at the query's observation
     * time {@code T}, oldest first: {@code depth} points {@code spacingNanos} apart, the last one at
     * {@code T} when {@code withCurrent}, else at {@code T − spacing} (the previous samples only,
     * for a model that takes the current state in an input of its own). Grid point {@code t} takes
     * the latest sample stamped at or before {@code t}, or with {@code linear} the straight line
     * between that sample and the next one; a point before the first sample the loop kept takes
     * that first sample. The loop keeps the samples once per tick from the stream, never per
     * inference call, so the history does not depend on when queries happen or how long they take.
     *
     * @param depth grid points, ≥ 1
     * @param spacingNanos time between grid points, > 0 (for example the observation period the
     *     policy was trained at)
     * @param withCurrent whether the last grid point is the query's observation itself
     * @param linear interpolate between the samples around a grid point instead of taking the
     *     latest one at or before it
     */
    record History(int depth, long spacingNanos, boolean withCurrent, boolean linear) implements InputBinding {
        /** Largest time a grid may span: a ring of samples that long is kept per tick. */
        public static final long MAX_SPAN_NANOS = 60_000_000_000L;

        @Override
        public Kind kind() {
            return Kind.HISTORY;
        }

        public History {
            if (depth < 1) {
                throw new IllegalArgumentException("history depth must be >= 1, got " + depth);
            }
            if (spacingNanos <= 0) {
                throw new IllegalArgumentException("history spacing must be > 0 ns, got " + spacingNanos);
            }
            if (spacingNanos > MAX_SPAN_NANOS / (depth + 1)) {
                throw new IllegalArgumentException("a history of " + depth + " points " + spacingNanos
                        + " ns apart spans more than " + MAX_SPAN_NANOS / 1_000_000_000L + " s");
            }
        }

        /** How far before the query's observation time the grid's oldest point lies, ns. */
        public long spanNanos() {
            return (withCurrent ? depth - 1L : depth) * spacingNanos;
        }

        /** The time of grid point {@code i} (0 = oldest) for observation time {@code t}. */
        public long pointTime(long t, int i) {
            return t - (withCurrent ? depth - 1L - i : (long) depth - i) * spacingNanos;
        }

        @Override
        public int valueCount(int observationSize) {
            return depth * observationSize;
        }
    }

    /** A fixed tensor, row-major, written once at load (float32, float64 or int64). */
    record Constant(double[] values) implements InputBinding {
        @Override
        public Kind kind() {
            return Kind.CONSTANT;
        }

        public Constant {
            values = values.clone();
        }

        @Override
        public int valueCount(int observationSize) {
            return values.length;
        }

        @Override
        public double[] values() {
            return values.clone();
        }

        @Override
        public boolean equals(Object o) {
            return o instanceof Constant c && Arrays.equals(values, c.values);
        }

        @Override
        public int hashCode() {
            return Arrays.hashCode(values);
        }

        @Override
        public String toString() {
            return "Constant" + Arrays.toString(values);
        }
    }

    /**
     * Gaussian noise, mean 0 and standard deviation {@code stddev}, from a generator seeded once
     * with {@code seed}, drawn afresh for every call; {@code count} values, or 0 to take the
     * count from the model's fixed shape.
     */
    record Noise(long seed, double stddev, int count) implements InputBinding {
        @Override
        public Kind kind() {
            return Kind.NOISE;
        }

        public Noise {
            if (!(stddev >= 0) || Double.isInfinite(stddev)) {
                throw new IllegalArgumentException("noise stddev must be finite and >= 0, got " + stddev);
            }
            if (count < 0) {
                throw new IllegalArgumentException("noise count must be >= 0, got " + count);
            }
        }

        @Override
        public int valueCount(int observationSize) {
            return count;
        }
    }

    /**
     * A camera's frame, preprocessed into an image tensor: on every call the newest frame stamped
     * at or before the request's observation time, cropped, resized to the model input's height and
     * width, its channels ordered, laid out, scaled and normalised ({@link ImagePreprocessor}). The
     * tensor's size comes from the model's fixed shape {@code [1, C, H, W]} or {@code [1, H, W, C]}.
     *
     * @param camera the camera's name (a key of the configuration's {@code cameras})
     * @param frameHeight the camera's frame rows
     * @param frameWidth the camera's frame columns
     * @param frameChannels 3 (colour) or 1 (grey)
     * @param frameBgr whether the camera's colour frames are blue, green, red
     * @param crop {@code top, left, rows, columns} of the window cut out of the frame; empty for the whole frame
     * @param resize how the window is brought to the tensor's size
     * @param layout the tensor's axis order
     * @param tensorBgr whether the tensor's channels are blue, green, red
     * @param scaleToUnit divide pixel values by 255 first
     * @param mean per tensor channel, after scaling
     * @param std per tensor channel, after scaling, {@code > 0}
     */
    record Image(String camera, int frameHeight, int frameWidth, int frameChannels, boolean frameBgr, int[] crop,
                 ImagePreprocessor.Resize resize, ImagePreprocessor.Layout layout, boolean tensorBgr,
                 boolean scaleToUnit, double[] mean, double[] std) implements InputBinding {
        public Image {
            crop = crop.clone();
            mean = mean.clone();
            std = std.clone();
            if (crop.length != 0 && crop.length != 4) {
                throw new IllegalArgumentException("a crop is top, left, rows, columns; got " + crop.length + " numbers");
            }
            if (mean.length != frameChannels || std.length != frameChannels) {
                throw new IllegalArgumentException("camera " + camera + ": mean and std need " + frameChannels
                        + " values each, got " + mean.length + " and " + std.length);
            }
        }

        @Override
        public Kind kind() {
            return Kind.CAMERA;
        }

        /** From the model's shape: this returns 0. */
        @Override
        public int valueCount(int observationSize) {
            return 0;
        }

        /** The preprocessing for a tensor of {@code outHeight × outWidth} of {@code element}. */
        public ImagePreprocessor.Settings settings(int outHeight, int outWidth, ImagePreprocessor.Element element) {
            int top = crop.length == 4 ? crop[0] : 0;
            int left = crop.length == 4 ? crop[1] : 0;
            int rows = crop.length == 4 ? crop[2] : frameHeight;
            int columns = crop.length == 4 ? crop[3] : frameWidth;
            return new ImagePreprocessor.Settings(frameHeight, frameWidth, frameChannels, frameBgr, top, left, rows,
                    columns, outHeight, outWidth, resize, tensorBgr, layout, scaleToUnit, mean, std, element);
        }

        @Override
        public int[] crop() {
            return crop.clone();
        }

        @Override
        public double[] mean() {
            return mean.clone();
        }

        @Override
        public double[] std() {
            return std.clone();
        }

        @Override
        public boolean equals(Object o) {
            return o instanceof Image i && camera.equals(i.camera) && frameHeight == i.frameHeight
                    && frameWidth == i.frameWidth && frameChannels == i.frameChannels && frameBgr == i.frameBgr
                    && Arrays.equals(crop, i.crop) && resize == i.resize && layout == i.layout
                    && tensorBgr == i.tensorBgr && scaleToUnit == i.scaleToUnit && Arrays.equals(mean, i.mean)
                    && Arrays.equals(std, i.std);
        }

        @Override
        public int hashCode() {
            return camera.hashCode() * 31 + Arrays.hashCode(mean) * 7 + Arrays.hashCode(crop);
        }

        @Override
        public String toString() {
            return "Image[" + camera + " " + frameHeight + "x" + frameWidth + "x" + frameChannels + " " + resize.label()
                    + " " + layout.label() + "]";
        }
    }

    /** The control tick the observation was taken at, as one scalar (int64, float32 or float64). */
    record Step() implements InputBinding {
        @Override
        public Kind kind() {
            return Kind.STEP;
        }

        @Override
        public int valueCount(int observationSize) {
            return 1;
        }
    }
}
