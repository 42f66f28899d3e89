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
 * observation stream on a grid {@link #HISTORY_SPACING} (0.05 s, {@link #QUERY_SAMPLES} samples)
 * apart, oldest first, the newest being the current one; so training row {@code i} takes the
 * observations of samples {@code i - 10}, {@code i - 5} and {@code i} (an index before the first
 * sample takes the first sample, as weft does for a grid point before the first sample it kept). Its features are those 36 values and a constant 1. The targets are the expert's
 * commands at {@code t0 + j·Δp}, {@code j = 0 … K-1}, with {@code Δp = }{@link #POLICY_STEP}
 * ({@link #STEP_SAMPLES} samples): absolute joint positions, flattened action-major exactly as a
 * {@code 1xKxD} chunk is laid out. Rows whose last target lies beyond the episode are left out.
 *
 * <h2>Fit</h2>
 * The fit is residual: it learns how the chunk departs from holding the current pose. With
 * {@code E} the {@code FEATURES × TARGETS} matrix that copies the current observation's positions
 * into every action ({@code E[f][j·D + d] = 1} for {@code f = }{@link #CURRENT_POSITION}{@code + d},
 * 0 elsewhere; {@code X·E} is the hold-the-pose chunk), it solves
 * {@code W_delta = argmin |X W_delta - (Y - X E)|² + λ|W_delta|²}, the bias row penalised like the
 * others, from the normal equations {@code (XᵀX + λI) W_delta = Xᵀ(Y - X E)} with EJML's Cholesky
 * solver, and keeps {@code W = W_delta + E}: the same linear map from features to absolute joint
 * targets, so the exported graph and weft's bindings do not change. The penalty shrinks the chunk
 * toward holding the pose rather than toward absolute zero, so a policy started at rest plans from
 * where the arm is (fitting the change from the current state rather than the state itself is
 * common practice in behaviour cloning). The test checks {@code W_delta} against EJML's QR
 * least-squares solution of the augmented system {@code [X; √λ I] W_delta = [Y - X E; 0]}.
 */
public final class ChunkRegression {

    /** Observation size: six positions, six velocities. */
    public static final int OBSERVATION = 2 * DipCell.D;
    /** Observations the history input holds (the current one included). */
    public static final int HISTORY_DEPTH = 3;
    /** Samples between two inference calls: 5 × 0.01 s = 0.05 s = 25 control ticks. */
    public static final int QUERY_SAMPLES = 5;
    /** Seconds between two observations of the history: {@link #QUERY_SAMPLES} samples. */
    public static final double HISTORY_SPACING = QUERY_SAMPLES * DipCell.SAMPLE_PERIOD;
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
    /** Feature index of the current observation's first position (the last history slot's q). */
    public static final int CURRENT_POSITION = (HISTORY_DEPTH - 1) * OBSERVATION;
    /**
     * The ridge penalty λ on the residual weights: small against the 3510 training rows, large
     * enough to keep the normal equations well conditioned (condition number about 2e5 instead of
     * 1e7 at λ = 0.001; {@code XᵀX + λI} does not depend on the targets, so this holds for the
     * residual fit as for a fit of absolute targets). Scanned over 0.001 … 100 on the held-out
     * episode: up to 0.1 the per-joint RMS error stays within 0.0002 rad of λ = 0.001's; from
     * λ = 1 on it grows (lift 0.0109, pitch 0.0075 rad at λ = 1 against 0.0100 and 0.0066).
     */
    public static final double LAMBDA = 0.1;

    private ChunkRegression() {
    }

    /**
     * The fitted weights {@code W = W_delta + E}: {@code FEATURES × TARGETS}, row-major; the last
     * row is the bias. They map features to absolute joint targets.
     */
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

        /** {@code W_delta[f][t] = W[f][t] - E[f][t]}, the residual weight the ridge penalty acts on. */
        public double residualWeight(int feature, int target) {
            return weights[feature * TARGETS + target] - holdPose(feature, target);
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

    /**
     * {@code E[f][t]}: 1 when feature {@code f} is the current observation's position of the joint
     * target {@code t} drives ({@code f = CURRENT_POSITION + t % D}), else 0.
     */
    public static double holdPose(int feature, int target) {
        return feature == CURRENT_POSITION + target % DipCell.D ? 1.0 : 0.0;
    }

    /** The matrix {@code E} (FEATURES × TARGETS) of {@link #holdPose(int, int)}. */
    public static DMatrixRMaj holdPose() {
        DMatrixRMaj e = new DMatrixRMaj(FEATURES, TARGETS);
        for (int t = 0; t < TARGETS; t++) {
            e.set(CURRENT_POSITION + t % DipCell.D, t, 1.0);
        }
        return e;
    }

    /**
     * The residual targets {@code Y - X E} (rows × TARGETS) of the given episodes: each target
     * minus the row's current position of the same joint.
     */
    public static DMatrixRMaj residualTargets(List<Episode> episodes) {
        DMatrixRMaj x = design(episodes);
        DMatrixRMaj y = targets(episodes);
        return residual(x, y);
    }

    private static DMatrixRMaj residual(DMatrixRMaj x, DMatrixRMaj y) {
        DMatrixRMaj r = y.copy();
        for (int i = 0; i < x.numRows; i++) {
            for (int t = 0; t < TARGETS; t++) {
                r.data[i * TARGETS + t] -= x.data[i * FEATURES + CURRENT_POSITION + t % DipCell.D];
            }
        }
        return r;
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
     * Ridge regression: the {@code W} minimising {@code |X·W − Y|² + λ|W|²}, from the normal
     * equations {@code (XᵀX + λI)·W = XᵀY} solved by Cholesky decomposition.
     *
     * @throws IllegalArgumentException when the normal equations are not positive definite
     */
    public static DMatrixRMaj ridge(DMatrixRMaj x, DMatrixRMaj y, double lambda) {
        int cols = x.numCols;
        DMatrixRMaj a = new DMatrixRMaj(cols, cols);
        DMatrixRMaj b = new DMatrixRMaj(cols, y.numCols);
        CommonOps_DDRM.multTransA(x, x, a);
        CommonOps_DDRM.multTransA(x, y, b);
        for (int f = 0; f < cols; f++) {
            a.add(f, f, lambda);
        }
        LinearSolverDense<DMatrixRMaj> chol = LinearSolverFactory_DDRM.chol(cols);
        if (!chol.setA(a)) {
            throw new IllegalArgumentException("the normal equations are not positive definite (λ = " + lambda + ")");
        }
        DMatrixRMaj w = new DMatrixRMaj(cols, y.numCols);
        chol.solve(b, w);
        return w;
    }

    /**
     * Fits the policy to {@code episodes} with penalty {@code lambda} on the residual weights.
     *
     * @throws IllegalArgumentException when an episode is not sampled uniformly or the normal
     *     equations are not positive definite
     */
    public static Fit fit(List<Episode> episodes, double lambda) {
        DMatrixRMaj x = design(episodes);
        DMatrixRMaj w = ridge(x, residual(x, targets(episodes)), lambda);
        for (int t = 0; t < TARGETS; t++) {
            w.add(CURRENT_POSITION + t % DipCell.D, t, 1.0);
        }
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
