package dev.weft.filters;

/**
 * Evaluates one chunk's plan, and its first and second derivatives, as a function of the (fractional)
 * step index {@code u}. Package-private workspace of the blenders: the per-point coefficients (Hermite
 * tangents or spline second derivatives) are prepared once per accepted chunk, into arrays allocated at
 * construction. Single-threaded; allocation-free.
 *
 * <p>Derivatives are with respect to {@code u} (per policy step); the blender divides them by {@code r}
 * and {@code r²} to get rates per control tick. Where the curve has a knot (an integer {@code u}) and is
 * not smooth there, the segment that starts at the knot is used (the one the plan is entering), except at
 * the last point, which only has the segment before it.
 */
final class ChunkCurve {
    private final int dims;
    private final Interpolation kind;
    /**
     * Per point and joint (row-major, points × dims): for {@link Interpolation#CUBIC_HERMITE} the tangent
     * in value units per step, for {@link Interpolation#CUBIC_SPLINE} the second derivative in value units
     * per step²; unused for {@link Interpolation#LINEAR}.
     */
    private final double[] coefficients;
    /**
     * Spline only: the forward-sweep factors of the Thomas algorithm for the natural-spline system
     * {@code M[i−1] + 4·M[i] + M[i+1] = rhs[i]}, which depend on the matrix alone: {@code sweep[0] = 0},
     * {@code sweep[i] = 1/(4 − sweep[i−1])}. Computed once at construction.
     */
    private final double[] sweep;

    ChunkCurve(int dims, int maxSteps, Interpolation kind) {
        this.dims = dims;
        this.kind = kind;
        this.coefficients = kind == Interpolation.LINEAR ? new double[0] : new double[maxSteps * dims];
        this.sweep = new double[kind == Interpolation.CUBIC_SPLINE ? maxSteps : 0];
        for (int i = 1; i < sweep.length; i++) {
            sweep[i] = 1.0 / (4.0 - sweep[i - 1]);
        }
    }

    /**
     * Prepares the coefficients for the first {@code points} points of {@code chunk} (row-major,
     * points × dims; read only). O(points·dims).
     */
    void prepare(double[] chunk, int points) {
        if (points < 2) {
            return;
        }
        if (kind == Interpolation.CUBIC_HERMITE) {
            prepareHermite(chunk, points);
        } else if (kind == Interpolation.CUBIC_SPLINE) {
            prepareSpline(chunk, points);
        }
    }

    private void prepareHermite(double[] chunk, int points) {
        int last = points - 1;
        for (int d = 0; d < dims; d++) {
            coefficients[d] = endTangent(chunk[d], chunk[dims + d]);
            coefficients[last * dims + d] = endTangent(chunk[(last - 1) * dims + d], chunk[last * dims + d]);
        }
        for (int j = 1; j < last; j++) {
            int row = j * dims;
            for (int d = 0; d < dims; d++) {
                coefficients[row + d] = interiorTangent(chunk[row - dims + d], chunk[row + d], chunk[row + dims + d]);
            }
        }
    }

    /**
     * Fritsch–Butland tangent at an interior point: the harmonic mean {@code 2ab/(a + b)} of the secants
     * {@code a} (before) and {@code b} (after) when they have the same sign, else 0. Computed from half
     * secants ({@code x/2 − y/2}, the exact halves of the secants whenever those are finite, and never
     * overflowing) and without forming the product {@code a·b}: {@code 4·(h_a·(h_b/(h_a + h_b)))}. The
     * ratio lies in {@code (0, 1]} and the harmonic mean never exceeds {@code h_a + h_b}, half the change
     * over the two segments, so the tangent is finite for every finite chunk.
     */
    static double interiorTangent(double previous, double current, double next) {
        double before = 0.5 * current - 0.5 * previous;
        double after = 0.5 * next - 0.5 * current;
        if (before > 0.0 && after > 0.0 || before < 0.0 && after < 0.0) {
            return 4.0 * (before * (after / (before + after)));
        }
        return 0.0;
    }

    /**
     * One-sided secant {@code to − from} at an end point; if the two finite values are more than
     * {@code Double.MAX_VALUE} apart the secant is clamped to {@code ±Double.MAX_VALUE} so that the tangent
     * stays finite.
     */
    static double endTangent(double from, double to) {
        double secant = 2.0 * (0.5 * to - 0.5 * from);
        if (secant > Double.MAX_VALUE) {
            return Double.MAX_VALUE;
        }
        if (secant < -Double.MAX_VALUE) {
            return -Double.MAX_VALUE;
        }
        return secant;
    }

