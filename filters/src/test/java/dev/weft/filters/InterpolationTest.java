package dev.weft.filters;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.util.Random;
import org.apache.commons.math3.analysis.UnivariateFunction;
import org.apache.commons.math3.analysis.interpolation.HermiteInterpolator;
import org.apache.commons.math3.analysis.interpolation.SplineInterpolator;
import org.apache.commons.math3.analysis.polynomials.PolynomialFunction;
import org.apache.commons.math3.analysis.polynomials.PolynomialSplineFunction;
import org.ejml.data.DMatrixRMaj;
import org.ejml.dense.row.CommonOps_DDRM;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.EnumSource;

class InterpolationTest {

    /** Plan of a single chunk (latest-chunk blender, so nothing else is mixed in) at every tick. */
    private static double[] resample(double[] points, double r, Interpolation kind) {
        LatestChunkBlender b = LatestChunkBlender.of(1, points.length, r, kind);
        int ticks = b.accept(points, points.length, 0, 0);
        double[] plan = new double[ticks];
        double[] out = new double[1];
        for (int t = 0; t < ticks; t++) {
            assertThat(b.actionAt(t, out)).isTrue();
            plan[t] = out[0];
        }
        return plan;
    }

    @ParameterizedTest
    @EnumSource(value = Interpolation.class, names = {"LINEAR", "CUBIC_HERMITE"})
    void neverLeavesTheIntervalOfTheTwoNeighbouringPointsAndIsExactBetweenEqualPoints(Interpolation kind) {
        Random rnd = new Random(42);
        for (int trial = 0; trial < 300; trial++) {
            int k = 2 + rnd.nextInt(12);
            double r = 0.7 + 12 * rnd.nextDouble();
            double[] p = new double[k];
            for (int j = 0; j < k; j++) {
                p[j] = j > 0 && rnd.nextInt(3) == 0 ? p[j - 1] : 10 * rnd.nextDouble() - 5;
            }
            double[] plan = resample(p, r, kind);
            for (int t = 0; t < plan.length; t++) {
                double u = t / r;
                int j = Math.min((int) Math.floor(u), k - 2);
                double lo = Math.min(p[j], p[j + 1]);
                double hi = Math.max(p[j], p[j + 1]);
                assertThat(plan[t]).as("trial %d tick %d", trial, t).isBetween(lo, hi);
                if (p[j] == p[j + 1]) {
                    assertThat(plan[t]).as("flat segment, trial %d tick %d", trial, t).isEqualTo(p[j]);
                }
            }
        }
    }

    @Test
    void passesThroughEveryPlanPointOnIntegerRatios() {
        double[] p = {0.5, -1.0, 2.0, 2.0, 7.0};
        for (Interpolation kind : Interpolation.values()) {
            double[] plan = resample(p, 4.0, kind);
            for (int j = 0; j < p.length; j++) {
                assertThat(plan[4 * j]).isEqualTo(p[j]);
            }
        }
    }

    @Test
    void cubicReproducesStraightLines() {
        // Equal secants: harmonic-mean and one-sided tangents both equal the slope, so the cubic is the line.
        double[] p = {1.0, 1.5, 2.0, 2.5, 3.0, 3.5};
        double[] plan = resample(p, 3.3, Interpolation.CUBIC_HERMITE);
        for (int t = 0; t < plan.length; t++) {
            assertThat(plan[t]).isCloseTo(1.0 + 0.5 * t / 3.3, within(1e-12));
        }
    }

