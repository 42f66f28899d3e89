package dev.weft.filters;

/**
 * Turns overlapping, late-arriving action chunks into one plan: per control tick a position (the action)
 * and the plan's own velocity and acceleration.
 *
 * <p><b>Threading:</b> an instance is not thread-safe; all calls on one instance, including
 * {@link #reset()} and the counters, must come from one thread (the control-loop thread).
 *
 * <p><b>Allocation:</b> all workspace (a ring of per-tick slots holding at least
 * {@code (maxSteps−1)·r + 1} ticks, and the interpolation's per-point coefficients) is allocated by the
 * static factory; {@link #accept}, {@link #actionAt}, {@link #stateAt}, {@link #ticksRemaining},
 * {@link #reset()} and the counters allocate nothing and never block. Only
 * {@link #describeLastRejection()} builds a {@code String}.
 *
 * <p><b>Time model:</b> step {@code j} of a chunk whose observation was taken at tick {@code origin}
 * is meant for tick {@code origin + j·r}, where {@code r = Δp/Δc} is the step ratio. The chunk is
 * resampled onto every control tick from {@code nowTick} (its arrival) to {@code origin + (n−1)·r}
 * (n = executable steps) by the blender's {@link Interpolation}; steps whose time lies before
 * {@code nowTick} are stale: never executed, counted in {@link #staleSteps()}. Latency never shifts the
 * plan in time.
 *
 * <p><b>Plan state:</b> the plan is a function of time built from the chunks' curves, and
 * {@link #stateAt} answers its position and its exact first and second derivatives at a tick, in value
 * units per control tick and per tick² (the blender knows the step ratio, not seconds: multiply by
 * {@code 1/Δc} and {@code 1/Δc²} for rates per second).
 *
 * <p>Plan queries concern ticks at or after the {@code nowTick} of the latest accepted call: the plan
 * always covers one contiguous run of ticks {@code [nowTick, planEnd]}, and earlier ticks are history
 * ({@link #actionAt} returns {@code false} for them).
 */
public interface ChunkBlender {

    /** {@link #accept} result: the chunk was malformed (null, steps outside {@code [1, maxSteps]}, or array too short). */
    int REJECTED_SHAPE = -1;
    /** {@link #accept} result: the chunk held a NaN or an infinity; nothing of it was used. */
    int REJECTED_NON_FINITE = -2;
    /** {@link #accept} result: negative tick, origin after now, or now before the {@code nowTick} of an earlier call. */
    int REJECTED_TICKS = -3;
    /**
     * {@link #accept} result: the chunk was computed from an older observation than the plan being
     * executed, so it was dropped (latest-chunk and crossfade blenders only; not an error).
     */
    int SUPERSEDED = -4;

    /**
     * Merges a newly arrived chunk into the plan.
     *
     * <p>The chunk is validated in full before anything changes: on any negative result the plan is
     * exactly as before. A chunk whose executable steps all lie before {@code nowTick} contributes
     * nothing, returns 0 and is counted in {@link #expiredChunks()}.
     *
     * <p>Cost O(T·D) where T is the number of ticks covered (about K·r); allocation-free; control-loop
     * thread only.
     *
     * @param chunk      flat row-major {@code steps × dimensions()} values (step-major: step j, joint d at
     *                   {@code j·D + d}); may be longer than needed; read only and not retained: its values are
     *                   resampled into the blender's own ring before this returns
     * @param steps      number of steps K in this chunk, {@code 1 ≤ steps ≤ maxSteps()}
     * @param originTick the control tick of the observation the chunk was computed from, {@code ≥ 0}
     * @param nowTick    the current control tick, {@code ≥ originTick}, never less than in an earlier call
     * @return the number of control ticks of plan this chunk contributed to ({@code ≥ 0}), or one of the
     *         negative codes {@link #REJECTED_SHAPE}, {@link #REJECTED_NON_FINITE},
     *         {@link #REJECTED_TICKS}, {@link #SUPERSEDED}
     */
    int accept(double[] chunk, int steps, long originTick, long nowTick);

    /**
     * Writes the blended action for {@code tick} into {@code out[0..dimensions())}.
     *
     * <p>Cost O(D), independent of chunk length and overlap; allocation-free; control-loop thread only.
     * The action is a weighted mean or interpolation of accepted finite values; it can only be non-finite
     * if those values come within a few orders of magnitude of {@code Double.MAX_VALUE} (the safety
     * module's finite-value guard stands behind it either way).
     *
     * @param tick a control tick, normally the current one
     * @param out  caller-owned, length at least {@code dimensions()}; modified only when this returns {@code true}
     * @return {@code true} if the plan covers {@code tick}; {@code false} (no plan: starvation, or the tick
     *         is history) leaves {@code out} untouched
     * @throws IllegalArgumentException if {@code out} is null or shorter than {@code dimensions()} (a
     *         programming error, never a data error)
     */
    boolean actionAt(long tick, double[] out);

