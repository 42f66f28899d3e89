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
     * The last {@code depth} observations passed to the policy, oldest first, one per inference
     * call. Before {@code depth} calls have happened the first observation fills the older slots.
     */
    record History(int depth) implements InputBinding {
        @Override
        public Kind kind() {
            return Kind.HISTORY;
        }

        public History {
            if (depth < 1) {
                throw new IllegalArgumentException("history depth must be >= 1, got " + depth);
            }
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