    @Test
    void matchesScipyPchipAwayFromTheEndPoints() {
        // Values from SciPy 1.17.1, scipy.interpolate.PchipInterpolator(x = 0..7, y), a general-purpose
        // reference library. For uniform spacing its interior tangents are the harmonic mean of same-sign
        // secants (zero otherwise), the rule used here; its end-point rule differs, so only segments 1..5
        // (whose tangents are all interior) are compared. Ratio 4: tick 4u reads step u.
        double[] y = {0, 1, 3, 3.5, 2, 2, 4, 7};
        double[] plan = resample(y, 4.0, Interpolation.CUBIC_HERMITE);
        double[][] scipy = {
            {1.25, 1.4625000000000001}, {1.5, 2.0666666666666664}, {1.75, 2.6374999999999997},
            {2.25, 3.1906250000000003}, {2.75, 3.459375}, {3.5, 2.75}, {4.25, 2.0}, {4.5, 2.0},
            {5.25, 2.2}, {5.5, 2.6999999999999997}, {5.75, 3.3500000000000005}};
        for (double[] row : scipy) {
            assertThat(plan[(int) Math.round(4 * row[0])]).as("u = %s", row[0]).isCloseTo(row[1], within(1e-12));
        }
    }

    @Test
    void hermiteSegmentIsTheCubicThatMatchesValuesAndTangentsSolvedWithEjml() {
        // On segment [1, 2] of y = {0, 1, 3, 3.5} the tangents are m1 = 2/(1/1 + 1/2) = 4/3 and
        // m2 = 2/(1/2 + 1/0.5) = 0.8 (harmonic means). The cubic c0 + c1·s + c2·s² + c3·s³ with
        // value 1 and slope 4/3 at s = 0, value 3 and slope 0.8 at s = 1 is solved as a 4×4 system by
        // EJML (general-purpose linear algebra), independently of the Hermite basis used in main code.
        DMatrixRMaj a = new DMatrixRMaj(new double[][] {
            {1, 0, 0, 0}, {0, 1, 0, 0}, {1, 1, 1, 1}, {0, 1, 2, 3}});
        DMatrixRMaj rhs = new DMatrixRMaj(new double[][] {{1}, {4.0 / 3.0}, {3}, {0.8}});
        DMatrixRMaj c = new DMatrixRMaj(4, 1);
        assertThat(CommonOps_DDRM.solve(a, rhs, c)).isTrue();
        double[] plan = resample(new double[] {0, 1, 3, 3.5}, 8.0, Interpolation.CUBIC_HERMITE);
        for (int t = 8; t <= 16; t++) {
            double s = (t - 8) / 8.0;
            double cubic = c.get(0) + s * (c.get(1) + s * (c.get(2) + s * c.get(3)));
            assertThat(plan[t]).as("tick %d", t).isCloseTo(cubic, within(1e-12));
        }
    }

    /** One chunk's state (latest-chunk blender, nothing else mixed in) at every tick: {position, velocity, acceleration}. */
    private static double[][] resampleState(double[] points, double r, Interpolation kind) {
        LatestChunkBlender b = LatestChunkBlender.of(1, points.length, r, kind);
        int ticks = b.accept(points, points.length, 0, 0);
        double[][] state = new double[3][ticks];
        double[] p = new double[1];
        double[] v = new double[1];
        double[] a = new double[1];
        for (int t = 0; t < ticks; t++) {
            assertThat(b.stateAt(t, p, v, a)).isTrue();
            state[0][t] = p[0];
            state[1][t] = v[0];
            state[2][t] = a[0];
        }
        return state;
    }

