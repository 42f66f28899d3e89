package dev.weft.examples.demo;

import java.util.List;
import org.ejml.data.DMatrixRMaj;
import org.ejml.dense.row.CommonOps_DDRM;
import org.ejml.dense.row.factory.LinearSolverFactory_DDRM;
import org.ejml.interfaces.linsol.LinearSolverDense;

/**
 * Behaviour cloning of the dip cell's expert by ridge regression: a linear map from the
 * policy's input to the next {@link #K} commanded positions.
 *
 * <h2>Input and output</h2>
 * The observation is the measured positions and velocities of the six joints (12 values). The
 * policy sees it through weft's {@code history} input of depth {@link #HISTORY_DEPTH}: the
 * observations of the last three inference calls, oldest first, the newest being the current
 * one. The demo queries the policy every {@link #QUERY_SAMPLES} samples (0.05 s), so training
 * row {@code i} takes the observations of samples {@code i - 10}, {@code i - 5} and {@code i}
 * (an index before the first sample takes the first sample, as weft fills the history before it
 * is full). Its features are those 36 values and a constant 1. The targets are the expert's
 * commands at {@code t0 + j·Δp}, {@code j = 0 … K-1}, with {@code Δp = }{@link #POLICY_STEP}
 * ({@link #STEP_SAMPLES} samples): absolute joint positions, flattened action-major exactly as a
 * {@code 1xKxD} chunk is laid out. Rows whose last target lies beyond the episode are left out.
 *
 * <h2>Fit</h2>
 * {@code W = argmin |X W - Y|² + λ|W|²}, the bias row penalised like the others, solved from the
 * normal equations {@code (XᵀX + λI) W = XᵀY} with EJML's Cholesky solver. The test checks it
 * against EJML's QR least-squares solution of the augmented system {@code [X; √λ I] W = [Y; 0]}.
 */
public final class ChunkRegression {

    /** Observation size: six positions, six velocities. */
    public static final int OBSERVATION = 2 * DipCell.D;
    /** Observations the history input holds (the current one included). */
    public static final int HISTORY_DEPTH = 3;
    /** Samples between two inference calls: 5 × 0.01 s = 0.05 s = 25 control ticks. */
    public static final int QUERY_SAMPLES = 5;
    /** Actions per chunk. */
    public static final int K = 12;
    /** Samples between two actions of a chunk. */
    public static final int STEP_SAMPLES = 2;
    /** Δp, seconds. */
    public static final double POLICY_STEP = STEP_SAMPLES * DipCell.SAMPLE_PERIOD;
    /** Features per row: the history and a constant 1. */
    public static final int FEATURES = HISTORY_DEPTH * OBSERVATION + 1;
    /** Targets per row: K actions of D joints. */
    public static final int TARGETS = K * DipCell.D;
    /**
     * The ridge penalty λ: small against the 3510 training rows (the held-out error is within 2 %
     * of what λ = 0.001 gives), large enough to keep the normal equations well conditioned
     * (condition number about 2e5 instead of 1e7).
     */
    public static final double LAMBDA = 0.1;

    private ChunkRegression() {
    }

    /** The fitted weights: {@code FEATURES × TARGETS}, row-major; the last row is the bias. */
    public record Fit(double[] weights, int rows, double lambda) {

        public Fit {
            if (weights.length != FEATURES * TARGETS) {
                throw new IllegalArgumentException("weights must hold " + FEATURES + " × " + TARGETS + " values");
            }
            weights = weights.clone();
        }

        @Override
        public double[] weights() {
            return weights.clone();
        }

        /** {@code W[f][t]}. */
        public double weight(int feature, int target) {
            return weights[feature * TARGETS + target];
        }

        /**
         * The chunk for one row of features (length {@link #FEATURES}, the last being 1), into
         * {@code chunk} (length {@link #TARGETS}; modified). Allocation-free.
         */
        public void predict(double[] features, double[] chunk) {
            for (int t = 0; t < TARGETS; t++) {
                double s = 0;
                for (int f = 0; f < FEATURES; f++) {
                    s += features[f] * weights[f * TARGETS + t];
                }
                chunk[t] = s;
            }
        }
    }

    /** Number of rows {@code e} gives. */
    public static int rowCount(Episode e) {
        return Math.max(0, e.length() - (K - 1) * STEP_SAMPLES);
    }

    /**
     * The features of row {@code i} into {@code out} (length {@link #FEATURES}; modified): the
     * observations of samples {@code i - 10}, {@code i - 5}, {@code i} (clamped at 0) and a 1.
     */
    public static void features(Episode e, int i, double[] out) {
        for (int h = 0; h < HISTORY_DEPTH; h++) {
            int sample = Math.max(0, i - (HISTORY_DEPTH - 1 - h) * QUERY_SAMPLES);
            e.observation(sample, out, h * OBSERVATION);
        }
        out[FEATURES - 1] = 1.0;
    }

