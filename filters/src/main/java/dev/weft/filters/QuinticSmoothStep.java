package dev.weft.filters;

/**
 * The quintic smooth step {@code S(s) = 6s⁵ − 15s⁴ + 10s³} on {@code [0, 1]} (the fade curve of Perlin,
 * "Improving Noise", SIGGRAPH 2002): {@code S(0) = 0}, {@code S(1) = 1}, and its first and second
 * derivatives vanish at both ends, so a weight or a blend factor that follows it joins a constant 0 before
 * and a constant 1 after with continuous value, slope and curvature (C2). Outside {@code [0, 1]} it is
 * clamped (0 below, 1 above, derivatives 0). Largest values of the derivatives on {@code [0, 1]}:
 * {@code S' = 15/8} at {@code s = 1/2}, {@code |S''| = 10/√3} at {@code s = 1/2 ∓ √3/6},
 * {@code |S'''| = 60} at the two ends (where the third derivative jumps: S is C2, not C3).
 *
 * <p>Stateless, allocation-free; package-private helper of the blenders.
 */
final class QuinticSmoothStep {

    private QuinticSmoothStep() {
    }

    /** {@code S(s)}, clamped outside {@code [0, 1]}. */
    static double value(double s) {
        if (s <= 0.0) {
            return 0.0;
        }
        if (s >= 1.0) {
            return 1.0;
        }
        return s * s * s * (10.0 + s * (-15.0 + 6.0 * s));
    }

    /** {@code S'(s) = 30s²(1 − s)²}, 0 outside {@code (0, 1)}. */
    static double firstDerivative(double s) {
        if (s <= 0.0 || s >= 1.0) {
            return 0.0;
        }
        double t = s * (1.0 - s);
        return 30.0 * t * t;
    }

    /** {@code S''(s) = 60s(1 − s)(1 − 2s)}, 0 outside {@code (0, 1)}. */
    static double secondDerivative(double s) {
        if (s <= 0.0 || s >= 1.0) {
            return 0.0;
        }
        return 60.0 * s * (1.0 - s) * (1.0 - 2.0 * s);
    }
}