    /**
     * Natural cubic spline on the uniform knots {@code u = 0, 1, …, points−1}: the second derivatives
     * {@code M} solve {@code M[j−1] + 4·M[j] + M[j+1] = 6·(y[j+1] − 2·y[j] + y[j−1])} for
     * {@code j = 1 … points−2} with {@code M[0] = M[points−1] = 0}, by the Thomas algorithm (forward
     * elimination with the precomputed {@link #sweep} factors, then back substitution), per joint.
     */
    private void prepareSpline(double[] chunk, int points) {
        int last = points - 1;
        for (int d = 0; d < dims; d++) {
            coefficients[d] = 0.0;
            coefficients[last * dims + d] = 0.0;
        }
        for (int j = 1; j < last; j++) {
            int row = j * dims;
            double factor = sweep[j];
            for (int d = 0; d < dims; d++) {
                double y = chunk[row + d];
                double rhs = 6.0 * ((chunk[row + dims + d] - y) - (y - chunk[row - dims + d]));
                coefficients[row + d] = (rhs - coefficients[row - dims + d]) * factor;
            }
        }
        for (int j = last - 2; j >= 1; j--) {
            int row = j * dims;
            double factor = sweep[j];
            for (int d = 0; d < dims; d++) {
                coefficients[row + d] -= factor * coefficients[row + dims + d];
            }
        }
    }

    /**
     * Writes the plan value at fractional step {@code u} (0 ≤ u ≤ points−1; values a hair outside are
     * clamped) into {@code position[0..dims)}, its derivative d/du into {@code slope[0..dims)} and its
     * second derivative d²/du² into {@code curvature[0..dims)}. Needs {@link #prepare} for the same chunk
     * first. Exactly at a plan point the value is that point, bit for bit. O(dims).
     */
    void evaluate(double[] chunk, int points, double u, double[] position, double[] slope, double[] curvature) {
        if (points == 1) {
            for (int d = 0; d < dims; d++) {
                position[d] = chunk[d];
                slope[d] = 0.0;
                curvature[d] = 0.0;
            }
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
        switch (kind) {
            case LINEAR:
                linear(chunk, a, b, s, position, slope, curvature);
                break;
            case CUBIC_HERMITE:
                hermite(chunk, a, b, s, position, slope, curvature);
                break;
            default:
                spline(chunk, a, b, s, position, slope, curvature);
        }
    }

    private void linear(double[] chunk, int a, int b, double s, double[] position, double[] slope, double[] curvature) {
        for (int d = 0; d < dims; d++) {
            double pa = chunk[a + d];
            double pb = chunk[b + d];
            double change = pb - pa;
            position[d] = s == 0.0 ? pa : s == 1.0 ? pb : pa + s * change;
            slope[d] = change;
            curvature[d] = 0.0;
        }
    }

    private void hermite(double[] chunk, int a, int b, double s, double[] position, double[] slope, double[] curvature) {
        // Hermite basis written as p_a + h01·(p_b − p_a) + h10·m_a + h11·m_b (h00 = 1 − h01), so that
        // equal points with zero tangents give exactly p_a; derivatives of the same basis in s (= u).
        double oneMinus = 1.0 - s;
        double h01 = s * s * (3.0 - 2.0 * s);
        double h10 = s * oneMinus * oneMinus;
        double h11 = -s * s * oneMinus;
        double d01 = 6.0 * s * oneMinus;
        double d10 = oneMinus * (1.0 - 3.0 * s);
        double d11 = s * (3.0 * s - 2.0);
        double c01 = 6.0 - 12.0 * s;
        double c10 = 6.0 * s - 4.0;
        double c11 = 6.0 * s - 2.0;
        for (int d = 0; d < dims; d++) {
            double pa = chunk[a + d];
            double pb = chunk[b + d];
            double change = pb - pa;
            double ma = coefficients[a + d];
            double mb = coefficients[b + d];
            position[d] = s == 0.0 ? pa : s == 1.0 ? pb : pa + h01 * change + h10 * ma + h11 * mb;
            slope[d] = d01 * change + d10 * ma + d11 * mb;
            curvature[d] = c01 * change + c10 * ma + c11 * mb;
        }
    }

    private void spline(double[] chunk, int a, int b, double s, double[] position, double[] slope, double[] curvature) {
        // On a unit segment: y(s) = y_a + s·(y_b − y_a) − s(1−s)·((2−s)·M_a + (1+s)·M_b)/6, the usual form
        // (1−s)·y_a + s·y_b + ((1−s)³ − (1−s))·M_a/6 + (s³ − s)·M_b/6 rearranged.
        double oneMinus = 1.0 - s;
        double bend = s * oneMinus / 6.0;
        double ka = (3.0 * oneMinus * oneMinus - 1.0) / 6.0;
        double kb = (3.0 * s * s - 1.0) / 6.0;
        for (int d = 0; d < dims; d++) {
            double pa = chunk[a + d];
            double pb = chunk[b + d];
            double change = pb - pa;
            double ma = coefficients[a + d];
            double mb = coefficients[b + d];
            position[d] = s == 0.0 ? pa : s == 1.0 ? pb
                    : pa + s * change - bend * ((2.0 - s) * ma + (1.0 + s) * mb);
            slope[d] = change - ka * ma + kb * mb;
            curvature[d] = oneMinus * ma + s * mb;
        }
    }
}
