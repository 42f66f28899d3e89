package dev.weft.filters;

/** Argument checks shared by the smoothers. */
final class SmootherChecks {
    private SmootherChecks() {
    }

    static void length(String kind, String name, double[] array, int dims) {
        if (array == null || array.length < dims) {
            throw new IllegalArgumentException(kind + ": " + name + " must hold at least " + dims + " values, got "
                    + (array == null ? "null" : array.length + " values"));
        }
    }

    static boolean allFinite(double[] values, int dims) {
        for (int d = 0; d < dims; d++) {
            if (!Double.isFinite(values[d])) {
                return false;
            }
        }
        return true;
    }

    static void finiteResetValue(String kind, double[] value, int dims) {
        length(kind, "reset value", value, dims);
        for (int d = 0; d < dims; d++) {
            if (!Double.isFinite(value[d])) {
                throw new IllegalArgumentException(kind + ": reset value for joint " + d + " must be finite, got "
                        + value[d]);
            }
        }
    }

    static void positiveFinite(String kind, String name, double value) {
        if (!(value > 0.0) || Double.isInfinite(value)) {
            throw new IllegalArgumentException(kind + ": " + name + " must be finite and > 0, got " + value);
        }
    }
}
