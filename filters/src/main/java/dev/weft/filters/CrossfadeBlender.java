package dev.weft.filters;

/**
 * Newest-chunk execution with a smooth crossfade at the seam: when a chunk arrives at tick {@code s},
 * the plan at tick {@code s + q} is {@code old + α_q·(new − old)} for {@code q < F}, and the new plan alone
 * from {@code q = F} on, where {@code F} is the fade length in ticks ({@code ceil(fadeSteps·r)}) and
 * {@code α_q = S((q + 1)/(F + 1))} with {@code S} the quintic smooth step {@code 6x⁵ − 15x⁴ + 10x³}
 * (Perlin 2002). As a function of time, {@code α} rises from 0 at the tick before the arrival to 1 at
 * {@code q = F} with zero slope and zero curvature at both ends, so the fade itself adds no jump in
 * velocity or acceleration: between two plans that are smooth, the faded plan is as smooth (C2) at the
 * start and at the end of the fade. The price is a peak rate of {@code 15/8} times that of a straight-line
 * fade, in the middle of the fade.
 *
 * <p>"Old" is the plan as it stood before the chunk arrived (itself possibly mid-fade); where the old
 * plan has already ended, the new plan is used as is (the plan may jump there). {@code fadeSteps = 0}
 * behaves as {@link LatestChunkBlender}.
 *
 * <p>Example, F = 3: α = S(1/4), S(2/4), S(3/4) = 0.1035, 0.5, 0.8965 on the first three ticks after
 * arrival (exactly 53/512, 1/2, 459/512), then 1.
 *
 * <p>Plan state ({@link #stateAt}): the derivatives of {@code old + α·(new − old)}, including the rate of
 * {@code α} itself: velocity {@code old' + α'·(new − old) + α·(new' − old')}, acceleration
 * {@code old'' + α''·(new − old) + 2α'·(new' − old') + α·(new'' − old'')}, with {@code α'} and {@code α''}
 * per tick and tick².
 *
 * <p>As with {@link LatestChunkBlender}, a chunk from an older observation than the plan's is dropped
 * ({@link #supersededChunks()}), and the new chunk replaces the plan beyond its own end.
 *
 * <p>Threading and allocation: see {@link ChunkBlender}; all arrays are allocated by the factory.
 */
public final class CrossfadeBlender extends NewestPlanBlender {

    private final int fadeSteps;
    private final long fadeTicks;
    private long seamTick;

    private CrossfadeBlender(int dims, int maxSteps, double stepRatio, Interpolation interpolation, int fadeSteps) {
        super("crossfade", dims, maxSteps, stepRatio, interpolation);
        if (fadeSteps < 0) {
            throw new IllegalArgumentException("crossfade: fadeSteps must be >= 0, got " + fadeSteps);
        }
        this.fadeSteps = fadeSteps;
        this.fadeTicks = fadeSteps == 0 ? 0 : (long) Math.ceil(fadeSteps * stepRatio - TICK_EPSILON);
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
    void beginChunk(long originTick, long firstTick, long lastTick) {
        seamTick = firstTick;
    }

    @Override
    void mergeTick(long tick, int slot, double[] position, double[] velocity, double[] acceleration, boolean hadPlan) {
        int base = slot * dims;
        long q = tick - seamTick;
        if (hadPlan && q < fadeTicks) {
            double span = fadeTicks + 1.0;
            double x = (q + 1.0) / span;
            double alpha = QuinticSmoothStep.value(x);
            double rate = QuinticSmoothStep.firstDerivative(x) / span;
            double bend = QuinticSmoothStep.secondDerivative(x) / (span * span);
            for (int d = 0; d < dims; d++) {
                int i = base + d;
                double old = positions[i];
                double oldVelocity = velocities[i];
                double oldAcceleration = accelerations[i];
                double gap = position[d] - old;
                double velocityGap = velocity[d] - oldVelocity;
                positions[i] = old + alpha * gap;
                velocities[i] = oldVelocity + rate * gap + alpha * velocityGap;
                accelerations[i] = oldAcceleration + bend * gap + 2.0 * rate * velocityGap
                        + alpha * (acceleration[d] - oldAcceleration);
            }
        } else {
            store(base, position, velocity, acceleration);
        }
    }
}
