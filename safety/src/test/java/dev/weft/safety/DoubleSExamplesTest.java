package dev.weft.safety;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import org.junit.jupiter.api.Test;

/**
 * Worked double-S examples of Biagiotti and Melchiorri, "Trajectory Planning for Automatic Machines
 * and Robots", Springer 2008, Section 3.4 (Examples 3.9 to 3.12). The printed values are from
 * memory; each is recomputed here with the closed form of {@link DoubleS}, and the limiter is run at
 * 1 kHz from the same start state.
 */
class DoubleSExamplesTest {

    private static final double DT = 1e-3;
    /** Four-decimal values as printed in the book (from memory; recomputed here). */
    private static final double PRINTED = 1.5e-4;

    @Test
    void example39ReachesMaximumVelocity() {
        // Example 3.9: q0 = 0, q1 = 10, v0 = 1, v1 = 0, vmax = 5, amax = 10, jmax = 30.
        DoubleS d = DoubleS.plan(0, 10, 1, 0, 5, 10, 30);
        assertThat(d.ta).isCloseTo(0.7333, within(PRINTED));
        assertThat(d.tv).isCloseTo(1.1433, within(PRINTED));
        assertThat(d.td).isCloseTo(0.8333, within(PRINTED));
        assertThat(d.tj1).isCloseTo(0.3333, within(PRINTED));
        assertThat(d.tj2).isCloseTo(0.3333, within(PRINTED));
        assertThat(d.total).isCloseTo(2.7100, within(PRINTED));
        Run r = run(10, 1, 5, 10, 30);
        // The double-S is the minimum-time profile here: the limiter must match it within a few ticks.
        assertThat(r.arrivalSeconds).isCloseTo(d.total, within(3 * DT));
        // Phase boundaries of the profile show in the emitted command: cruise at vmax from Ta to Ta + Tv.
        assertThat(r.firstAtVmax).isCloseTo(d.ta, within(3 * DT));
        assertThat(r.lastAtVmax).isCloseTo(d.ta + d.tv, within(3 * DT));
        assertThat(r.peakAcceleration).isCloseTo(10, within(1e-6));
    }

    @Test
    void example310DoesNotReachMaximumVelocity() {
        // Example 3.10: as 3.9 with vmax = 10; vmax is not reached, amax is.
        DoubleS d = DoubleS.plan(0, 10, 1, 0, 10, 10, 30);
        assertThat(d.ta).isCloseTo(1.0747, within(PRINTED));
        assertThat(d.tv).isZero();
        assertThat(d.td).isCloseTo(1.1747, within(PRINTED));
        assertThat(d.tj1).isCloseTo(0.3333, within(PRINTED));
        assertThat(d.total).isCloseTo(2.2494, within(PRINTED));
        Run r = run(10, 1, 10, 10, 30);
        assertThat(r.arrivalSeconds).isCloseTo(d.total, within(3 * DT));
    }

    @Test
    void example311LowersTheAccelerationOfBothPhases() {
        // Example 3.11: v0 = 7, vmax = 10, amax = 10, jmax = 30; the book lowers amax (to about 6.96)
        // for the acceleration and the deceleration phase alike.
        DoubleS d = DoubleS.plan(0, 10, 7, 0, 10, 10, 30);
        assertThat(d.ta).isCloseTo(0.4666, within(PRINTED));
        assertThat(d.td).isCloseTo(1.4718, within(PRINTED));
        assertThat(d.tj1).isCloseTo(0.2321, within(PRINTED));
        assertThat(d.tj2).isCloseTo(0.2321, within(PRINTED));
        assertThat(d.total).isCloseTo(1.9384, within(PRINTED));
        Run r = run(10, 7, 10, 10, 30);
        // The limiter keeps the full deceleration bound, so it is at least as fast as the book's profile.
        assertThat(r.arrivalSeconds).isLessThanOrEqualTo(d.total + 3 * DT);
        assertThat(r.arrivalSeconds).isGreaterThan(lowerBound(10, 7, 10, 10, 30));
    }

    @Test
    void example312DeceleratesOnly() {
        // Example 3.12: v0 = 7.5; the book's profile has Ta = 0 and decelerates over the whole move.
        DoubleS d = DoubleS.plan(0, 10, 7.5, 0, 10, 10, 30);
        assertThat(d.ta).isZero();
        assertThat(d.td).isCloseTo(2.6667, within(PRINTED));
        assertThat(d.tj2).isCloseTo(0.0973, within(PRINTED));
        assertThat(d.total).isCloseTo(2.6667, within(PRINTED));
        Run r = run(10, 7.5, 10, 10, 30);
        // Holding 7.5 and stopping at the end (Td = 1.0833 s over 4.0625) already takes only
        // 5.9375 / 7.5 + 1.0833 = 1.875 s, so a minimum-time filter must beat the book's 2.6667 s.
        assertThat(r.arrivalSeconds).isLessThanOrEqualTo(1.875 + 3 * DT);
        assertThat(r.arrivalSeconds).isGreaterThan(lowerBound(10, 7.5, 10, 10, 30));
    }

    @Test
    void restToRestCasesMatchTheClosedForm() {
        // Rest-to-rest with the same bounds (Section 3.4 closed form, v0 = v1 = 0): with and without cruise.
        double[][] cases = {{10, 5, 10, 30}, {10, 10, 20, 30}, {0.01, 2, 10, 100}, {3, 1, 50, 500}};
        for (double[] c : cases) {
            DoubleS d = DoubleS.plan(0, c[0], 0, 0, c[1], c[2], c[3]);
            Run r = run(c[0], 0, c[1], c[2], c[3]);
            assertThat(r.arrivalSeconds).as("case %s", java.util.Arrays.toString(c))
                    .isCloseTo(d.total, within(3 * DT));
        }
    }