    /** The targets of row {@code i} into {@code out} (length {@link #TARGETS}; modified). */
    public static void targets(Episode e, int i, double[] out) {
        for (int j = 0; j < K; j++) {
            for (int k = 0; k < DipCell.D; k++) {
                out[j * DipCell.D + k] = e.a(i + j * STEP_SAMPLES, k);
            }
        }
    }

    /** The design matrix X (rows × FEATURES) of the given episodes, in order. */
    public static DMatrixRMaj design(List<Episode> episodes) {
        int rows = episodes.stream().mapToInt(ChunkRegression::rowCount).sum();
        DMatrixRMaj x = new DMatrixRMaj(rows, FEATURES);
        double[] f = new double[FEATURES];
        int r = 0;
        for (Episode e : episodes) {
            requireUniform(e);
            for (int i = 0; i < rowCount(e); i++, r++) {
                features(e, i, f);
                System.arraycopy(f, 0, x.data, r * FEATURES, FEATURES);
            }
        }
        return x;
    }

    /** The target matrix Y (rows × TARGETS) of the given episodes, in order. */
    public static DMatrixRMaj targets(List<Episode> episodes) {
        int rows = episodes.stream().mapToInt(ChunkRegression::rowCount).sum();
        DMatrixRMaj y = new DMatrixRMaj(rows, TARGETS);
        double[] t = new double[TARGETS];
        int r = 0;
        for (Episode e : episodes) {
            requireUniform(e);
            for (int i = 0; i < rowCount(e); i++, r++) {
                targets(e, i, t);
                System.arraycopy(t, 0, y.data, r * TARGETS, TARGETS);
            }
        }
        return y;
    }

    /**
     * Fits the policy to {@code episodes} with penalty {@code lambda}.
     *
     * @throws IllegalArgumentException when an episode is not sampled uniformly or the normal
     *     equations are not positive definite
     */
    public static Fit fit(List<Episode> episodes, double lambda) {
        DMatrixRMaj x = design(episodes);
        DMatrixRMaj y = targets(episodes);
        DMatrixRMaj a = new DMatrixRMaj(FEATURES, FEATURES);
        DMatrixRMaj b = new DMatrixRMaj(FEATURES, TARGETS);
        CommonOps_DDRM.multTransA(x, x, a);
        CommonOps_DDRM.multTransA(x, y, b);
        for (int f = 0; f < FEATURES; f++) {
            a.add(f, f, lambda);
        }
        LinearSolverDense<DMatrixRMaj> chol = LinearSolverFactory_DDRM.chol(FEATURES);
        if (!chol.setA(a)) {
            throw new IllegalArgumentException("the normal equations are not positive definite (λ = " + lambda + ")");
        }
        DMatrixRMaj w = new DMatrixRMaj(FEATURES, TARGETS);
        chol.solve(b, w);
        return new Fit(w.data, x.numRows, lambda);
    }

    /**
     * Open-loop error of {@code fit} on {@code e}: the RMS over every row, action and joint of
     * predicted minus commanded position, per joint (rad).
     */
    public static double[] rmsError(Fit fit, Episode e) {
        double[] f = new double[FEATURES];
        double[] want = new double[TARGETS];
        double[] got = new double[TARGETS];
        double[] sum = new double[DipCell.D];
        int rows = rowCount(e);
        for (int i = 0; i < rows; i++) {
            features(e, i, f);
            targets(e, i, want);
            fit.predict(f, got);
            for (int t = 0; t < TARGETS; t++) {
                double d = got[t] - want[t];
                sum[t % DipCell.D] += d * d;
            }
        }
        for (int k = 0; k < DipCell.D; k++) {
            sum[k] = Math.sqrt(sum[k] / ((double) rows * K));
        }
        return sum;
    }

    /**
     * The same error for the policy that holds the measured pose ({@code a(t0 + jΔp) = q(t0)}):
     * the baseline a learned policy has to beat.
     */
    public static double[] holdPoseRmsError(Episode e) {
        double[] sum = new double[DipCell.D];
        int rows = rowCount(e);
        for (int i = 0; i < rows; i++) {
            for (int j = 0; j < K; j++) {
                for (int k = 0; k < DipCell.D; k++) {
                    double d = e.q(i, k) - e.a(i + j * STEP_SAMPLES, k);
                    sum[k] += d * d;
                }
            }
        }
        for (int k = 0; k < DipCell.D; k++) {
            sum[k] = Math.sqrt(sum[k] / ((double) rows * K));
        }
        return sum;
    }

    private static void requireUniform(Episode e) {
        for (int i = 0; i < e.length(); i++) {
            if (Math.abs(e.time(i) - i * DipCell.SAMPLE_PERIOD) > 1e-9) {
                throw new IllegalArgumentException(e.name() + ": sample " + i + " at " + e.time(i)
                        + " s is off the " + DipCell.SAMPLE_PERIOD + " s grid; training needs uniform sampling");
            }
        }
    }
}
