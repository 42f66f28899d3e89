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
 * so that {@code H(z) = B(z)/A(z)}, i.e. {@code y[n] = b0·x[n] + b1·x[n−1] + b2·x[n−2] − a1·y[n−1] − a2·y[n−2]}.
 * {@code b0} is computed as {@code (1 + a1 + a2)/4}, the same value in real arithmetic, so that the reported
 * coefficients have DC gain 1 to rounding even for very low cutoffs. Thanks to the pre-warping the gain at
 * {@code fc} is exactly {@code 1/√2} (−3.01 dB).
 *
 * <p>Realisation: since {@code B(1) = A(1)}, {@code A − B} has a zero at DC and factors as
 * {@code (1 − z⁻¹)·(c0 + c1·z⁻¹)} with {@code c0 = 1 − b0}, {@code c1 = b2 − a2}. The filter runs as
 * {@code y = x − g}, {@code g = (c0 + c1·z⁻¹)/A(z) · (x[n] − x[n−1])} (transposed direct form II for
 * {@code g}): the same transfer function, but the DC gain is exactly 1 by construction — a constant input
 * comes out bit-for-bit unchanged once the ringing has died away, and immediately after a reset to that
 * value — instead of drifting by the rounding of ill-conditioned low-cutoff coefficients.
 *
 * <p>Threading and allocation: see {@link Smoother}.
 */
public final class ButterworthLowPass implements Smoother {

    private static final String KIND = "butterworth low-pass";
    private static final double FLUSH = 1e-250;

    private final int dims;
    private final double sampleRateHz;
    private final double cutoffHz;
    private final double b0;
    private final double b1;
    private final double b2;
    private final double a1;
    private final double a2;
    private final double c0;
    private final double c1;
    private final double[] previousInput;
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
        this.a1 = 2.0 * (k2 - 1.0) * norm;
        this.a2 = (1.0 - root2k + k2) * norm;
        // b0 = K²·norm equals (1 + a1 + a2)/4 exactly in real arithmetic; taking it from the rounded
        // feedback coefficients makes the DC gain (b0 + b1 + b2)/(1 + a1 + a2) equal 1 to rounding even
        // for very low cutoffs, where 1 + a1 + a2 is tiny and K²·norm would miss it by up to 1e-8.
        this.b0 = (1.0 + a1 + a2) / 4.0;
        this.b1 = 2.0 * b0;
        this.b2 = b0;
        this.c0 = 1.0 - b0;
        this.c1 = b2 - a2;
        this.previousInput = new double[dims];
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
    public ButterworthLowPass fresh() {
        return new ButterworthLowPass(dims, sampleRateHz, cutoffHz);
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
            double dx = x - previousInput[d];
            double g = c0 * dx + s1[d];
            double next1 = c1 * dx - a1 * g + s2[d];
            double next2 = -a2 * g;
            // Flush state that has decayed below any meaningful size, so it never lingers as subnormals.
            s1[d] = Math.abs(next1) < FLUSH ? 0.0 : next1;
            s2[d] = Math.abs(next2) < FLUSH ? 0.0 : next2;
            previousInput[d] = x;
            out[d] = x - g;
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

    /** Rest at a constant input: no change pending, nothing ringing. */
    private void restAt(double[] value) {
        for (int d = 0; d < dims; d++) {
            previousInput[d] = value[d];
            s1[d] = 0.0;
            s2[d] = 0.0;
        }
        primed = true;
    }
}
