package dev.weft.filters;

/**
 * How a chunk's plan points are joined when the control tick falls between two of them
 * (step ratio {@code r = Δp/Δc} not 1, or not an integer).
 *
 * <p>Both kinds pass exactly through every plan point and never leave the interval spanned by the two
 * neighbouring plan points; in particular, between two equal points the value is exactly that point.
 */
public enum Interpolation {
    /** Straight line between neighbouring plan points. */
    LINEAR,
    /**
     * Cubic Hermite spline with shape-preserving tangents: at an interior point the tangent is the
     * harmonic mean of the two neighbouring secants when they have the same sign and zero otherwise
     * (Fritsch and Butland, 1984, the rule behind the common "PCHIP" interpolant); at the two end
     * points the tangent is the one-sided secant. Each segment is monotone, so it never overshoots.
     */
    CUBIC_HERMITE
}
