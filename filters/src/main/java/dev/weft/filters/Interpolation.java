package dev.weft.filters;

/**
 * How a chunk's plan points are joined when the control tick falls between two of them
 * (step ratio {@code r = Δp/Δc} not 1, or not an integer), and so also what the plan's velocity and
 * acceleration are ({@link ChunkBlender#stateAt}).
 *
 * <p>Every kind passes exactly through every plan point, and a one-point chunk is a constant (velocity and
 * acceleration 0). {@link #LINEAR} and {@link #CUBIC_HERMITE} never leave the interval spanned by the two
 * neighbouring plan points (between two equal points the value is exactly that point);
 * {@link #CUBIC_SPLINE} does not have that property: it may overshoot near a sharp turn.
 *
 * <p>Smoothness of one chunk's curve: {@link #LINEAR} is continuous (C0; velocity jumps at the points),
 * {@link #CUBIC_HERMITE} has a continuous velocity (C1; acceleration jumps at the points),
 * {@link #CUBIC_SPLINE} a continuous acceleration as well (C2). Where a derivative jumps at a point, the
 * value reported exactly at that point is the one of the segment that starts there (the one the plan is
 * entering), and at a chunk's last point the one of its last segment. (The fractional step of a tick is
 * computed in floating point, so a tick that should fall exactly on a point may land a rounding error to
 * either side of it.)
 */
public enum Interpolation {
    /**
     * Straight line between neighbouring plan points: velocity is the slope of the segment, acceleration
     * is 0.
     */
    LINEAR,
    /**
     * Cubic Hermite spline with shape-preserving tangents: at an interior point the tangent is the
     * harmonic mean of the two neighbouring secants when they have the same sign and zero otherwise
     * (Fritsch and Butland, 1984, the rule behind the common "PCHIP" interpolant); at the two end
     * points the tangent is the one-sided secant. Each segment is monotone, so it never overshoots. The
     * tangents are computed without forming the product of the secants, so they stay finite for every
     * finite chunk.
     */
    CUBIC_HERMITE,
    /**
     * Natural cubic spline interpolation through the chunk's executable points (de Boor, "A Practical
     * Guide to Splines", 1978; Burden and Faires, "Numerical Analysis", natural cubic spline algorithm):
     * the piecewise cubic with continuous first and second derivatives whose second derivative is zero at
     * both end points. Solved once per accepted chunk and joint by the Thomas algorithm for its tridiagonal
     * system, in workspace allocated at construction: O(points·D). Two points give the straight line. Not
     * bounded by the neighbouring points: it can overshoot.
     */
    CUBIC_SPLINE
}
