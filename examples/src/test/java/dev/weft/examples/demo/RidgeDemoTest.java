package dev.weft.examples.demo;

import static org.assertj.core.api.Assertions.assertThat;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.ejml.data.DMatrixRMaj;
import org.ejml.dense.row.CommonOps_DDRM;
import org.ejml.dense.row.factory.LinearSolverFactory_DDRM;
import org.ejml.interfaces.linsol.LinearSolverDense;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/** The ridge fit of the demo policy, checked against EJML's own least-squares solver. */
class RidgeDemoTest {

    /** Largest difference allowed between the fit and the reference solution, per weight. */
    static final double TOLERANCE = 1e-9;

    static List<Episode> training;

    @BeforeAll
    static void readTrainingEpisodes() throws Exception {
        training = new ArrayList<>();
        for (String name : BuildDemo.TRAINING) {
            training.add(RecordingCsv.read(shipped(name)));
        }
    }

    static Path shipped(String episode) {
        return Path.of("..").resolve(BuildDemo.DEMO).resolve(BuildDemo.RECORDINGS).resolve(episode + ".csv");
    }

    /**
     * Reference for the residual weights {@code W_delta}: ridge regression is ordinary least
     * squares on the augmented system {@code [X; √λ I] W_delta = [Y - X E; 0]} (Hoerl and Kennard, Technometrics 12, 1970; the augmented form
     * is the textbook identity, e.g. Hastie, Tibshirani and Friedman, The Elements of Statistical
     * Learning, 2nd ed., Exercise 3.12; from memory, and recomputed here), solved here by EJML's Householder-QR least-squares solver
     * ({@code LinearSolverFactory_DDRM.leastSquares}), which never forms the normal equations
     * the fit solves by Cholesky.
     */
    static DMatrixRMaj reference(List<Episode> episodes, double lambda) {
        DMatrixRMaj x = ChunkRegression.design(episodes);
        // Y - X·E formed with EJML's product, not with the fit's own subtraction
        DMatrixRMaj xe = new DMatrixRMaj(x.numRows, ChunkRegression.TARGETS);
        CommonOps_DDRM.mult(x, ChunkRegression.holdPose(), xe);
        DMatrixRMaj y = new DMatrixRMaj(x.numRows, ChunkRegression.TARGETS);
        CommonOps_DDRM.subtract(ChunkRegression.targets(episodes), xe, y);
        int n = x.numRows;
        int f = ChunkRegression.FEATURES;
        DMatrixRMaj xa = new DMatrixRMaj(n + f, f);
        DMatrixRMaj ya = new DMatrixRMaj(n + f, ChunkRegression.TARGETS);
        CommonOps_DDRM.insert(x, xa, 0, 0);
        CommonOps_DDRM.insert(y, ya, 0, 0);
        for (int i = 0; i < f; i++) {
            xa.set(n + i, i, Math.sqrt(lambda));
        }
        LinearSolverDense<DMatrixRMaj> qr = LinearSolverFactory_DDRM.leastSquares(n + f, f);
        assertThat(qr.setA(xa)).isTrue();
        DMatrixRMaj w = new DMatrixRMaj(f, ChunkRegression.TARGETS);
        qr.solve(ya, w);
        return w;
    }

    @Test
    void theFitEqualsEjmlsLeastSquaresSolutionOfTheAugmentedSystem() {
        ChunkRegression.Fit fit = ChunkRegression.fit(training, ChunkRegression.LAMBDA);
        DMatrixRMaj w = reference(training, ChunkRegression.LAMBDA);
        DMatrixRMaj e = ChunkRegression.holdPose();
        double worst = 0;
        for (int f = 0; f < ChunkRegression.FEATURES; f++) {
            for (int t = 0; t < ChunkRegression.TARGETS; t++) {
                worst = Math.max(worst, Math.abs(fit.residualWeight(f, t) - w.get(f, t)));
                // the exported weights are W_delta + E
                worst = Math.max(worst, Math.abs(fit.weight(f, t) - (w.get(f, t) + e.get(f, t))));
            }
        }
        assertThat(worst).isLessThanOrEqualTo(TOLERANCE);
        assertThat(fit.rows()).isEqualTo(ChunkRegression.design(training).numRows);
    }

