package dev.weft.filters;

/**
 * Exponential temporal ensembling (Zhao, Kumar, Levine and Finn, 2023, "Learning Fine-Grained
 * Bimanual Manipulation with Low-Cost Hardware"): every chunk that covers a tick contributes its
 * (resampled) action for that tick, and the action executed is the weighted mean
 * {@code Σ w_i·a_i / Σ w_i} with {@code w_i = exp(−m·i)}, optionally multiplied by a taper (below).
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
 * <p><b>Taper.</b> With the published weights a chunk enters the mean at full weight on its arrival tick
 * and leaves it at full weight after its last tick, so where chunks disagree the plan steps at every
 * entry and exit. The factories with a {@code taperSteps} argument multiply each chunk's weight by
 * {@code τ(t)}, a ramp in and a ramp out along the quintic smooth step {@code S(x) = 6x⁵ − 15x⁴ + 10x³}
 * (Perlin 2002; {@code S}, {@code S'} and {@code S''} are 0 at {@code x = 0}, and {@code S = 1},
 * {@code S' = S'' = 0} at {@code x = 1}). For a chunk covering ticks {@code first … last}
 * ({@code first} = its arrival, {@code T = last − first + 1} ticks) and a ramp of {@code ℓ} ticks:
 * <pre>
 *   τ(t) = S((t − (first − 1))/ℓ)   while t − (first − 1) &lt; ℓ     (0 at the tick before arrival)
 *   τ(t) = S(((last + 1) − t)/ℓ)    while (last + 1) − t &lt; ℓ      (0 at the tick after the last one)
 *   τ(t) = 1                        otherwise
 * </pre>
 * with {@code ℓ = min(L, ⌊(T + 1)/2⌋)}, {@code L = ceil(taperSteps·r)} control ticks: a chunk too short
 * for two full ramps ({@code T < 2L − 1}) gets both ramps shortened to {@code ⌊(T + 1)/2⌋} ticks, so
 * that they meet at weight 1 instead of overlapping. {@code τ} is never 0 on a covered tick, so a chunk
 * alone on a tick still gives exactly its own value there. As a function of time
 * {@code τ} is C2 and vanishes with its first two derivatives where the chunk enters and leaves, so
 * entering and leaving no longer step the plan's position, velocity or acceleration (the plan is as
 * smooth as the chunks' curves; with {@link Interpolation#CUBIC_SPLINE}, C2). The price: a new chunk's
 * influence ramps in over {@code L} ticks, which delays its effect by about {@code L/2} ticks.
 * {@code ℓ = 1} gives every covered tick weight 1, the same as no taper; {@code taperSteps = 0} is no taper.
 *
 * <p>The exponential factor {@code exp(−m·i)} is as published and piecewise constant. When chunks leave in
 * arrival order (for instance all of the same length), an entry or an exit re-indexes all remaining
 * predictions of a tick alike, which scales their weights by a common factor and so leaves the plan
 * unchanged; a chunk that ends before an older one re-indexes only the newer ones and, with
 * {@code m > 0}, can still step the plan by the change in their relative weights.
 *
 * <p><b>Plan state.</b> Each slot keeps, per joint, {@code Σ w·p}, {@code Σ (w·p)'} and
 * {@code Σ (w·p)''}, and {@code W = Σ w}, {@code W'}, {@code W''}, where {@code p} is a chunk's curve at
 * the tick and {@code w} its weight (both as functions of time, per tick). Reading applies the quotient
 * rule: {@code plan = S/W}, {@code plan' = (S' − plan·W')/W}, {@code plan'' = (S'' − 2·plan'·W' − plan·W'')/W}
 * — the exact derivatives of the blended curve. Without a taper {@code W' = W'' = 0}.
 *
 * <p>Implementation: a ring of per-tick running sums. Oldest-first also keeps per tick the weight the
 * next contribution will get ({@code exp(−m)^count}); newest-first multiplies all sums by
 * {@code exp(−m)} before adding the new contribution with factor 1. Each slot keeps its sums in units of
 * the largest weight merged into it so far (a factor common to all six sums, which neither the mean nor
 * the quotient rule sees): the first prediction for a tick counts with weight exactly 1, so a chunk alone
 * on a tick gives exactly its own value, bit for bit, and no weight in a sum exceeds 1. Without a taper
 * this is exactly the published arithmetic. Reading is O(D), independent of K and of how many chunks
 * overlap. Worked example (no taper), m = 0.1, three predictions 1, 2, 4 for one tick,
 * oldest first: weights 1, 0.9048, 0.8187 normalise to 0.3672, 0.3322, 0.3006 and give 2.23405 (2.2341 to
 * four places).
 *
 * <p>Threading and allocation: see {@link ChunkBlender}; all arrays are allocated by the factory.
 */
public final class TemporalEnsembleBlender extends AbstractChunkBlender {

