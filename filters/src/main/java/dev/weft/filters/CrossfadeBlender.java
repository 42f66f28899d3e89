package dev.weft.filters;

/**
 * Newest-chunk execution with a linear crossfade at the seam: when a chunk arrives at tick {@code s},
 * the action for tick {@code s + q} is {@code old + α_q·(new − old)} with {@code α_q = (q+1)/(F+1)} for
 * {@code q < F}, and the new plan alone from {@code q = F} on, where {@code F} is the fade length in ticks
 * ({@code ceil(fadeSteps·r)}). "Old" is the plan as it stood before the chunk arrived (itself possibly
 * mid-fade); where the old plan has already ended, the new plan is used as is. {@code fadeSteps = 0}
 * behaves as {@link LatestChunkBlender}.
 *
 * <p>Example, F = 3: α = 0.25, 0.5, 0.75 on the first three ticks after arrival, then 1.
 *
 * <p>As with {@link LatestChunkBlender}, a chunk from an older observation than the plan's is dropped
 * ({@link #supersededChunks()}), and the new chunk replaces the plan beyond its own end.
 *
 * <p>Threading and allocation: see {@link ChunkBlender}; all arrays are allocated by the factory.
 */
public final class CrossfadeBlender extends AbstractChunkBlender {

    private final int fadeSteps;
    private final long fadeTicks;
    private final double[] values;
    private long seamTick;

    private CrossfadeBlender(int dims, int maxSteps, double stepRatio, Interpolation interpolation, int fadeSteps) {
        super("crossfade", dims, maxSteps, stepRatio, interpolation);
        if (fadeSteps < 0) {
            throw new IllegalArgumentException("crossfade: fadeSteps must be >= 0, got " + fadeSteps);
        }
        this.fadeSteps = fadeSteps;
        this.fadeTicks = fadeSteps == 0 ? 0 : (long) Math.ceil(fadeSteps * stepRatio - TICK_EPSILON);
        this.values = new double[capacity * dims];
    }

    /**
     * Allocates the ring once; the returned blender allocates nothing afterwards.
     *
     * @param dimensions    values per action D, ≥ 1
     * @param maxSteps      largest chunk length K, ≥ 1
     * @param stepRatio     {@code r = Δp/Δc}, finite, &gt; 0
     * @param interpolation how plan points are joined between ticks
     * @param fadeSteps     fade length in policy steps, ≥ 0 (spans {@code ceil(fadeSteps·r)} control ticks)
     * @throws IllegalArgumentException naming the offending parameter
     */
    public static CrossfadeBlender of(int dimensions, int maxSteps, double stepRatio, Interpolation interpolation,
            int fadeSteps) {
        return new CrossfadeBlender(dimensions, maxSteps, stepRatio, interpolation, fadeSteps);
    }

    /** Fade length in policy steps, as configured. */
    public int fadeSteps() {
        return fadeSteps;
    }

    /** Fade length in control ticks, {@code ceil(fadeSteps·r)}. */
    public long fadeTicks() {
        return fadeTicks;
    }

    @Override
    boolean dropsOlderOrigins() {
        return true;
    }

    @Override
    void beginChunk(long originTick, long nowTick) {
        seamTick = nowTick;
    }

    @Override
    void mergeTick(long tick, int slot, double[] value, boolean hadPlan) {
        int base = slot * dims;
        long q = tick - seamTick;
        if (hadPlan && q < fadeTicks) {
            double alpha = (q + 1.0) / (fadeTicks + 1.0);
            for (int d = 0; d < dims; d++) {
                double old = values[base + d];
                values[base + d] = old + alpha * (value[d] - old);
            }
        } else {
            System.arraycopy(value, 0, values, base, dims);
        }
    }

    @Override
    long planEndAfter(long chunkEnd) {
        return chunkEnd;
    }

    @Override
    void readSlot(int slot, double[] out) {
        System.arraycopy(values, slot * dims, out, 0, dims);
    }
}
