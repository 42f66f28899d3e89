package dev.weft.safety;

/**
 * Measures an emitted command sequence by finite differences at the control period, exactly as
 * the bounds are defined: v[n] = (q[n] - q[n-1]) / dt, a[n] = (v[n] - v[n-1]) / dt,
 * j[n] = (a[n] - a[n-1]) / dt, and counts every sample beyond a bound by more than
 * {@link #RELATIVE_TOLERANCE} of that bound.
 */
final class BoundChecker {

    /** Shared tolerance of every bound check in the tests: 1e-9 of the bound. */
    static final double RELATIVE_TOLERANCE = 1e-9;

    private final JointLimits limits;
    private final double dt;
    private final int n;
    private final double[] q1;
    private final double[] v1;
    private final double[] a1;
    private long samples;
    long violations;
    String firstViolation;
    /** Largest |v|/V, |a|/A, |j|/J seen. */
    final double[] worstShare;

    BoundChecker(JointLimits limits, double dt) {
        this.limits = limits;
        this.dt = dt;
        this.n = limits.count();
        q1 = new double[n];
        v1 = new double[n];
        a1 = new double[n];
        worstShare = new double[3];
    }

    /** Starts a new sequence at a known state (position and finite-difference velocity/acceleration). */
    void start(double[] q, double[] v, double[] a) {
        for (int i = 0; i < n; i++) {
            q1[i] = q[i];
            v1[i] = v == null ? 0.0 : v[i];
            a1[i] = a == null ? 0.0 : a[i];
        }
        samples = 0;
    }

    void accept(long tick, double[] q) {
        for (int i = 0; i < n; i++) {
            double v = (q[i] - q1[i]) / dt;
            double a = (v - v1[i]) / dt;
            double j = (a - a1[i]) / dt;
            double lo = limits.operatingMin(i);
            double hi = limits.operatingMax(i);
            check(tick, i, "position", !(q[i] >= lo && q[i] <= hi), q[i]);
            check(tick, i, "velocity", !(Math.abs(v) <= limits.velocity(i) * (1 + RELATIVE_TOLERANCE)), v);
            check(tick, i, "acceleration", !(Math.abs(a) <= limits.acceleration(i) * (1 + RELATIVE_TOLERANCE)), a);
            check(tick, i, "jerk", !(Math.abs(j) <= limits.jerk(i) * (1 + RELATIVE_TOLERANCE)), j);
            share(0, Math.abs(v) / limits.velocity(i));
            share(1, Math.abs(a) / limits.acceleration(i));
            share(2, Math.abs(j) / limits.jerk(i));
            q1[i] = q[i];
            v1[i] = v;
            a1[i] = a;
        }
        samples++;
    }

    private void share(int k, double s) {
        if (s > worstShare[k]) {
            worstShare[k] = s;
        }
    }

    private void check(long tick, int joint, String what, boolean bad, double value) {
        if (bad) {
            violations++;
            if (firstViolation == null) {
                firstViolation = "tick " + tick + " joint " + joint + " " + what + " " + value;
            }
        }
    }
}