    /**
     * Writes the plan's state at {@code tick}: its position (exactly what {@link #actionAt} writes), and
     * the exact first and second derivatives of the blended curve at that tick, not differences of past
     * targets. Same coverage as {@link #actionAt}: {@code true} exactly when the plan covers {@code tick}.
     *
     * <p>Units: {@code velocity} in value units per control tick, {@code acceleration} in value units per
     * tick². The blender knows only the step ratio {@code r = Δp/Δc}, not seconds: for rates per second the
     * caller multiplies the velocity by {@code 1/Δc} and the acceleration by {@code 1/Δc²}. Each chunk's
     * curve is a function of the fractional step {@code u = (tick − origin)/r}; its derivatives d/du and
     * d²/du² are divided by {@code r} and {@code r²}. Blends differentiate their weights as well (see the
     * implementations). Where a curve is not smooth (a {@link Interpolation#LINEAR} or
     * {@link Interpolation#CUBIC_HERMITE} point, see {@link Interpolation}), the one-sided value stated
     * there is used.
     *
     * <p>Cost O(D), independent of chunk length and overlap; allocation-free; never blocks; control-loop
     * thread only. Finite unless the accepted values, or their changes per tick, come within a few orders
     * of magnitude of {@code Double.MAX_VALUE}.
     *
     * @param tick         a control tick, normally the current one
     * @param position     caller-owned, length at least {@code dimensions()}; receives the position
     * @param velocity     caller-owned, length at least {@code dimensions()}; receives the velocity per tick
     * @param acceleration caller-owned, length at least {@code dimensions()}; receives the acceleration per tick²
     * @return {@code true} if the plan covers {@code tick}, and then all three arrays were modified (their
     *         first {@code dimensions()} values); {@code false} (no plan: starvation, or the tick is
     *         history) leaves all three untouched
     * @throws IllegalArgumentException if an array is null or shorter than {@code dimensions()}, or two of
     *         them are the same array (a programming error, never a data error)
     */
    boolean stateAt(long tick, double[] position, double[] velocity, double[] acceleration);

    /**
     * Writes the plan's preview ahead of {@code tick}: the mean position over each of consecutive runs
     * of ticks, the first starting at {@code tick} itself, run {@code b} ending before
     * {@code tick + runEnds[b]} (so run b holds {@code runEnds[b] - runEnds[b-1]} ticks, with
     * {@code runEnds[-1] = 0}). Past the plan's last tick the plan is taken to hold its last position
     * (a plan that ends is a plan that stops there). Layout joint-major: run {@code b} of joint
     * {@code d} at {@code out[d·runs + b]}, {@code runs = runEnds.length}.
     *
     * <p>The means come from running sums over the plan's ticks, formed once per accepted chunk, so the
     * cost is O(runs·D) whatever the runs' lengths; allocation-free; never blocks; control-loop thread
     * only. Each mean is the difference of two running sums divided by the run's length: it differs
     * from the mean summed afresh by rounding of the order of the ulp of the running sum (the plan's
     * magnitude times its length in ticks).
     *
     * @param tick    a control tick, normally the current one
     * @param runEnds strictly increasing, the first {@code ≥ 1}; read only
     * @param out     caller-owned, length at least {@code runEnds.length·dimensions()}
     * @return {@code true} if the plan covers {@code tick} (then {@code out} was written); {@code false}
     *         leaves {@code out} untouched
     * @throws IllegalArgumentException if {@code runEnds} is null, empty or not strictly increasing from
     *         at least 1, or {@code out} is null or too short (a programming error, never a data error)
     */
    boolean previewMeans(long tick, int[] runEnds, double[] out);

    /**
     * As {@link #previewMeans(long, int[], double[])} for one dimension alone: its run means in
     * {@code out[0 .. runEnds.length)}, the same doubles. O(runs).
     *
     * @param dimension {@code 0 ≤ dimension < dimensions()}
     * @throws IllegalArgumentException as the all-dimensions form, or if {@code dimension} is out of range
     */
    boolean previewMeans(long tick, int[] runEnds, int dimension, double[] out);

    /**
     * How many consecutive ticks, starting at and including {@code tick}, the plan covers. O(1);
     * allocation-free; control-loop thread only.
     *
     * @param tick a control tick, normally the current one
     * @return 0 when {@code tick} has no plan (starvation, or the tick is history), otherwise
     *         {@code planEnd − tick + 1}
     */
    long ticksRemaining(long tick);

    /**
     * Forgets the plan and the tick history (the next {@link #accept} may use any {@code nowTick}); the
     * counters are kept. O(ring size); allocation-free; control-loop thread only.
     */
    void reset();

    /** Number of values per action D. */
    int dimensions();

    /** Largest number of steps K a chunk may have. */
    int maxSteps();

    /** Step ratio {@code r = Δp/Δc}. */
    double stepRatio();

    /** How plan points are joined between ticks. */
    Interpolation interpolation();

    /** Chunks that contributed at least one tick of plan. */
    long acceptedChunks();

    /** Chunks that were valid but arrived too late for any of their executable steps. */
    long expiredChunks();

    /** Chunks refused as malformed, non-finite or with inconsistent ticks. */
    long rejectedChunks();

    /** Chunks dropped because the plan already came from a newer observation (latest-chunk, crossfade). */
    long supersededChunks();

    /**
     * Executable steps (actions) of valid chunks whose time had already passed when they arrived; never
     * executed. Steps a blender never executes anyway (beyond {@link LatestChunkBlender#executedSteps()})
     * are not counted.
     */
    long staleSteps();

    /** The negative code of the latest rejection, or 0 if there was none since construction. */
    int lastRejection();

    /** Step index of the latest {@link #REJECTED_NON_FINITE} value, or −1. */
    int lastRejectedStep();

    /** Joint index of the latest {@link #REJECTED_NON_FINITE} value, or −1. */
    int lastRejectedJoint();

    /**
     * A sentence describing the latest rejection, naming step, joint and ticks, e.g.
     * {@code "chunk rejected: non-finite value NaN at step 3, joint 2 (origin tick 120, now tick 124)"}.
     * Allocates a {@code String}: for logging off the hot path, or after a negative {@link #accept} result.
     */
    String describeLastRejection();
}
