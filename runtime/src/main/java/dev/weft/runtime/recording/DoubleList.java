package dev.weft.runtime.recording;

import java.util.Arrays;

/** A growable array of doubles (capacity doubles when full, so appending n values costs O(n)). */
final class DoubleList {

    private double[] values;
    private int size;

    DoubleList(int initialCapacity) {
        values = new double[Math.max(16, initialCapacity)];
    }

    void add(double v) {
        if (size == values.length) {
            if (values.length > Integer.MAX_VALUE / 2 - 8) {
                throw new IllegalStateException("a recording holds at most about 2^30 values per kind");
            }
            values = Arrays.copyOf(values, values.length * 2);
        }
        values[size++] = v;
    }

    int size() {
        return size;
    }

    /** The values added, in a new array of exactly {@link #size()} elements. */
    double[] toArray() {
        return Arrays.copyOf(values, size);
    }
}