    private final boolean newestFirst;
    private final double decay;
    private final double rate;
    private final double taperSteps;
    private final long taperTicks;
    /** Per slot and joint: Σ w·p, Σ (w·p)', Σ (w·p)''. */
    private final double[] weightedSum;
    private final double[] weightedVelocitySum;
    private final double[] weightedAccelerationSum;
    /** Per slot: W = Σ w, W', W''. */
    private final double[] weightSum;
    private final double[] weightRateSum;
    private final double[] weightBendSum;
    private final double[] nextWeight;
    /**
     * Per slot: the raw weight that counts as 1 in that slot's sums (the largest merged so far). A common
     * factor of all six sums, which neither the mean nor the quotient rule sees.
     */
    private final double[] unit;
    /** The chunk being merged: first and last tick it covers, ramp length ℓ in ticks (0 = no taper). */
    private long chunkFirst;
    private long chunkLast;
    private long chunkRamp;

    private TemporalEnsembleBlender(String kind, int dims, int maxSteps, double stepRatio, Interpolation interpolation,
            double m, double taperSteps, boolean newestFirst) {
        super(kind, dims, maxSteps, stepRatio, interpolation);
        if (!(m >= 0.0) || Double.isInfinite(m)) {
            throw new IllegalArgumentException(kind + ": weight rate m must be finite and >= 0, got " + m);
        }
        if (!(taperSteps >= 0.0) || Double.isInfinite(taperSteps)) {
            throw new IllegalArgumentException(kind + ": taperSteps must be finite and >= 0, got " + taperSteps);
        }
        this.newestFirst = newestFirst;
        this.rate = m;
        this.decay = Math.exp(-m);
        this.taperSteps = taperSteps;
        this.taperTicks = taperSteps == 0.0 ? 0 : Math.max(0L, (long) Math.ceil(taperSteps * stepRatio - TICK_EPSILON));
        this.weightedSum = new double[capacity * dims];
        this.weightedVelocitySum = new double[capacity * dims];
        this.weightedAccelerationSum = new double[capacity * dims];
        this.weightSum = new double[capacity];
        this.weightRateSum = new double[capacity];
        this.weightBendSum = new double[capacity];
        this.nextWeight = new double[capacity];
        this.unit = new double[capacity];
    }

    /**
     * Ensembling with the exact published weights {@code w_i = exp(−m·i)}, {@code i = 0} the oldest
     * prediction for a tick (the paper's convention), no taper. Allocates the ring once; the returned
     * blender allocates nothing afterwards.
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
        return oldestFirst(dimensions, maxSteps, stepRatio, interpolation, m, 0.0);
    }

    /**
     * Ensembling with {@code w_i = exp(−m·i)·τ(t)}, {@code i = 0} the oldest prediction for a tick, and
     * {@code τ} the taper over {@code ceil(taperSteps·r)} control ticks described in the class comment.
     * Parameters and allocation as in {@link #oldestFirst(int, int, double, Interpolation, double)}.
     *
     * @param taperSteps length of each chunk's ramp in and ramp out, in policy steps, finite, ≥ 0 (0 = no
     *                   taper: the published weights)
     * @throws IllegalArgumentException naming the offending parameter
     */
    public static TemporalEnsembleBlender oldestFirst(int dimensions, int maxSteps, double stepRatio,
            Interpolation interpolation, double m, double taperSteps) {
        return new TemporalEnsembleBlender("temporal ensemble (oldest first)", dimensions, maxSteps, stepRatio,
                interpolation, m, taperSteps, false);
    }

    /**
     * Ensembling with the exact published weights {@code w_i = exp(−m·i)}, {@code i = 0} the newest
     * prediction for a tick, no taper. Parameters and allocation as in
     * {@link #oldestFirst(int, int, double, Interpolation, double)}.
     *
     * @throws IllegalArgumentException naming the offending parameter
     */
    public static TemporalEnsembleBlender newestFirst(int dimensions, int maxSteps, double stepRatio,
            Interpolation interpolation, double m) {
        return newestFirst(dimensions, maxSteps, stepRatio, interpolation, m, 0.0);
    }

    /**
     * Ensembling with {@code w_i = exp(−m·i)·τ(t)}, {@code i = 0} the newest prediction for a tick, and
     * {@code τ} the taper over {@code ceil(taperSteps·r)} control ticks described in the class comment.
     * Parameters and allocation as in {@link #oldestFirst(int, int, double, Interpolation, double, double)}.
     *
     * @throws IllegalArgumentException naming the offending parameter
     */
    public static TemporalEnsembleBlender newestFirst(int dimensions, int maxSteps, double stepRatio,
            Interpolation interpolation, double m, double taperSteps) {
        return new TemporalEnsembleBlender("temporal ensemble (newest first)", dimensions, maxSteps, stepRatio,
                interpolation, m, taperSteps, true);
    }

    /** The weight rate m. */
    public double weightRate() {
        return rate;
    }

    /** Whether the newest prediction gets weight 1 (otherwise the oldest does). */
    public boolean isNewestFirst() {
        return newestFirst;
    }

    /** Taper length in policy steps, as configured (0 = no taper: the published weights). */
    public double taperSteps() {
        return taperSteps;
    }

