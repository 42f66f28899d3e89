package dev.weft.safety;

/**
 * Reference closed form of the double-S profile with given initial and final velocity (zero initial
 * and final acceleration), written from the algorithm of Biagiotti and Melchiorri, "Trajectory
 * Planning for Automatic Machines and Robots", Springer 2008, Section 3.4.2 (case 1: maximum
 * velocity reached; case 2: not reached, with the maximum acceleration lowered step by step when an
 * acceleration or deceleration phase cannot reach it; the Ta &lt; 0 and Td &lt; 0 special cases).
 * For q1 &gt; q0. Test code only; independent of the limiter.
 */
final class DoubleS {
    final double ta;
    final double tv;
    final double td;
    final double tj1;
    final double tj2;
    final double total;
    final double alimA;

    private DoubleS(double ta, double tv, double td, double tj1, double tj2, double alimA) {
        this.ta = ta;
        this.tv = tv;
        this.td = td;
        this.tj1 = tj1;
        this.tj2 = tj2;
        this.total = ta + tv + td;
        this.alimA = alimA;
    }

    static DoubleS plan(double q0, double q1, double v0, double v1, double vmax, double amax, double jmax) {
        double h = q1 - q0;
        double tj1;
        double ta;
        if ((vmax - v0) * jmax < amax * amax) {
            tj1 = Math.sqrt((vmax - v0) / jmax);
            ta = 2 * tj1;
        } else {
            tj1 = amax / jmax;
            ta = tj1 + (vmax - v0) / amax;
        }
        double tj2;
        double td;
        if ((vmax - v1) * jmax < amax * amax) {
            tj2 = Math.sqrt((vmax - v1) / jmax);
            td = 2 * tj2;
        } else {
            tj2 = amax / jmax;
            td = tj2 + (vmax - v1) / amax;
        }
        double tv = h / vmax - ta / 2 * (1 + v0 / vmax) - td / 2 * (1 + v1 / vmax);
        if (tv > 0) {
            return new DoubleS(ta, tv, td, tj1, tj2, Math.min(amax, jmax * tj1));
        }
        double a = amax;
        // Section 3.4.2, case 2: lower amax by a factor 0.99 until both phases reach it (gamma = 0.99).
        for (int iter = 0; iter < 10_000; iter++) {
            double tj = a / jmax;
            double delta = Math.pow(a, 4) / (jmax * jmax) + 2 * (v0 * v0 + v1 * v1)
                    + a * (4 * h - 2 * a / jmax * (v0 + v1));
            ta = (a * a / jmax - 2 * v0 + Math.sqrt(delta)) / (2 * a);
            td = (a * a / jmax - 2 * v1 + Math.sqrt(delta)) / (2 * a);
            if (ta < 0) {
                td = 2 * h / (v1 + v0);
                tj2 = (jmax * h - Math.sqrt(jmax * (jmax * h * h + (v1 + v0) * (v1 + v0) * (v1 - v0))))
                        / (jmax * (v1 + v0));
                return new DoubleS(0, 0, td, 0, tj2, 0);
            }
            if (td < 0) {
                ta = 2 * h / (v1 + v0);
                tj1 = (jmax * h - Math.sqrt(jmax * (jmax * h * h - (v1 + v0) * (v1 + v0) * (v1 - v0))))
                        / (jmax * (v1 + v0));
                return new DoubleS(ta, 0, 0, tj1, 0, jmax * tj1);
            }
            if (ta >= 2 * tj && td >= 2 * tj) {
                return new DoubleS(ta, 0, td, tj, tj, a);
            }
            a *= 0.99;
        }
        throw new IllegalStateException("double-S iteration did not converge");
    }
}
