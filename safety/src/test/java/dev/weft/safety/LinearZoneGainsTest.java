package dev.weft.safety;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.util.Arrays;
import org.ejml.data.Complex_F64;
import org.ejml.data.DMatrixRMaj;
import org.ejml.dense.row.CommonOps_DDRM;
import org.ejml.dense.row.factory.DecompositionFactory_DDRM;
import org.ejml.interfaces.decomposition.EigenDecomposition_F64;
import org.junit.jupiter.api.Test;

/**
 * The linear zone's gains place the error's poles where the limiter says. Checked with EJML's
 * general eigen-decomposition (a general-purpose reference library, not the code under test): the
 * eigenvalues of {@code A - (A B) K} for the jerk-driven triple integrator sampled at dt (zero-order
 * hold, the textbook discretisation: A the exponential of the chain's matrix, B its integral times
 * the input, common practice) are {@code exp(-w dt)} for w = 4, 12 and 40 rad/s.
 */
class LinearZoneGainsTest {

    @Test
    void thePolesOfTheSampledErrorLoopAreTheDesignedOnes() {
        for (double dt : new double[] {5e-4, 1e-3, 2e-3, 1e-2, 2e-2}) {
            double[] k = AxisFilter.linearZoneGains(dt);
            DMatrixRMaj a = new DMatrixRMaj(new double[][] {{1, dt, dt * dt / 2}, {0, 1, dt}, {0, 0, 1}});
            DMatrixRMaj b = new DMatrixRMaj(new double[][] {{dt * dt * dt / 6}, {dt * dt / 2}, {dt}});
            DMatrixRMaj ab = new DMatrixRMaj(3, 1);
            CommonOps_DDRM.mult(a, b, ab);
            DMatrixRMaj gains = new DMatrixRMaj(new double[][] {{k[0], k[1], k[2]}});
            DMatrixRMaj abk = new DMatrixRMaj(3, 3);
            CommonOps_DDRM.mult(ab, gains, abk);
            DMatrixRMaj loop = new DMatrixRMaj(3, 3);
            CommonOps_DDRM.subtract(a, abk, loop);
            EigenDecomposition_F64<DMatrixRMaj> eig = DecompositionFactory_DDRM.eig(3, false);
            assertThat(eig.decompose(loop)).isTrue();
            double[] found = new double[3];
            for (int i = 0; i < 3; i++) {
                Complex_F64 z = eig.getEigenvalue(i);
                assertThat(Math.abs(z.imaginary)).as("dt %s: real poles", dt).isLessThan(1e-6);
                found[i] = z.real;
            }
            Arrays.sort(found);
            double[] wanted = {Math.exp(-AxisFilter.POLES[2] * dt), Math.exp(-AxisFilter.POLES[1] * dt),
                Math.exp(-AxisFilter.POLES[0] * dt)};
            for (int i = 0; i < 3; i++) {
                assertThat(found[i]).as("dt %s pole %d", dt, i).isCloseTo(wanted[i], within(1e-6));
            }
            // and all three gains are positive: the law pushes the error back toward the plan
            assertThat(Math.min(k[0], Math.min(k[1], k[2]))).isPositive();
        }
    }
}
