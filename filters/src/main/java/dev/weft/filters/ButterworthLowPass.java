package dev.weft.filters;

/**
 * Second-order Butterworth low-pass, one biquad per joint.
 *
 * <p>Design: the analogue prototype {@code H(s) = 1 / (s² + √2·s + 1)} mapped by the bilinear transform
 * with the cutoff pre-warped, {@code K = tan(π·fc/fs)}:
 * <pre>
 *   b0 = K²/(1 + √2K + K²),  b1 = 2·b0,  b2 = b0,
 *   a1 = 2(K² − 1)/(1 + √2K + K²),  a2 = (1 − √2K + K²)/(1 + √2K + K²)
 * </pre>
 * so that {@code y[n] = b0·x[n] + b1·x[n−1] + b2·x[n−2] − a1·y[n−1] − a2·y[n−2]}. The DC gain is 1 and,
 * thanks to the pre-warping, the gain at {@code fc} is exactly {@code 1/√2} (−3.01 dB). Run in transposed
 * direct form II.
 *
 * <p>Threading and allocation: see {@link Smoother}.
 */
public final class ButterworthLowPass implements Smoother {

    private static final String KIND = "butterworth low-pass";

    private final int dims;
    private final double sampleRateHz;
    private final double cutoffHz;
    private final double b0;
    private final double b1;
    private final double b2;
    private final double a1;
    private final double a2;
    private final double[] s1;
    private final double[] s2;
    private boolean primed;

    private ButterworthLowPass(int dims, double sampleRateHz, double cutoffHz) {
        if (dims < 1) {
            throw new IllegalArgumentException(KIND + ": dimensions must be >= 1, got " + dims);
        }
        SmootherChecks.positiveFinite(KIND, "sampleRateHz", sampleRateHz);
        SmootherChecks.positiveFinite(KIND, "cutoffHz", cutoffHz);
        if (!(cutoffHz < sampleRateHz / 2.0)) {
            throw new IllegalArgumentException(KIND + ": cutoffHz must be below the Nyquist frequency "
                    + sampleRateHz / 2.0 + " Hz, got " + cutoffHz);
        }
        this.dims = dims;
        this.sampleRateHz = sampleRateHz;
        this.cutoffHz = cutoffHz;
        double k = Math.tan(Math.PI * cutoffHz / sampleRateHz);
        double k2 = k * k;
        double root2k = Math.sqrt(2.0) * k;
        double norm = 1.0 / (1.0 + root2k + k2);
        this.b0 = k2 * norm;
        this.b1 = 2.0 * b0;
        this.b2 = b0;
        this.a1 = 2.0 * (k2 - 1.0) * norm;
        this.a2 = (1.0 - root2k + k2) * norm;
        this.s1 = new double[dims];
        this.s2 = new double[dims];
    }

    /**
     * @param dimensions   joints, ≥ 1
     * @param sampleRateHz the control rate {@code 1/Δc}, finite, &gt; 0
     * @param cutoffHz     the −3 dB frequency, in {@code (0, sampleRateHz/2)}
     * @throws IllegalArgumentException naming the offending parameter
     */
    public static ButterworthLowPass of(int dimensions, double sampleRateHz, double cutoffHz) {
        return new ButterworthLowPass(dimensions, sampleRateHz, cutoffHz);
    }

    @Override
    public int dimensions() {
        return dims;
    }

    /** Sample rate in Hz. */
    public double sampleRateHz() {
        return sampleRateHz;
    }

    /** Cutoff (−3 dB) frequency in Hz. */
    public double cutoffHz() {
        return cutoffHz;
    }

    /** Feed-forward coefficient b0. */
    public double b0() {
        return b0;
    }

    /** Feed-forward coefficient b1. */
    public double b1() {
        return b1;
    }

    /** Feed-forward coefficient b2. */
    public double b2() {
        return b2;
    }

    /** Feedback coefficient a1 (sign as in {@code 1 + a1·z⁻¹ + a2·z⁻²}). */
    public double a1() {
        return a1;
    }

    /** Feedback coefficient a2. */
    public double a2() {
        return a2;
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
            double y = b0 * x + s1[d];
            s1[d] = b1 * x - a1 * y + s2[d];
            s2[d] = b2 * x - a2 * y;
            out[d] = y;
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

    /** Steady state of the transposed direct form II for constant input x with output x. */
    private void restAt(double[] value) {
        for (int d = 0; d < dims; d++) {
            double x = value[d];
            s1[d] = (1.0 - b0) * x;
            s2[d] = (b2 - a2) * x;
        }
        primed = true;
    }
}
