package dev.weft.safety;

/**
 * The plan ahead of this tick, for the limiter's receding-horizon law: per joint, the mean plan
 * position over each run of ticks that {@link JerkLimiter#previewRunEnds()} gives, the first run
 * starting at this tick. The limiter asks only for the joints that need it this tick (a joint that
 * holds a plan at rest does not), on the control thread, during
 * {@link JerkLimiter#apply(double[], double[], double[], PlanPreview, double[])}.
 *
 * <p>An implementation must not allocate or block: it is called from the control tick.
 */
@FunctionalInterface
public interface PlanPreview {

    /**
     * Writes the run means of joint {@code joint} into {@code out[0 .. runs)}.
     *
     * @return whether there is a preview for this tick (false: the joint uses its other laws)
     */
    boolean runMeans(int joint, double[] out);
}
