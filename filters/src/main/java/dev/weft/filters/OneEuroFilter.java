package dev.weft.filters;

/**
 * One Euro filter (Casiez, Roussel and Vogel, "1€ Filter: A Simple Speed-based Low-pass Filter for
 * Noisy Input in Interactive Systems", CHI 2012), one per joint, at the fixed control rate.
 *
 * <p>Per sample, with {@code Te = 1/rate} and {@code α(fc) = 1 / (1 + τ/Te)}, {@code τ = 1/(2π·fc)}:
 * <pre>
 *   dx  = (x − x_prev) / Te                        raw speed (x_prev: previous raw sample)
 *   dx̂  = dx̂_prev + α(d_cutoff)·(dx − dx̂_prev)      speed, low-passed at the derivative cutoff
 *   fc  = fc_min + β·|dx̂|                           cutoff rises with speed
 *   x̂   = x̂_prev + α(fc)·(x − x̂_prev)
 * </pre>
 * The first sample after a reset passes unchanged with {@code dx̂ = 0}. The raw speed uses the previous
 * raw sample, as in the authors' reference implementation; the three parameters are the paper's
 * (minimum cutoff, β, derivative cutoff; the paper suggests a derivative cutoff of 1 Hz).
 *
 * <p>Threading and allocation: see {@link Smoother}.
 */
public final class OneEuroFilter implements Smoother {

    private static final String KIND = "one euro filter";

    private final int dims;
    private final double rateHz;
    private final double minCutoffHz;
    private final double beta;
    private final double derivativeCutoffHz;
    private final double derivativeAlpha;
    private final double[] rawPrevious;
    private final double[] filtered;
    private final double[] speed;
    private final double[] cutoff;
    private boolean primed;

    private OneEuroFilter(int dims, double rateHz, double minCutoffHz, double beta, double derivativeCutoffHz) {
        if (dims < 1) {
            throw new IllegalArgumentException(KIND + ": dimensions must be >= 1, got " + dims);
        }
        SmootherChecks.positiveFinite(KIND, "sampleRateHz", rateHz);
        SmootherChecks.positiveFinite(KIND, "minCutoffHz", minCutoffHz);
        if (!(beta >= 0.0) || Double.isInfinite(beta)) {
            throw new IllegalArgumentException(KIND + ": beta must be finite and >= 0, got " + beta);
        }
        SmootherChecks.positiveFinite(KIND, "derivativeCutoffHz", derivativeCutoffHz);
        this.dims = dims;
        this.rateHz = rateHz;
        this.minCutoffHz = minCutoffHz;
        this.beta = beta;
        this.derivativeCutoffHz = derivativeCutoffHz;
        this.derivativeAlpha = alpha(derivativeCutoffHz);
        this.rawPrevious = new double[dims];
        this.filtered = new double[dims];
        this.speed = new double[dims];
        this.cutoff = new double[dims];
        java.util.Arrays.fill(cutoff, minCutoffHz);
    }

    /**
     * @param dimensions         joints, ≥ 1
     * @param sampleRateHz       the control rate {@code 1/Δc}, finite, &gt; 0
     * @param minCutoffHz        cutoff at rest {@code fc_min}, finite, &gt; 0
     * @param beta               speed coefficient β (Hz per unit of speed), finite, ≥ 0
     * @param derivativeCutoffHz cutoff of the speed estimate, finite, &gt; 0
     * @throws IllegalArgumentException naming the offending parameter
     */
    public static OneEuroFilter of(int dimensions, double sampleRateHz, double minCutoffHz, double beta,
            double derivativeCutoffHz) {
        return new OneEuroFilter(dimensions, sampleRateHz, minCutoffHz, beta, derivativeCutoffHz);
    }

    /** Smoothing factor {@code α = 1/(1 + τ/Te)} of a first-order low-pass at {@code cutoffHz}. */
    private double alpha(double cutoffHz) {
        double tau = 1.0 / (2.0 * Math.PI * cutoffHz);
        double te = 1.0 / rateHz;
        return 1.0 / (1.0 + tau / te);
    }

    @Override
    public OneEuroFilter fresh() {
        return new OneEuroFilter(dims, rateHz, minCutoffHz, beta, derivativeCutoffHz);
    }

    @Override
    public int dimensions() {
        return dims;
    }

    /** Minimum cutoff {@code fc_min} in Hz. */
    public double minCutoffHz() {
        return minCutoffHz;
    }

    /** Speed coefficient β. */
    public double beta() {
        return beta;
    }

    /** Derivative cutoff in Hz. */
    public double derivativeCutoffHz() {
        return derivativeCutoffHz;
    }

    /** Cutoff in Hz used for {@code joint} at the latest sample ({@code fc_min} before the second sample). */
    public double cutoffHz(int joint) {
        return cutoff[joint];
    }

    /** Filtered speed {@code dx̂} of {@code joint} at the latest sample, in units per second. */
    public double speed(int joint) {
        return speed[joint];
    }

    @Override
    public boolean apply(double[] in, double[] out) {
        SmootherChecks.length(KIND, "in", in, dims);
        SmootherChecks.length(KIND, "out", out, dims);
        if (!SmootherChecks.allFinite(in, dims)) {
            return false;
        }
        if (!primed) {
            restAt(in);
        }
        for (int d = 0; d < dims; d++) {
            double x = in[d];
            double dx = (x - rawPrevious[d]) * rateHz;
            double dxHat = speed[d] + derivativeAlpha * (dx - speed[d]);
            double fc = minCutoffHz + beta * Math.abs(dxHat);
            double xHat = filtered[d] + alpha(fc) * (x - filtered[d]);
            speed[d] = dxHat;
            cutoff[d] = fc;
            filtered[d] = xHat;
            rawPrevious[d] = x;
            out[d] = xHat;
        }
        return true;
    }

    @Override
    public void reset(double[] value) {
        SmootherChecks.finiteResetValue(KIND, value, dims);
        restAt(value);
    }

    @Override
    public void reset() {
        primed = false;
    }

    private void restAt(double[] value) {
        for (int d = 0; d < dims; d++) {
            rawPrevious[d] = value[d];
            filtered[d] = value[d];
            speed[d] = 0.0;
            cutoff[d] = minCutoffHz;
        }
        primed = true;
    }
}
