package dev.weft.filters;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import java.math.BigDecimal;
import java.math.RoundingMode;
import org.ejml.data.DMatrixRMaj;
import org.ejml.dense.row.CommonOps_DDRM;
import org.junit.jupiter.api.Test;

class TemporalEnsembleBlenderTest {

    /**
     * Three predictions for tick 10 arrive in order: 1.0 (from the observation at tick 8, its step 2),
     * 2.0 (tick 9, step 1), 4.0 (tick 10, step 0).
     */
    private static void acceptThreePredictions(ChunkBlender b) {
        assertThat(b.accept(new double[] {0, 0, 1.0}, 3, 8, 8)).isEqualTo(3);
        assertThat(b.accept(new double[] {0, 2.0, 0}, 3, 9, 9)).isEqualTo(3);
        assertThat(b.accept(new double[] {4.0, 0, 0}, 3, 10, 10)).isEqualTo(3);
    }

    @Test
    void workedExampleWithMPointOneOldestFirst() {
        // Zhao et al. 2023 (action chunking with transformers), temporal ensembling: w_i = exp(-m·i),
        // i = 0 the oldest prediction, weights normalised to sum 1. By hand, m = 0.1:
        //   w_0 = exp(0) = 1, w_1 = exp(-0.1) = 0.904837418, w_2 = exp(-0.2) = 0.818730753
        //   sum = 2.723568171
        //   normalised: 1/2.723568171 = 0.367165401, 0.904837418/2.723568171 = 0.332224994,
        //               0.818730753/2.723568171 = 0.300609605   -> 0.3672, 0.3322, 0.3006 to 4 places
        //   blended = 0.367165401·1 + 0.332224994·2 + 0.300609605·4
        //           = 0.367165401 + 0.664449987 + 1.202438421 = 2.234053810
        double w0 = 1.0;
        double w1 = Math.exp(-0.1);
        double w2 = Math.exp(-0.2);
        double sum = w0 + w1 + w2;
        assertThat(round4(w0 / sum)).isEqualTo("0.3672");
        assertThat(round4(w1 / sum)).isEqualTo("0.3322");
        assertThat(round4(w2 / sum)).isEqualTo("0.3006");

        TemporalEnsembleBlender b = TemporalEnsembleBlender.oldestFirst(1, 3, 1.0, Interpolation.LINEAR, 0.1);
        acceptThreePredictions(b);
        double[] out = new double[1];
        assertThat(b.actionAt(10, out)).isTrue();
        assertThat(out[0]).isCloseTo(2.234053810, within(1e-9));

        // The same mean as a matrix product in EJML (general-purpose reference library): [w]·[a] / Σw.
        DMatrixRMaj weights = new DMatrixRMaj(1, 3, true, w0 / sum, w1 / sum, w2 / sum);
        DMatrixRMaj predictions = new DMatrixRMaj(3, 1, true, 1.0, 2.0, 4.0);
        DMatrixRMaj mean = new DMatrixRMaj(1, 1);
        CommonOps_DDRM.mult(weights, predictions, mean);
        assertThat(out[0]).isCloseTo(mean.get(0, 0), within(Tolerances.REFERENCE));
    }

    @Test
    void newestFirstReversesTheWeights() {
        // Weights 0.300609605, 0.332224994, 0.367165401 for 1, 2, 4 (oldest to newest), by hand:
        //   0.300609605 + 0.664449987 + 1.468661604 = 2.433721197
        TemporalEnsembleBlender b = TemporalEnsembleBlender.newestFirst(1, 3, 1.0, Interpolation.LINEAR, 0.1);
        acceptThreePredictions(b);
        double[] out = new double[1];
        assertThat(b.actionAt(10, out)).isTrue();
        assertThat(out[0]).isCloseTo(2.433721197, within(1e-9));
        assertThat(b.isNewestFirst()).isTrue();
    }

    @Test
    void zeroRateIsThePlainMean() {
        for (TemporalEnsembleBlender b : new TemporalEnsembleBlender[] {
                TemporalEnsembleBlender.oldestFirst(1, 3, 1.0, Interpolation.LINEAR, 0.0),
                TemporalEnsembleBlender.newestFirst(1, 3, 1.0, Interpolation.LINEAR, 0.0)}) {
            acceptThreePredictions(b);
            double[] out = new double[1];
            assertThat(b.actionAt(10, out)).isTrue();
            assertThat(out[0]).isCloseTo(7.0 / 3.0, within(1e-15));
        }
    }

    @Test
    void eachTickOnlyAveragesThePredictionsThatCoverIt() {
        TemporalEnsembleBlender b = TemporalEnsembleBlender.oldestFirst(1, 3, 1.0, Interpolation.LINEAR, 0.0);
        acceptThreePredictions(b);
        double[] out = new double[1];
        // Tick 11 is covered by the chunks from ticks 9 (step 2 = 0) and 10 (step 1 = 0); tick 12 only by 10's.
        assertThat(b.actionAt(11, out)).isTrue();
        assertThat(out[0]).isEqualTo(0.0);
        assertThat(b.ticksRemaining(10)).isEqualTo(3);
        assertThat(b.ticksRemaining(12)).isEqualTo(1);
    }

    @Test
    void weightsThatUnderflowLeaveTheOldestPredictionAndStayFinite() {
        // exp(-800) underflows to 0: only the oldest prediction counts, never 0/0.
        TemporalEnsembleBlender b = TemporalEnsembleBlender.oldestFirst(1, 3, 1.0, Interpolation.LINEAR, 800.0);
        acceptThreePredictions(b);
        double[] out = new double[1];
        assertThat(b.actionAt(10, out)).isTrue();
        assertThat(out[0]).isEqualTo(1.0);
        TemporalEnsembleBlender n = TemporalEnsembleBlender.newestFirst(1, 3, 1.0, Interpolation.LINEAR, 800.0);
        acceptThreePredictions(n);
        assertThat(n.actionAt(10, out)).isTrue();
        assertThat(out[0]).isEqualTo(4.0);
    }

    @Test
    void validatesTheWeightRate() {
        assertThatThrownBy(() -> TemporalEnsembleBlender.oldestFirst(1, 3, 1.0, Interpolation.LINEAR, -0.1))
                .isInstanceOf(IllegalArgumentException.class)
                .hasMessage("temporal ensemble (oldest first): weight rate m must be finite and >= 0, got -0.1");
        assertThatThrownBy(() -> TemporalEnsembleBlender.newestFirst(1, 3, 1.0, Interpolation.LINEAR, Double.NaN))
                .hasMessage("temporal ensemble (newest first): weight rate m must be finite and >= 0, got NaN");
    }

    private static String round4(double v) {
        return new BigDecimal(v).setScale(4, RoundingMode.HALF_UP).toPlainString();
    }
}
