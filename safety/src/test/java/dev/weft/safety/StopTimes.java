package dev.weft.safety;

/**
 * Minimum time to bring a jerk-driven axis from velocity v and acceleration a to v = 0, a = 0 with
 * |a| &lt;= amax and |j| &lt;= jmax. Test code, written on its own from the minimum principle for the
 * chain (v, a) with input j (bang-bang with at most one switch, a plateau at -amax when the
 * unconstrained peak would exceed it; common practice in time-optimal control).
 */
final class StopTimes {

    private StopTimes() {
    }

    static double minimum(double v, double a, double amax, double jmax) {
        // Velocity reached when the acceleration is removed as fast as possible.
        double residual = v + a * Math.abs(a) / (2 * jmax);
        if (residual == 0) {
            return Math.abs(a) / jmax;
        }
        if (residual < 0) {
            return minimum(-v, -a, amax, jmax);
        }
        // Decelerate: a goes from a to -p (time (a + p) / jmax), stays at -p, then back to 0 (p / jmax).
        // Velocity balance without plateau: v + a^2 / (2 jmax) - p^2 / jmax = 0.
        double p = Math.sqrt(jmax * v + a * a / 2);
        if (p <= amax) {
            return (a + 2 * p) / jmax;
        }
        double plateau = (v + a * a / (2 * jmax) - amax * amax / jmax) / amax;
        return (a + 2 * amax) / jmax + plateau;
    }

    /**
     * The same for a = 0 from the double-S deceleration phase of Biagiotti and Melchiorri (2008),
     * Section 3.4, case 1, with vmax = v and v1 = 0: Td = 2 sqrt(v / jmax) when v jmax &lt; amax^2,
     * otherwise Td = amax / jmax + v / amax.
     */
    static double fromRestAcceleration(double v, double amax, double jmax) {
        double s = Math.abs(v);
        return s * jmax < amax * amax ? 2 * Math.sqrt(s / jmax) : amax / jmax + s / amax;
    }
}
