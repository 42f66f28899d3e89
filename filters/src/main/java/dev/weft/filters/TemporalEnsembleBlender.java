package dev.weft.filters;

/**
 * Exponential temporal ensembling (Zhao, Kumar, Levine and Finn, 2023, "Learning Fine-Grained
 * Bimanual Manipulation with Low-Cost Hardware"): every chunk that covers a tick contributes its
 * (resampled) action for that tick, and the action executed is the weighted mean
 * {@code Σ w_i·a_i / Σ w_i} with {@code w_i = exp(−m·i)}.
 *
 * <p>Two directions, chosen by factory:
 * <ul>
 *   <li>{@link #oldestFirst}: {@code i = 0} is the oldest prediction for that tick (arrival order), as in
 *       the paper; larger {@code m} trusts earlier predictions more.</li>
 *   <li>{@link #newestFirst}: {@code i = 0} is the newest prediction; larger {@code m} reacts faster.</li>
 * </ul>
 * {@code m = 0} is the plain mean in both.
 *
 * <p>With a step ratio {@code r ≠ 1} each chunk is first resampled onto control ticks by its own
 * interpolation (see {@link ChunkBlender}), and the weighting then applies per tick: {@code i} counts the
 * chunks that cover that tick, in arrival order.
 *
 * <p>Implementation: a ring of per-tick running sums. Oldest-first keeps per tick {@code Σ w·a},
 * {@code Σ w} and the weight the next contribution will get ({@code exp(−m)^count}); newest-first
 * multiplies both sums by {@code exp(−m)} before adding the new contribution with weight 1. Reading is
 * one division per value: O(D), independent of K and of how many chunks overlap. Worked example, m = 0.1,
 * three predictions 1, 2, 4 for one tick, oldest first: weights 1, 0.9048, 0.8187 normalise to 0.3672,
 * 0.3322, 0.3006 and give 2.2340.
 *
 * <p>Threading and allocation: see {@link ChunkBlender}; all arrays are allocated by the factory.
 */
public final class TemporalEnsembleBlender extends AbstractChunkBlender {

    private final boolean newestFirst;
    private final double decay;
    private final double rate;
    private final double[] weightedSum;
    private final double[] weightSum;
    private final double[] nextWeight;

    private TemporalEnsembleBlender(String kind, int dims, int maxSteps, double stepRatio, Interpolation interpolation,
            double m, boolean newestFirst) {
        super(kind, dims, maxSteps, stepRatio, interpolation);
        if (!(m >= 0.0) || Double.isInfinite(m)) {
            throw new IllegalArgumentException(kind + ": weight rate m must be finite and >= 0, got " + m);
        }
        this.newestFirst = newestFirst;
        this.rate = m;
        this.decay = Math.exp(-m);
        this.weightedSum = new double[capacity * dims];
        this.weightSum = new double[capacity];
        this.nextWeight = new double[capacity];
    }

    /**
     * Ensembling with {@code w_i = exp(−m·i)}, {@code i = 0} the oldest prediction for a tick (the paper's
     * convention). Allocates the ring once; the returned blender allocates nothing afterwards.
     *
     * @param dimensions    values per action D, ≥ 1
     * @param maxSteps      largest chunk length K, ≥ 1
     * @param stepRatio     {@code r = Δp/Δc}, finite, &gt; 0 (need not be an integer)
     * @param interpolation how plan points are joined between ticks
     * @param m             weight rate, finite, ≥ 0
     * @throws IllegalArgumentException naming the offending parameter
     */
    public static TemporalEnsembleBlender oldestFirst(int dimensions, int maxSteps, double stepRatio,
            Interpolation interpolation, double m) {
        return new TemporalEnsembleBlender("temporal ensemble (oldest first)", dimensions, maxSteps, stepRatio,
                interpolation, m, false);
    }

    /**
     * Ensembling with {@code w_i = exp(−m·i)}, {@code i = 0} the newest prediction for a tick. Parameters
     * and allocation as in {@link #oldestFirst}.
     *
     * @throws IllegalArgumentException naming the offending parameter
     */
    public static TemporalEnsembleBlender newestFirst(int dimensions, int maxSteps, double stepRatio,
            Interpolation interpolation, double m) {
        return new TemporalEnsembleBlender("temporal ensemble (newest first)", dimensions, maxSteps, stepRatio,
                interpolation, m, true);
    }

    /** The weight rate m. */
    public double weightRate() {
        return rate;
    }

    /** Whether the newest prediction gets weight 1 (otherwise the oldest does). */
    public boolean isNewestFirst() {
        return newestFirst;
    }

    @Override
    boolean dropsOlderOrigins() {
        return false;
    }

    @Override
    void mergeTick(long tick, int slot, double[] value, boolean hadPlan) {
        int base = slot * dims;
        if (!hadPlan) {
            System.arraycopy(value, 0, weightedSum, base, dims);
            weightSum[slot] = 1.0;
            nextWeight[slot] = decay;
        } else if (newestFirst) {
            for (int d = 0; d < dims; d++) {
                weightedSum[base + d] = weightedSum[base + d] * decay + value[d];
            }
            weightSum[slot] = weightSum[slot] * decay + 1.0;
        } else {
            double w = nextWeight[slot];
            for (int d = 0; d < dims; d++) {
                weightedSum[base + d] += w * value[d];
            }
            weightSum[slot] += w;
            nextWeight[slot] = w * decay;
        }
    }

    @Override
    long planEndAfter(long chunkEnd) {
        return Math.max(planEnd, chunkEnd);
    }

    @Override
    void readSlot(int slot, double[] out) {
        int base = slot * dims;
        double total = weightSum[slot];
        for (int d = 0; d < dims; d++) {
            out[d] = weightedSum[base + d] / total;
        }
    }
}