    @Test
    void thePenaltyMattersSoTheComparisonIsNotBlindToLambda() {
        // the same reference with a much larger λ gives other weights: a fit that ignored λ
        // could not match both
        ChunkRegression.Fit fit = ChunkRegression.fit(training, 10.0);
        DMatrixRMaj w = reference(training, 10.0);
        DMatrixRMaj small = reference(training, ChunkRegression.LAMBDA);
        double worst = 0;
        double apart = 0;
        for (int f = 0; f < ChunkRegression.FEATURES; f++) {
            for (int t = 0; t < ChunkRegression.TARGETS; t++) {
                worst = Math.max(worst, Math.abs(fit.residualWeight(f, t) - w.get(f, t)));
                apart = Math.max(apart, Math.abs(small.get(f, t) - w.get(f, t)));
            }
        }
        assertThat(worst).isLessThanOrEqualTo(TOLERANCE);
        assertThat(apart).isGreaterThan(1e-3);
    }

    @Test
    void holdPoseMapsEveryRowToTheCurrentPositionsInEveryAction() {
        Episode e = training.get(1);
        double[] f = new double[ChunkRegression.FEATURES];
        for (int i : new int[] {0, 7, 400}) {
            ChunkRegression.features(e, i, f);
            for (int t = 0; t < ChunkRegression.TARGETS; t++) {
                double s = 0;
                for (int k = 0; k < ChunkRegression.FEATURES; k++) {
                    s += f[k] * ChunkRegression.holdPose(k, t);
                }
                assertThat(s).as("row %d, target %d", i, t).isEqualTo(e.q(i, t % DipCell.D));
            }
        }
        // row 300 of the training set is row 300 of its first episode: target minus that row's position
        assertThat(ChunkRegression.residualTargets(training).get(300, 4 * DipCell.D + 3))
                .isEqualTo(ChunkRegression.targets(training).get(300, 4 * DipCell.D + 3) - training.get(0).q(300, 3));
    }

    @Test
    void aLargePenaltyShrinksTheChunkTowardHoldingThePoseNotTowardZero() {
        // with W_delta pushed to almost zero, the policy holds the measured pose: the residual
        // formulation's whole point; a fit of absolute targets would shrink toward 0 rad instead
        ChunkRegression.Fit fit = ChunkRegression.fit(training, 1e9);
        Episode e = training.get(2);
        double[] f = new double[ChunkRegression.FEATURES];
        double[] chunk = new double[ChunkRegression.TARGETS];
        double worst = 0;
        for (int i = 0; i < ChunkRegression.rowCount(e); i += 97) {
            ChunkRegression.features(e, i, f);
            fit.predict(f, chunk);
            for (int t = 0; t < ChunkRegression.TARGETS; t++) {
                worst = Math.max(worst, Math.abs(chunk[t] - e.q(i, t % DipCell.D)));
            }
        }
        assertThat(worst).isLessThan(1e-3);
        // and the arm is far from zero there, so this is not the absolute fit's shrinkage in disguise
        assertThat(Math.abs(e.q(0, 2))).isGreaterThan(0.5);
    }

    @Test
    void aRowOfTheDesignIsThreeObservationsOneQueryPeriodApartAndAOne() {
        Episode e = training.get(0);
        int i = 123;
        double[] f = new double[ChunkRegression.FEATURES];
        ChunkRegression.features(e, i, f);
        // oldest first: samples 113, 118, 123; each q of six joints, then dq
        assertThat(f[0]).isEqualTo(e.q(113, 0));
        assertThat(f[ChunkRegression.OBSERVATION + 6]).isEqualTo(e.dq(118, 0));
        assertThat(f[2 * ChunkRegression.OBSERVATION + 5]).isEqualTo(e.q(123, 5));
        assertThat(f[ChunkRegression.FEATURES - 1]).isEqualTo(1.0);
        // before the history is full, the first sample fills the older slots
        ChunkRegression.features(e, 5, f);
        assertThat(f[0]).isEqualTo(e.q(0, 0));
        assertThat(f[ChunkRegression.OBSERVATION]).isEqualTo(e.q(0, 0));
        assertThat(f[2 * ChunkRegression.OBSERVATION]).isEqualTo(e.q(5, 0));
        // target j of joint k is the command 0.02·j s later
        double[] y = new double[ChunkRegression.TARGETS];
        ChunkRegression.targets(e, i, y);
        assertThat(y[7 * DipCell.D + 2]).isEqualTo(e.a(i + 14, 2));
    }
}
