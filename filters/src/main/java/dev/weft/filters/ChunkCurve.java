package dev.weft.filters;

/**
 * Evaluates one chunk's plan as a function of the (fractional) step index. Package-private
 * workspace of the blenders: tangents are prepared once per accepted chunk, into an array allocated
 * at construction. Single-threaded; allocation-free.
 */
final class ChunkCurve {
    private final int dims;
    private final Interpolation kind;
    /** Tangent per point and joint, in value units per step; used for {@link Interpolation#CUBIC_HERMITE}. */
    private final double[] tangents;

    ChunkCurve(int dims, int maxSteps, Interpolation kind) {
        this.dims = dims;
        this.kind = kind;
        this.tangents = kind == Interpolation.CUBIC_HERMITE ? new double[maxSteps * dims] : new double[0];
    }

    /** Prepares the tangents for the first {@code points} points of {@code chunk} (row-major, points × dims). O(points·dims). */
    void prepare(double[] chunk, int points) {
        if (kind != Interpolation.CUBIC_HERMITE || points < 2) {
            return;
        }
        int last = points - 1;
        for (int d = 0; d < dims; d++) {
            tangents[d] = chunk[dims + d] - chunk[d];
            tangents[last * dims + d] = chunk[last * dims + d] - chunk[(last - 1) * dims + d];
        }
        for (int j = 1; j < last; j++) {
            int row = j * dims;
            for (int d = 0; d < dims; d++) {
                double before = chunk[row + d] - chunk[row - dims + d];
                double after = chunk[row + dims + d] - chunk[row + d];
                double product = before * after;
                tangents[row + d] = product > 0.0 ? 2.0 * product / (before + after) : 0.0;
            }
        }
    }

    /**
     * Writes the plan value at fractional step {@code u} (0 ≤ u ≤ points−1; values a hair outside are
     * clamped) into {@code out[0..dims)}. Needs {@link #prepare} for the same chunk first. O(dims).
     */
    void evaluate(double[] chunk, int points, double u, double[] out) {
        if (points == 1) {
            System.arraycopy(chunk, 0, out, 0, dims);
            return;
        }
        int j = u <= 0.0 ? 0 : (int) u;
        if (j > points - 2) {
            j = points - 2;
        }
        double s = u - j;
        if (s < 0.0) {
            s = 0.0;
        } else if (s > 1.0) {
            s = 1.0;
        }
        int a = j * dims;
        int b = a + dims;
        if (s == 1.0) {
            System.arraycopy(chunk, b, out, 0, dims);
            return;
        }
        if (kind == Interpolation.LINEAR) {
            for (int d = 0; d < dims; d++) {
                double pa = chunk[a + d];
                out[d] = pa + s * (chunk[b + d] - pa);
            }
        } else {
            // Hermite basis written as p_a + h01·(p_b − p_a) + h10·m_a + h11·m_b (h00 = 1 − h01), so
            // that equal points with zero tangents give exactly p_a.
            double oneMinus = 1.0 - s;
            double h01 = s * s * (3.0 - 2.0 * s);
            double h10 = s * oneMinus * oneMinus;
            double h11 = -s * s * oneMinus;
            for (int d = 0; d < dims; d++) {
                double pa = chunk[a + d];
                out[d] = pa + h01 * (chunk[b + d] - pa) + h10 * tangents[a + d] + h11 * tangents[b + d];
            }
        }
    }
}