    @Test
    void splineMatchesApacheCommonsMathNaturalSplineWithItsDerivatives() {
        // Apache Commons Math 3.6.1 (org.apache.commons:commons-math3, a general-purpose reference library
        // from Maven Central): SplineInterpolator computes the natural cubic spline (second derivative 0 at
        // both ends); PolynomialSplineFunction.derivative() differentiates its pieces. Knots at u = 0..K−1,
        // tick t is u = t/r, so the plan's velocity per tick is dy/du / r and its acceleration d²y/du² / r².
        Random rnd = new Random(2024);
        SplineInterpolator interpolator = new SplineInterpolator();
        int compared = 0;
        for (int trial = 0; trial < 200; trial++) {
            int k = 3 + rnd.nextInt(14);
            double r = rnd.nextInt(3) == 0 ? 1.0 / (1 + rnd.nextInt(3)) : 0.7 + 12 * rnd.nextDouble();
            double[] y = new double[k];
            double[] x = new double[k];
            for (int j = 0; j < k; j++) {
                x[j] = j;
                y[j] = 10 * rnd.nextDouble() - 5;
            }
            PolynomialSplineFunction spline = interpolator.interpolate(x, y);
            UnivariateFunction slope = spline.derivative();
            UnivariateFunction curvature = spline.polynomialSplineDerivative().derivative();
            double[][] state = resampleState(y, r, Interpolation.CUBIC_SPLINE);
            for (int t = 0; t < state[0].length; t++) {
                double u = Math.min(t / r, k - 1);
                assertThat(state[0][t]).as("value, trial %d tick %d", trial, t).isCloseTo(spline.value(u), within(1e-12));
                assertThat(state[1][t] * r).as("slope, trial %d tick %d", trial, t).isCloseTo(slope.value(u), within(1e-11));
                assertThat(state[2][t] * r * r).as("curvature, trial %d tick %d", trial, t)
                        .isCloseTo(curvature.value(u), within(1e-10));
                compared++;
            }
        }
        assertThat(compared).isGreaterThan(5000);
    }

    @Test
    void splineOfOnePointIsConstantAndOfTwoPointsIsTheStraightLine() {
        double[][] one = resampleState(new double[] {2.5}, 3.0, Interpolation.CUBIC_SPLINE);
        assertThat(one[0]).containsExactly(2.5);
        assertThat(one[1]).containsExactly(0.0);
        assertThat(one[2]).containsExactly(0.0);
        double[][] two = resampleState(new double[] {1.0, 4.0}, 6.0, Interpolation.CUBIC_SPLINE);
        for (int t = 0; t < two[0].length; t++) {
            assertThat(two[0][t]).isCloseTo(1.0 + 3.0 * t / 6.0, within(1e-15));
            assertThat(two[1][t]).isCloseTo(0.5, within(1e-15));
            assertThat(two[2][t]).isZero();
        }
    }

    @Test
    void splineIsTwiceContinuouslyDifferentiableAcrossItsKnotsAndHermiteIsNot() {
        // Left and right limits at each interior knot, from u = j ∓ δ: slope and curvature of the spline
        // agree to O(δ); the Hermite curve's slope agrees too (C1) but its curvature jumps (only C1), which
        // shows that the comparison can fail.
        Random rnd = new Random(5);
        double delta = 1e-9;
        double largestHermiteJump = 0;
        for (int trial = 0; trial < 100; trial++) {
            int k = 3 + rnd.nextInt(12);
            double[] y = new double[k];
            for (int j = 0; j < k; j++) {
                y[j] = 10 * rnd.nextDouble() - 5;
            }
            double[][] spline = limitsAtKnots(y, Interpolation.CUBIC_SPLINE, delta);
            double[][] hermite = limitsAtKnots(y, Interpolation.CUBIC_HERMITE, delta);
            for (int j = 1; j < k - 1; j++) {
                assertThat(spline[0][j]).as("spline value jump, knot %d", j).isCloseTo(0.0, within(1e-7));
                assertThat(spline[1][j]).as("spline slope jump, knot %d", j).isCloseTo(0.0, within(1e-6));
                assertThat(spline[2][j]).as("spline curvature jump, knot %d", j).isCloseTo(0.0, within(1e-6));
                assertThat(hermite[1][j]).as("Hermite slope jump, knot %d", j).isCloseTo(0.0, within(1e-6));
                largestHermiteJump = Math.max(largestHermiteJump, Math.abs(hermite[2][j]));
            }
        }
        assertThat(largestHermiteJump).isGreaterThan(1.0);
    }