    @Test
    void example39PhasesAreTheBookPolynomials() {
        // Least-squares polynomial fits with EJML (general-purpose reference library) over the
        // emitted samples of Example 3.9: the first jerk phase is q = v0 t + jmax t^3 / 6, the
        // cruise phase is a line of slope vmax (the phase shapes of the double-S, Biagiotti and
        // Melchiorri 2008, Section 3.4).
        Run r = run(10, 1, 5, 10, 30);
        double[] cubic = fit(r.samples, 0, 330, 3);
        assertThat(cubic[0]).isCloseTo(0, within(1e-9));
        assertThat(cubic[1]).isCloseTo(1, within(1e-7));
        assertThat(cubic[2]).isCloseTo(0, within(1e-6));
        // The limiter plans with the jerk bound less its rounding margin (16 ulp(50) / dt^3, about 1e-4 here).
        assertThat(cubic[3]).isCloseTo(30.0 / 6.0, within(3e-5));
        DoubleS d = DoubleS.plan(0, 10, 1, 0, 5, 10, 30);
        int from = (int) Math.ceil(d.ta / DT) + 5;
        int to = (int) Math.floor((d.ta + d.tv) / DT) - 5;
        double[] line = fit(r.samples, from, to, 1);
        // cruise sits a few parts per million under vmax (bisection resolution and rounding margin)
        assertThat(line[1]).isCloseTo(5, within(5e-5));
    }

    /** Coefficients c0..c_degree of the least-squares polynomial in t = k * DT over samples[from..to]. */
    private static double[] fit(double[] samples, int from, int to, int degree) {
        int n = to - from + 1;
        org.ejml.data.DMatrixRMaj design = new org.ejml.data.DMatrixRMaj(n, degree + 1);
        org.ejml.data.DMatrixRMaj y = new org.ejml.data.DMatrixRMaj(n, 1);
        for (int i = 0; i < n; i++) {
            double t = (from + i) * DT;
            double p = 1;
            for (int c = 0; c <= degree; c++) {
                design.set(i, c, p);
                p *= t;
            }
            y.set(i, 0, samples[from + i]);
        }
        org.ejml.data.DMatrixRMaj x = new org.ejml.data.DMatrixRMaj(degree + 1, 1);
        org.ejml.interfaces.linsol.LinearSolverDense<org.ejml.data.DMatrixRMaj> solver =
                org.ejml.dense.row.factory.LinearSolverFactory_DDRM.leastSquaresQrPivot(true, false);
        assertThat(solver.setA(design)).isTrue();
        solver.solve(y, x);
        double[] out = new double[degree + 1];
        for (int c = 0; c <= degree; c++) {
            out[c] = x.get(c, 0);
        }
        return out;
    }

    /**
     * Two bounds no admissible profile can beat: the distance covered at vmax throughout, and the
     * time needed to remove the initial velocity from zero acceleration at full deceleration (the
     * deceleration phase of Section 3.4, case 1, with vmax = v0 and v1 = 0).
     */
    private static double lowerBound(double h, double v0, double vmax, double amax, double jmax) {
        double td = v0 * jmax < amax * amax ? 2 * Math.sqrt(v0 / jmax) : amax / jmax + v0 / amax;
        return Math.max(h / vmax, td);
    }

    private static final class Run {
        double arrivalSeconds = Double.NaN;
        double firstAtVmax = Double.NaN;
        double lastAtVmax = Double.NaN;
        double peakAcceleration;
        final double[] samples = new double[10_001];
    }

    private static Run run(double q1, double v0, double vmax, double amax, double jmax) {
        JointLimits limits = JointLimits.builder().joint("axis", -50, 50, vmax, amax, jmax).build();
        JerkLimiter limiter = JerkLimiter.create(limits, DT);
        assertThat(limiter.reset(new double[] {0}, new double[] {v0}, new double[] {0})).isTrue();
        BoundChecker checker = new BoundChecker(limits, DT);
        checker.start(new double[] {0}, new double[] {v0}, new double[] {0});
        double[] target = {q1};
        double[] command = new double[1];
        Run r = new Run();
        r.samples[0] = 0;
        double prevQ = 0;
        double prevV = v0;
        double maxQ = Double.NEGATIVE_INFINITY;
        for (int k = 1; k <= 10_000; k++) {
            limiter.apply(target, command);
            checker.accept(k, command);
            r.samples[k] = command[0];
            double v = (command[0] - prevQ) / DT;
            double a = (v - prevV) / DT;
            r.peakAcceleration = Math.max(r.peakAcceleration, a);
            if (v >= vmax * (1 - 1e-6)) {
                if (Double.isNaN(r.firstAtVmax)) {
                    r.firstAtVmax = k * DT;
                }
                r.lastAtVmax = k * DT;
            }
            maxQ = Math.max(maxQ, command[0]);
            if (Double.isNaN(r.arrivalSeconds) && Math.abs(command[0] - q1) <= 1e-9 && limiter.atRest()) {
                r.arrivalSeconds = k * DT;
            }
            prevQ = command[0];
            prevV = v;
        }
        assertThat(checker.violations).as(checker.firstViolation).isZero();
        assertThat(maxQ).as("overshoot").isLessThanOrEqualTo(q1 + 1e-12);
        assertThat(r.arrivalSeconds).isNotNaN();
        System.out.printf("double-S run: q1=%s v0=%s vmax=%s amax=%s jmax=%s arrives at %.3f s%n",
                q1, v0, vmax, amax, jmax, r.arrivalSeconds);
        return r;
    }
}
