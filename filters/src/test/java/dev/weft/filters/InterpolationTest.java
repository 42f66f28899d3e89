package dev.weft.filters;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.util.Random;
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
    @EnumSource(Interpolation.class)
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
}
