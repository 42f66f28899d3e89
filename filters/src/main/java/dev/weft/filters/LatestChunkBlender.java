package dev.weft.filters;

/**
 * Receding-horizon execution: only the newest chunk is executed, from its arrival on; a newly accepted
 * chunk replaces the whole plan ahead (including any ticks beyond its own end). Optionally only its first
 * {@code n} steps are executable (the next chunk must arrive before those run out, otherwise the plan
 * starves); stale steps count toward those {@code n}, because the steps are counted from the observation.
 * Only executable steps are ever counted as stale ({@link #staleSteps()}): steps from {@code n} on are
 * dropped whatever their time, never stale.
 *
 * <p>Plan state ({@link #stateAt}): the newest chunk's own curve and its derivatives. At the arrival of a
 * new chunk the plan switches to it, so position, velocity and acceleration may jump there; use
 * {@link CrossfadeBlender} or {@link TemporalEnsembleBlender} for a continuous seam.
 *
 * <p>"Newest" means computed from the newest observation: a chunk whose origin tick is older than the
 * plan's is dropped and counted in {@link #supersededChunks()}. A valid chunk of which no executable
 * step is still ahead leaves the plan unchanged and counts in {@link #expiredChunks()}.
 *
 * <p>Threading and allocation: see {@link ChunkBlender}; all arrays are allocated by the factory.
 */
public final class LatestChunkBlender extends NewestPlanBlender {

    private final int executedSteps;

    private LatestChunkBlender(String kind, int dims, int maxSteps, double stepRatio, Interpolation interpolation,
            int executedSteps) {
        super(kind, dims, maxSteps, stepRatio, interpolation);
        if (executedSteps < 1 || executedSteps > maxSteps) {
            throw new IllegalArgumentException(kind + ": executedSteps must be in [1, maxSteps = " + maxSteps + "], got "
                    + executedSteps);
        }
        this.executedSteps = executedSteps;
    }

    /**
     * Executes every step of the newest chunk. Allocates the ring once; the returned blender allocates
     * nothing afterwards.
     *
     * @param dimensions    values per action D, ≥ 1
     * @param maxSteps      largest chunk length K, ≥ 1
     * @param stepRatio     {@code r = Δp/Δc}, finite, &gt; 0
     * @param interpolation how plan points are joined between ticks
     * @throws IllegalArgumentException naming the offending parameter
     */
    public static LatestChunkBlender of(int dimensions, int maxSteps, double stepRatio, Interpolation interpolation) {
        return new LatestChunkBlender("latest chunk", dimensions, maxSteps, stepRatio, interpolation, maxSteps);
    }

    /**
     * Executes at most the first {@code executedSteps} steps of the newest chunk (counted from its
     * observation, so latency uses some of them up; only those of the first {@code executedSteps} steps
     * whose time had passed on arrival count as stale). Parameters as in {@link #of}.
     *
     * @param executedSteps in {@code [1, maxSteps]}
     * @throws IllegalArgumentException naming the offending parameter
     */
    public static LatestChunkBlender firstSteps(int dimensions, int maxSteps, double stepRatio,
            Interpolation interpolation, int executedSteps) {
        return new LatestChunkBlender("latest chunk", dimensions, maxSteps, stepRatio, interpolation, executedSteps);
    }

    /** Largest number of leading steps of a chunk that are executed. */
    public int executedSteps() {
        return executedSteps;
    }

    @Override
    int executableSteps(int steps) {
        return Math.min(steps, executedSteps);
    }

    @Override
    void mergeTick(long tick, int slot, double[] position, double[] velocity, double[] acceleration, boolean hadPlan) {
        store(slot * dims, position, velocity, acceleration);
    }
}
