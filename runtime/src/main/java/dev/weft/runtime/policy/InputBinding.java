package dev.weft.runtime.policy;

import java.util.Arrays;

/**
 * Where the values of one model input come from on every inference call. Every input of the
 * model must be bound to exactly one source.
 */
public sealed interface InputBinding {

    /** The kinds of source, with the names configuration uses. */
    enum Kind {
        OBSERVATION("observation"), HISTORY("history"), CONSTANT("constant"), NOISE("noise"), STEP("step");

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