    /**
     * Taper length {@code L} in control ticks, {@code ceil(taperSteps·r)} (0 = no taper); a chunk covering
     * fewer than {@code 2L − 1} ticks uses shorter ramps (see the class comment).
     */
    public long taperTicks() {
        return taperTicks;
    }

    @Override
    boolean dropsOlderOrigins() {
        return false;
    }

    @Override
    void beginChunk(long originTick, long firstTick, long lastTick) {
        chunkFirst = firstTick;
        chunkLast = lastTick;
        long fit = (lastTick - firstTick + 2) / 2;
        chunkRamp = Math.min(taperTicks, fit);
    }

    @Override
    void mergeTick(long tick, int slot, double[] position, double[] velocity, double[] acceleration, boolean hadPlan) {
        // Taper τ and its derivatives per tick (1, 0, 0 on the plateau or without a taper).
        double taper = 1.0;
        double taperRate = 0.0;
        double taperBend = 0.0;
        if (chunkRamp > 0) {
            long in = tick - (chunkFirst - 1);
            long out = (chunkLast + 1) - tick;
            double ramp = chunkRamp;
            if (in < chunkRamp) {
                double x = in / ramp;
                taper = QuinticSmoothStep.value(x);
                taperRate = QuinticSmoothStep.firstDerivative(x) / ramp;
                taperBend = QuinticSmoothStep.secondDerivative(x) / (ramp * ramp);
            } else if (out < chunkRamp) {
                double x = out / ramp;
                taper = QuinticSmoothStep.value(x);
                taperRate = -QuinticSmoothStep.firstDerivative(x) / ramp;
                taperBend = QuinticSmoothStep.secondDerivative(x) / (ramp * ramp);
            }
        }
        int base = slot * dims;
        if (!hadPlan) {
            // First prediction for this tick: it defines the slot's unit of weight, so it counts with
            // weight exactly 1 (and a chunk alone on a tick reads back its own value bit for bit). The
            // taper is never 0 on a covered tick, so the divisions are safe.
            unit[slot] = taper;
            nextWeight[slot] = decay;
            double relativeRate = taperRate / taper;
            double relativeBend = taperBend / taper;
            weightSum[slot] = 1.0;
            weightRateSum[slot] = relativeRate;
            weightBendSum[slot] = relativeBend;
            for (int d = 0; d < dims; d++) {
                int i = base + d;
                double p = position[d];
                double v = velocity[d];
                weightedSum[i] = p;
                weightedVelocitySum[i] = relativeRate * p + v;
                weightedAccelerationSum[i] = relativeBend * p + 2.0 * relativeRate * v + acceleration[d];
            }
            return;
        }
        double factor;
        if (newestFirst) {
            factor = 1.0;
            scaleSlot(slot, base, decay);
        } else {
            factor = nextWeight[slot];
            nextWeight[slot] = factor * decay;
        }
        double raw = factor * taper;
        double current = unit[slot];
        if (raw > current) {
            // Re-express the sums in units of the larger weight, so that no weight exceeds 1.
            scaleSlot(slot, base, current / raw);
            unit[slot] = raw;
            current = raw;
        }
        double w = raw / current;
        double wRate = factor * taperRate / current;
        double wBend = factor * taperBend / current;
        weightSum[slot] += w;
        weightRateSum[slot] += wRate;
        weightBendSum[slot] += wBend;
        for (int d = 0; d < dims; d++) {
            int i = base + d;
            double p = position[d];
            double v = velocity[d];
            weightedSum[i] += w * p;
            weightedVelocitySum[i] += wRate * p + w * v;
            weightedAccelerationSum[i] += wBend * p + 2.0 * wRate * v + w * acceleration[d];
        }
    }

    /** Multiplies all six sums of a slot by {@code k}. */
    private void scaleSlot(int slot, int base, double k) {
        weightSum[slot] *= k;
        weightRateSum[slot] *= k;
        weightBendSum[slot] *= k;
        for (int d = 0; d < dims; d++) {
            weightedSum[base + d] *= k;
            weightedVelocitySum[base + d] *= k;
            weightedAccelerationSum[base + d] *= k;
        }
    }

    @Override
    long planEndAfter(long chunkEnd) {
        return Math.max(planEnd, chunkEnd);
    }

    @Override
    void readPosition(int slot, double[] out) {
        int base = slot * dims;
        double total = weightSum[slot];
        for (int d = 0; d < dims; d++) {
            out[d] = weightedSum[base + d] / total;
        }
    }

    @Override
    double readPosition(int slot, int dimension) {
        return weightedSum[slot * dims + dimension] / weightSum[slot];
    }

    @Override
    void readState(int slot, double[] position, double[] velocity, double[] acceleration) {
        int base = slot * dims;
        double total = weightSum[slot];
        double totalRate = weightRateSum[slot];
        double totalBend = weightBendSum[slot];
        for (int d = 0; d < dims; d++) {
            int i = base + d;
            double p = weightedSum[i] / total;
            double v = (weightedVelocitySum[i] - p * totalRate) / total;
            position[d] = p;
            velocity[d] = v;
            acceleration[d] = (weightedAccelerationSum[i] - 2.0 * v * totalRate - p * totalBend) / total;
        }
    }
}
