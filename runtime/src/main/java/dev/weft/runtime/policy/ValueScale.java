package dev.weft.runtime.policy;

import java.util.Arrays;

/**
 * The normalisation of one vector, value by value: the observation values a model is fed, or the
 * action values it gives. Either mean and standard deviation, {@code z = (x − mean) / std}, or
 * min/max to [−1, 1], {@code z = 2 (x − min) / (max − min) − 1}; or none ({@code z = x}).
 * Observations are normalised before they are written into an input tensor; actions are
 * de-normalised (the inverse) as they are read from the output.
 *
 * <p>Threading: immutable; {@link #normalise}, {@link #denormalise} and
 * {@link #denormaliseChunk} allocate nothing and may be called from any thread.
 */
public final class ValueScale {

    /** How the values are scaled, with the names messages use. */
    public enum Method {
        NONE("none"), MEAN_STD("mean/std"), MIN_MAX("min/max");

        private final String label;

        Method(String label) {
            this.label = label;
        }

        public String label() {
            return label;
        }

        /** The names of the two lists this method takes: {@code mean}, {@code std} or {@code min}, {@code max}. */
        String first() {
            return this == MIN_MAX ? "min" : "mean";
        }

        String second() {
            return this == MIN_MAX ? "max" : "std";
        }
    }

    /** Where a problem was found: the list ({@code mean}, {@code std}, {@code min} or {@code max}) and the index, or -1. */
    @FunctionalInterface
    public interface Complaint {
        void at(String list, int index, String what);
    }

    /** No scaling, with no source. */
    public static final ValueScale NONE = new ValueScale(Method.NONE, new double[0], new double[0], "none");

    private final Method method;
    private final double[] first;
    private final double[] second;
    private final String source;

    private ValueScale(Method method, double[] first, double[] second, String source) {
        this.method = method;
        this.first = first;
        this.second = second;
        this.source = source;
    }

    /**
     * Mean and standard deviation, {@code z = (x − mean) / std}.
     *
     * @param source where the statistics come from, for messages (a key path or a model's metadata)
     * @throws IllegalArgumentException when {@link #check} finds a problem
     */
    public static ValueScale meanStd(double[] mean, double[] std, String source) {
        return checked(Method.MEAN_STD, mean, std, source);
    }

    /**
     * Min/max to [−1, 1], {@code z = 2 (x − min) / (max − min) − 1}.
     *
     * @throws IllegalArgumentException when {@link #check} finds a problem
     */
    public static ValueScale minMax(double[] min, double[] max, String source) {
        return checked(Method.MIN_MAX, min, max, source);
    }

    private static ValueScale checked(Method m, double[] a, double[] b, String source) {
        StringBuilder problems = new StringBuilder();
        check(m, a, b, (list, index, what) -> {
            if (problems.length() > 0) {
                problems.append("; ");
            }
            problems.append(list).append(index >= 0 ? "[" + index + "]" : "").append(": ").append(what);
        });
        if (problems.length() > 0) {
            throw new IllegalArgumentException(source + ": " + problems);
        }
        return new ValueScale(m, a.clone(), b.clone(), source);
    }

    /**
     * Checks the two lists of a method: the same length, at least one value, every value finite,
     * every std {@code > 0}, every max {@code > } its min. Reports each problem to {@code c}.
     */
    public static void check(Method m, double[] a, double[] b, Complaint c) {
        if (m == Method.NONE) {
            return;
        }
        if (a.length == 0) {
            c.at(m.first(), -1, "must hold at least one number");
        }
        if (a.length != b.length) {
            c.at(m.second(), -1, "must have as many values as " + m.first() + " (" + a.length + "), has " + b.length);
        }
        for (int i = 0; i < a.length; i++) {
            if (!Double.isFinite(a[i])) {
                c.at(m.first(), i, "must be a finite number, got " + a[i]);
            }
        }
        for (int i = 0; i < b.length; i++) {
            if (!Double.isFinite(b[i])) {
                c.at(m.second(), i, "must be a finite number, got " + b[i]);
            } else if (m == Method.MEAN_STD && !(b[i] > 0)) {
                c.at(m.second(), i, "must be > 0 (z = (x − mean) / std), got " + b[i]);
            } else if (m == Method.MIN_MAX && i < a.length && Double.isFinite(a[i]) && !(b[i] > a[i])) {
                c.at(m.second(), i, "must be greater than min[" + i + "] (" + a[i] + "), got " + b[i]
                        + (b[i] == a[i] ? ": a zero range cannot be scaled to [−1, 1]" : ""));
            }
        }
    }

    public Method method() {
        return method;
    }

    /** Where the statistics came from (a key path, or the model file and its metadata keys). */
    public String source() {
        return source;
    }

    /** The number of values scaled; 0 for {@link #NONE}. */
    public int size() {
        return first.length;
    }

    /** The mean or min list, a copy. */
    public double[] first() {
        return first.clone();
    }

    /** The std or max list, a copy. */
    public double[] second() {
        return second.clone();
    }

    /** Value {@code i} normalised: {@code (x − mean[i]) / std[i]} or {@code 2 (x − min[i]) / (max[i] − min[i]) − 1}. */
    public double normalise(int i, double x) {
        return switch (method) {
            case NONE -> x;
            case MEAN_STD -> (x - first[i]) / second[i];
            case MIN_MAX -> 2 * (x - first[i]) / (second[i] - first[i]) - 1;
        };
    }

    /** Value {@code i} de-normalised: {@code z · std[i] + mean[i]} or {@code (z + 1) (max[i] − min[i]) / 2 + min[i]}. */
    public double denormalise(int i, double z) {
        return switch (method) {
            case NONE -> z;
            case MEAN_STD -> z * second[i] + first[i];
            case MIN_MAX -> (z + 1) * (second[i] - first[i]) / 2 + first[i];
        };
    }

    /**
     * De-normalises a row-major chunk of {@code k} actions of {@code d} values in place (value i
     * of every action with statistic i); allocates nothing.
     */
    public void denormaliseChunk(double[] chunk, int k, int d) {
        if (method == Method.NONE) {
            return;
        }
        for (int j = 0; j < k; j++) {
            int row = j * d;
            for (int i = 0; i < d; i++) {
                chunk[row + i] = denormalise(i, chunk[row + i]);
            }
        }
    }

    /** Equal when the method and both lists are equal; where the statistics came from is not compared. */
    @Override
    public boolean equals(Object o) {
        return o instanceof ValueScale s && method == s.method && Arrays.equals(first, s.first)
                && Arrays.equals(second, s.second);
    }

    @Override
    public int hashCode() {
        return method.hashCode() * 31 + Arrays.hashCode(first) * 17 + Arrays.hashCode(second);
    }

    @Override
    public String toString() {
        if (method == Method.NONE) {
            return "none";
        }
        return method.label() + " " + method.first() + "=" + Arrays.toString(first) + " " + method.second() + "="
                + Arrays.toString(second) + " from " + source;
    }
}
