package dev.weft.filters;

/**
 * An optional per-joint smoothing stage after blending, run once per control tick.
 *
 * <p><b>Threading:</b> not thread-safe; all calls on one instance from one thread (the control loop).
 * <b>Allocation:</b> state is allocated at construction; no method allocates.
 */
public interface Smoother {

    /** Number of joints (values per sample). */
    int dimensions();

    /**
     * Filters one sample.
     *
     * @param in  {@code dimensions()} input values; read only
     * @param out receives the {@code dimensions()} filtered values; may be the same array as {@code in}
     * @return {@code true} if filtered; {@code false} if any input value was NaN or infinite, in which case
     *         neither the state nor {@code out} was touched (a downstream finite-value guard sees the bad
     *         input if {@code out == in})
     * @throws IllegalArgumentException if an array is null or shorter than {@code dimensions()}
     */
    boolean apply(double[] in, double[] out);

    /**
     * Sets the state to rest at {@code value}: the next sample equal to {@code value} passes unchanged, so
     * there is no start-up transient.
     *
     * @param value {@code dimensions()} finite values; read only
     * @throws IllegalArgumentException if {@code value} is too short or holds a non-finite value (naming the joint)
     */
    void reset(double[] value);

    /** Forgets the state; the next {@link #apply} rests at its input first (as {@link #reset(double[])} would). */
    void reset();

    /**
     * A new smoother of the same kind and parameters with a fresh state, for a companion channel:
     * the control loop runs the plan's velocity and acceleration through two of them, so the
     * limiter's feed-forward stays that of the smoothed plan. For a linear time-invariant smoother
     * (Butterworth) the companions' outputs are exactly the derivatives of the smoothed position;
     * for an adaptive one (One Euro) each companion adapts to its own input, an approximation the
     * limiter's feedback absorbs. Allocates; call at construction, never on the tick path.
     */
    Smoother fresh();
}