    /** Right minus left limit of value, slope and curvature at each knot of a one-joint chunk. */
    private static double[][] limitsAtKnots(double[] y, Interpolation kind, double delta) {
        int k = y.length;
        ChunkCurve curve = new ChunkCurve(1, k, kind);
        curve.prepare(y, k);
        double[][] jumps = new double[3][k];
        double[] lp = new double[1];
        double[] ls = new double[1];
        double[] lc = new double[1];
        double[] rp = new double[1];
        double[] rs = new double[1];
        double[] rc = new double[1];
        for (int j = 1; j < k - 1; j++) {
            curve.evaluate(y, k, j - delta, lp, ls, lc);
            curve.evaluate(y, k, j + delta, rp, rs, rc);
            jumps[0][j] = rp[0] - lp[0];
            jumps[1][j] = rs[0] - ls[0];
            jumps[2][j] = rc[0] - lc[0];
        }
        return jumps;
    }

    @ParameterizedTest
    @EnumSource(Interpolation.class)
    void derivativesAreThoseOfTheEvaluatedCurve(Interpolation kind) {
        // Internal consistency (not an outside check): central differences of the curve's own values,
        // (f(u+h) − f(u−h))/2h and (f(u+h) − 2f(u) + f(u−h))/h², inside a segment, h = 1e-4. On a cubic
        // the first has error h²·f'''/6 and the second none but rounding (about 1e-16·|f|/h², 1e-7).
        Random rnd = new Random(8);
        double h = 1e-4;
        double[] p = new double[1];
        double[] s = new double[1];
        double[] c = new double[1];
        double[] scratch = new double[1];
        double[] scratch2 = new double[1];
        for (int trial = 0; trial < 200; trial++) {
            int k = 2 + rnd.nextInt(12);
            double[] y = new double[k];
            for (int j = 0; j < k; j++) {
                y[j] = j > 0 && rnd.nextInt(4) == 0 ? y[j - 1] : 10 * rnd.nextDouble() - 5;
            }
            ChunkCurve curve = new ChunkCurve(1, k, kind);
            curve.prepare(y, k);
            for (int probe = 0; probe < 10; probe++) {
                double u = rnd.nextInt(k - 1) + 0.01 + 0.98 * rnd.nextDouble();
                curve.evaluate(y, k, u + h, p, scratch, scratch2);
                double ahead = p[0];
                curve.evaluate(y, k, u - h, p, scratch, scratch2);
                double behind = p[0];
                curve.evaluate(y, k, u, p, s, c);
                assertThat(s[0]).as("slope, trial %d u %s", trial, u).isCloseTo((ahead - behind) / (2 * h), within(1e-6));
                assertThat(c[0]).as("curvature, trial %d u %s", trial, u)
                        .isCloseTo((ahead - 2 * p[0] + behind) / (h * h), within(1e-5));
            }
        }
    }

    @Test
    void linearSlopeAtAKnotIsThatOfTheSegmentThatStartsThere() {
        // Points 0, 1, 3 at r = 2: tick 2 is the knot u = 1; the segment starting there rises by 2 per
        // step, i.e. 1 per tick; the last point (tick 4) has only the segment before it.
        double[][] state = resampleState(new double[] {0, 1, 3}, 2.0, Interpolation.LINEAR);
        assertThat(state[1]).containsExactly(0.5, 0.5, 1.0, 1.0, 1.0);
        assertThat(state[2]).containsOnly(0.0);
    }

    @Test
    void hermiteSegmentDerivativesMatchApacheCommonsMathHermitePolynomial() {
        // Apache Commons Math 3.6.1 HermiteInterpolator (a general-purpose reference library from Maven
        // Central) builds the cubic through the values 1 and 3 with slopes 4/3 and 0.8 at u = 1 and 2 (the
        // Fritsch–Butland tangents of y = {0, 1, 3, 3.5}, as in the EJML test above); its derivative
        // polynomials give the expected slope and curvature per step. Ratio 8: tick t is u = t/8.
        HermiteInterpolator reference = new HermiteInterpolator();
        reference.addSamplePoint(1.0, new double[] {1.0}, new double[] {4.0 / 3.0});
        reference.addSamplePoint(2.0, new double[] {3.0}, new double[] {0.8});
        PolynomialFunction cubic = reference.getPolynomials()[0];
        PolynomialFunction slope = cubic.polynomialDerivative();
        PolynomialFunction curvature = slope.polynomialDerivative();
        double[][] state = resampleState(new double[] {0, 1, 3, 3.5}, 8.0, Interpolation.CUBIC_HERMITE);
        for (int t = 9; t < 16; t++) {
            double u = t / 8.0;
            assertThat(state[0][t]).as("tick %d", t).isCloseTo(cubic.value(u), within(1e-12));
            assertThat(state[1][t] * 8.0).as("slope, tick %d", t).isCloseTo(slope.value(u), within(1e-12));
            assertThat(state[2][t] * 64.0).as("curvature, tick %d", t).isCloseTo(curvature.value(u), within(1e-12));
        }
    }

    @Test
    void hermiteTangentsStayFiniteForHugeFiniteValues() {
        // Secants 1e154 and 2e154: their product 2e308 exceeds Double.MAX_VALUE (about 1.797e308), so the
        // harmonic mean 2ab/(a + b) formed as written overflows to infinity although the mean itself,
        // 2·1e154·2e154/3e154 = 1.333e154, is an ordinary number.
        assertThat(1e154 * 2e154).isInfinite();
        assertThat(ChunkCurve.interiorTangent(0, 1e154, 3e154)).isCloseTo(4.0 / 3.0 * 1e154, within(1e139));
        assertThat(ChunkCurve.interiorTangent(0, 1e300, 3e300)).isCloseTo(4.0 / 3.0 * 1e300, within(1e285));
        assertThat(ChunkCurve.interiorTangent(3e300, 1e300, 0)).isCloseTo(-4.0 / 3.0 * 1e300, within(1e285));
        // Even values as far apart as the double range allows give a finite tangent.
        assertThat(ChunkCurve.interiorTangent(-Double.MAX_VALUE, 0, Double.MAX_VALUE)).isEqualTo(Double.MAX_VALUE);
        assertThat(ChunkCurve.endTangent(-Double.MAX_VALUE, Double.MAX_VALUE)).isEqualTo(Double.MAX_VALUE);
        assertThat(ChunkCurve.endTangent(Double.MAX_VALUE, -Double.MAX_VALUE)).isEqualTo(-Double.MAX_VALUE);
        assertThat(ChunkCurve.interiorTangent(1e300, 3e300, 3e300)).isZero();
    }

    @ParameterizedTest
    @EnumSource(Interpolation.class)
    void hugeValuesGiveTheScaledPlanAndExactPlanPoints(Interpolation kind) {
        // Every kind is homogeneous: scaling the points by c scales the curve and its derivatives by c. With
        // c = 1e154 the Hermite tangents used to overflow (infinite tangent, then NaN from 0·∞ exactly at
        // the plan points and ±∞ between them); with c = 1e300 every intermediate must stay in range too.
        double[] unit = {0, 1, 3, 3.5, 2, 2, 4, 7};
        double[][] plain = resampleState(unit, 4.0, kind);
        for (double scale : new double[] {1e154, 1e300}) {
            double[] huge = new double[unit.length];
            for (int j = 0; j < unit.length; j++) {
                huge[j] = unit[j] * scale;
            }
            double[][] state = resampleState(huge, 4.0, kind);
            for (int t = 0; t < state[0].length; t++) {
                for (int q = 0; q < 3; q++) {
                    assertThat(state[q][t]).as("scale %s, quantity %d, tick %d", scale, q, t).isFinite()
                            .isCloseTo(plain[q][t] * scale, within(1e-12 * scale));
                }
                if (t % 4 == 0) {
                    assertThat(state[0][t]).as("plan point, tick %d", t).isEqualTo(huge[t / 4]);
                }
            }
        }
    }
}
