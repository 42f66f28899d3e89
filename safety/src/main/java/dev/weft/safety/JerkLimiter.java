package dev.weft.safety;

/**
 * Turns a target position per joint (any {@code double}, NaN and infinities included) into the
 * command sent this tick, such that the emitted command sequence never leaves the operating range
 * and its finite differences at the control period {@code dt},
 * {@code v[n] = (q[n] - q[n-1]) / dt}, {@code a[n] = (v[n] - v[n-1]) / dt},
 * {@code j[n] = (a[n] - a[n-1]) / dt}, never exceed the velocity, acceleration and jerk bounds.
 *
 * <h2>Method</h2>
 * Each joint keeps the state (q, v, a) of a continuous trajectory whose jerk is piecewise constant
 * and chooses the jerk of every tick in two steps, a shield and a nominal law.
 *
 * <p><b>The shield.</b> The time-optimal stop of the current state (the double-S deceleration of
 * Biagiotti and Melchiorri, <i>Trajectory Planning for Automatic Machines and Robots</i>, Springer
 * 2008, Section 3.4) is always admissible. Another jerk for the tick is admissible when the
 * successor keeps |a| and |v| inside their bounds for the whole tick and can still stop inside the
 * position range with a speed inside its bound; one that is not is replaced by the admissible blend
 * {@code (1 - mu) * stop(t) + mu * jerk} with the largest {@code mu} found by bisection. A valid
 * choice always exists.
 *
 * <p><b>The nominal law</b> follows the plan's state (position, velocity, acceleration: {@link
 * #apply(double[], double[], double[], double[])}). Near the plan it is linear: state feedback on
 * the error predicted at the end of the tick, with the closed-loop poles of the sampled triple
 * integrator placed at {@code exp(-w dt)}, w = 4, 12 and 40 rad/s (Ackermann's formula), and the
 * plan's own derivatives fed forward, the tracking filters on the error with the reference's
 * velocity and acceleration of Biagiotti and Melchiorri's Chapter 4 in sampled, linear form. On a
 * plan inside the bounds the command is the plan. The acceleration fed forward follows the plan's
 * at a rate inside the jerk bound; the share of acceleration and jerk fed forward falls while the
 * plan's velocity, acceleration or jerk is beyond 0.9 of its bound, and the share of velocity fed
 * forward while its velocity or its acceleration load (lagged over 0.2 s) is; each share is held
 * for 30 ms while the plan keeps asking for it before it recovers. So an infeasible plan is
 * averaged rather than chased, and a fast wiggle is neither rectified into a drift nor modulated
 * at its beat with the tick;
 * and the rate at which the plan moves beyond its own derivatives (a plan re-planned at every
 * chunk steps) is estimated from its positions and fed forward too. Far from the plan, where the
 * linear law would ask for more than six times the jerk bound, and for every set point ({@link
 * #apply(double[], double[])}), the law is minimum-time, as the online trajectory filters of their
 * Chapter 4 (after Zanasi, Guarino Lo Bianco and Tonielli, Automatica 36, 2000): the largest blend
 * {@code (1 - lambda) * stop(t) + lambda * (+-J)} whose successor can still come to rest at or
 * before the target, in the frame of the plan moving on at its lagged velocity while the plan has
 * lately been followable, toward its position alone otherwise. For a constant target this is the
 * double-S law.
 *
 * <p><b>The receding-horizon law</b> leads instead, once a loop passes the plan's preview ({@link
 * #apply(double[], double[], double[], PlanPreview, double[])}: the plan's mean over each of
 * {@link #previewRuns()} runs of ticks ahead, 0.4 s in all), while the plan, at this tick or in the
 * preview, is beyond 0.9 of a bound and for the horizon's length after: model predictive control
 * with move blocking (Maciejowski, <i>Predictive Control with Constraints</i>, 2002): the jerk held
 * over each run, the least-squares fit of the command's run means to the plan's with the jerk priced
 * in and boxed to its bound, solved by a primal active set method (the strategy of Stark and
 * Parker's bounded-variable least squares, Computational Statistics 10, 1995) with exterior
 * penalties on the accelerations and velocities at the runs' ends; its first jerk, through the
 * shield. See {@code PreviewLaw}.
 *
 * <h2>What was changed for the discrete-time bounds</h2>
 * <ul>
 *   <li>The published filters bound the continuous derivatives. The emitted command is a sample of
 *   the continuous trajectory, and the k-th finite difference of samples divided by dt^k is a
 *   B-spline-weighted mean of the k-th derivative over the last k periods (Peano kernel theorem),
 *   so bounding the continuous velocity, acceleration and jerk at every instant, including inside
 *   a tick, bounds the finite differences as defined above.</li>
 *   <li>The switching instants of the stop need not fall on ticks; the blend follows the stop
 *   exactly inside a tick instead of rounding its switches to ticks.</li>
 *   <li>Each bound is reduced, once at construction, by the rounding error a double position of the
 *   joint's magnitude adds to a finite difference ({@code ulp(|q|max) / dt^k} times a small
 *   constant), so the guarantee holds on the emitted doubles, not only in exact arithmetic.
 *   {@link #create} refuses bounds too small to be resolved at this period.</li>
 * </ul>
 *
 * <h2>Flags</h2>
 * {@link #apply} returns, and {@link #flags(int)} gives per joint, which bound shaped the command
 * this tick: {@link #POSITION} (target outside the operating range, or braking for a position
 * bound), {@link #VELOCITY}, {@link #ACCELERATION} (the plan beyond the bound, or the shield clipped
 * for it), {@link #JERK} (the jerk at its bound),
 * plus the fault flags {@link #NON_FINITE_TARGET} (the joint ignored its target and braked to a
 * hold), {@link #NOT_VIABLE} (the state could not be kept inside the bounds; seen only after a reset
 * to a state that cannot stop in range) and {@link #POSITION_CLAMPED} (last-resort clamp; never
 * expected).
 *
 * <h2>Threading and allocation</h2>
 * One instance belongs to one thread (the control loop). No method allocates after construction.
 */
public final class JerkLimiter {

    /** The position range shaped the command (target clamped, or braking for a bound). */
    public static final int POSITION = 1;
    /** The velocity bound shaped the command. */
    public static final int VELOCITY = 1 << 1;
    /** The acceleration bound shaped the command. */
    public static final int ACCELERATION = 1 << 2;
    /** The jerk bound shaped the command (the jerk is at its bound). */
    public static final int JERK = 1 << 3;
    /** The target was NaN or infinite; the joint braked to a hold instead. A fault. */
    public static final int NON_FINITE_TARGET = 1 << 4;
    /** The state could not be kept inside the bounds (only after a reset to such a state). A fault. */
    public static final int NOT_VIABLE = 1 << 5;
    /** The last-resort position clamp engaged. A fault; no input should ever cause it. */
    public static final int POSITION_CLAMPED = 1 << 6;
    /** All fault flags. */
    public static final int FAULT_FLAGS = NON_FINITE_TARGET | NOT_VIABLE | POSITION_CLAMPED;

    /** Largest share of a bound the floating-point margin may take before {@link #create} refuses it. */
    static final double MAX_MARGIN_SHARE = 1e-2;

    private final JointLimits limits;
    private final double dt;
    private final AxisFilter[] axes;
    private final int[] jointFlags;

    private JerkLimiter(JointLimits limits, double dt, AxisFilter[] axes) {
        this.limits = limits;
        this.dt = dt;
        this.axes = axes;
        this.jointFlags = new int[axes.length];
    }

    /**
     * Creates a limiter at rest in the middle of each joint's operating range; call
     * {@link #reset(double[])} with the measured pose before use.
     *
     * @param limits        joint limits
     * @param periodSeconds control period dt, finite and &gt; 0
     * @throws IllegalArgumentException when the period is invalid, or a bound of a joint is too small
     *                                  to be resolved at this period with positions of the joint's
     *                                  magnitude (the message names joint and field)
     */
    public static JerkLimiter create(JointLimits limits, double periodSeconds) {
        if (limits == null) {
            throw new IllegalArgumentException("jerk limiter: limits must not be null");
        }
        if (!Double.isFinite(periodSeconds) || !(periodSeconds > 0.0)) {
            throw new IllegalArgumentException("jerk limiter: control period must be finite and > 0 s, was "
                    + periodSeconds);
        }
        double dt = periodSeconds;
        AxisFilter[] axes = new AxisFilter[limits.count()];
        int[] previewRuns = AxisFilter.previewRuns(dt);
        for (int i = 0; i < axes.length; i++) {
            double lo = limits.operatingMin(i);
            double hi = limits.operatingMax(i);
            double mag = Math.max(Math.max(Math.abs(limits.positionMin(i)), Math.abs(limits.positionMax(i))),
                    Double.MIN_NORMAL);
            double u = Math.ulp(mag);
            double eps = Math.ulp(1.0);
            double vMax = limits.velocity(i);
            double aMax = limits.acceleration(i);
            double jMax = limits.jerk(i);
            // A position rounded to the nearest double is off by at most u / 2. As each command is the
            // previous command plus an increment, these errors do not accumulate, and the k-th finite
            // difference is off by at most 2^(k-2) u / dt^k from the computed trajectory. The margins
            // are four times that, plus the relative rounding of the increments themselves.
            double vMargin = 2.0 * u / dt + 16.0 * eps * vMax;
            double aMargin = 4.0 * u / (dt * dt) + 16.0 * eps * (vMax / dt + aMax);
            double jMargin = 8.0 * u / (dt * dt * dt) + 16.0 * eps * (vMax / (dt * dt) + aMax / dt);
            String at = JointLimits.where(i, limits.name(i));
            requireResolvable(at, "velocity bound", vMax, vMargin, dt, mag);
            requireResolvable(at, "acceleration bound", aMax, aMargin, dt, mag);
            requireResolvable(at, "jerk bound", jMax, jMargin, dt, mag);
            double posSlack = 1024.0 * Math.ulp(mag + (hi - lo));
            if (!(hi - lo > 64.0 * posSlack)) {
                throw new IllegalArgumentException(at + ": operating range [" + lo + ", " + hi
                        + "] is too narrow to be resolved in double precision");
            }
            axes[i] = new AxisFilter(dt, lo, hi, vMax, aMax, jMax, vMargin, aMargin, jMargin, posSlack, previewRuns);
        }
        return new JerkLimiter(limits, dt, axes);
    }

    private static void requireResolvable(String at, String field, double bound, double margin,
                                          double dt, double mag) {
        if (margin > MAX_MARGIN_SHARE * bound) {
            throw new IllegalArgumentException(at + ": " + field + " " + bound
                    + " is too small to be resolved at control period " + dt
                    + " s with positions of magnitude " + mag + " (double rounding alone is " + margin + ")");
        }
    }

    /** Number of joints. */
    public int joints() {
        return axes.length;
    }

    /** Control period in seconds. */
    public double periodSeconds() {
        return dt;
    }

    /** The limits this limiter enforces. */
    public JointLimits limits() {
        return limits;
    }

    /**
     * Sets the state to a measured pose at rest. Same as {@link #reset(double[], double[], double[])}
     * with zero velocity and acceleration.
     */
    public boolean reset(double[] position) {
        checkLength("position", position);
        for (int i = 0; i < axes.length; i++) {
            if (!axes[i].viable(position[i], 0.0, 0.0)) {
                return false;
            }
        }
        for (int i = 0; i < axes.length; i++) {
            axes[i].set(position[i], 0.0, 0.0);
            jointFlags[i] = 0;
        }
        return true;
    }

    /**
     * Sets the state (position, velocity, acceleration per joint), e.g. from a measured pose.
     * Nothing changes unless every joint's state is finite, inside the operating range and the
     * velocity and acceleration bounds, and can stop inside the operating range.
     *
     * @param position     read only, length {@link #joints()}
     * @param velocity     read only, length {@link #joints()}
     * @param acceleration read only, length {@link #joints()}
     * @return whether the state was accepted
     * @throws IllegalArgumentException when an array is null or has the wrong length
     */
    public boolean reset(double[] position, double[] velocity, double[] acceleration) {
        checkLength("position", position);
        checkLength("velocity", velocity);
        checkLength("acceleration", acceleration);
        for (int i = 0; i < axes.length; i++) {
            if (!axes[i].viable(position[i], velocity[i], acceleration[i])) {
                return false;
            }
        }
        for (int i = 0; i < axes.length; i++) {
            axes[i].set(position[i], velocity[i], acceleration[i]);
            jointFlags[i] = 0;
        }
        return true;
    }

    /**
     * Copies the state of another limiter over the same joints (used when switching limits) and
     * returns whether every joint's copied state is viable under this limiter's bounds.
     */
    boolean resetFrom(JerkLimiter other) {
        boolean ok = true;
        for (int i = 0; i < axes.length; i++) {
            AxisFilter o = other.axes[i];
            ok &= axes[i].viable(o.q, o.v, o.a);
            axes[i].set(o.q, o.v, o.a);
            axes[i].copyTracking(o);
        }
        return ok;
    }

    /**
     * Advances one tick toward a set point per joint (a target at rest: zero velocity and
     * acceleration) and writes the command. Same as {@link #apply(double[], double[], double[], double[])}
     * with zero velocity and acceleration; use that form to follow a moving plan.
     *
     * @param target  read only, length {@link #joints()}; any values, non-finite included (a
     *                non-finite entry makes that joint brake to a hold and raises
     *                {@link #NON_FINITE_TARGET})
     * @param command written, length {@link #joints()}; always finite and inside the operating range
     * @return OR of the per-joint flags of this tick
     */
    public int apply(double[] target, double[] command) {
        checkLength("target", target);
        checkLength("command", command);
        int all = 0;
        for (int i = 0; i < axes.length; i++) {
            int f = axes[i].follow(target[i], 0.0, 0.0);
            jointFlags[i] = f;
            all |= f;
            command[i] = axes[i].q;
        }
        return all;
    }

    /**
     * Advances one tick along a plan and writes the command: the plan's state at the time of this
     * tick's command is position {@code target}, velocity {@code velocity} (units/s) and
     * acceleration {@code acceleration} (units/s^2) per joint.
     *
     * @param target       read only, length {@link #joints()}; any values, non-finite included
     * @param velocity     read only, length {@link #joints()}; any values (a non-finite entry is
     *                     treated as a non-finite target)
     * @param acceleration read only, length {@link #joints()}; likewise
     * @param command      written, length {@link #joints()}; always finite and inside the operating range
     * @return OR of the per-joint flags of this tick
     */
    public int apply(double[] target, double[] velocity, double[] acceleration, double[] command) {
        return apply(target, velocity, acceleration, null, command);
    }

    /** Number of runs of the preview {@link #apply(double[], double[], double[], PlanPreview, double[])} takes per joint. */
    public int previewRuns() {
        return axes[0].law.runs;
    }

    /**
     * Where each run of the preview ends, in ticks from the tick of the command: run {@code b} holds
     * the ticks {@code [ends[b-1], ends[b])} ahead, with {@code ends[-1] = 0} (a fresh copy).
     */
    public int[] previewRunEnds() {
        return axes[0].law.runEnds.clone();
    }

    /**
     * As {@link #apply(double[], double[], double[], double[])}, with the plan's preview: per joint,
     * the mean plan position over each of the {@link #previewRuns()} runs of ticks ahead that
     * {@link #previewRunEnds()} gives, the first starting at this tick. While the plan, now or in the
     * preview, is beyond 0.9 of a bound, the receding-horizon law chooses the jerk; a joint that holds
     * a plan at rest does not ask for its preview. {@code preview == null} is the same as the
     * four-argument form.
     */
    public int apply(double[] target, double[] velocity, double[] acceleration, PlanPreview preview, double[] command) {
        checkLength("target", target);
        checkLength("velocity", velocity);
        checkLength("acceleration", acceleration);
        checkLength("command", command);
        int all = 0;
        for (int i = 0; i < axes.length; i++) {
            int f = axes[i].follow(target[i], velocity[i], acceleration[i], preview, i);
            jointFlags[i] = f;
            all |= f;
            command[i] = axes[i].q;
        }
        return all;
    }

    /**
     * Advances one tick along the time-optimal stop under the same bounds (a hold once at rest) and
     * writes the command.
     *
     * @param command written, length {@link #joints()}
     * @return OR of the per-joint flags of this tick
     */
    public int brake(double[] command) {
        checkLength("command", command);
        int all = 0;
        for (int i = 0; i < axes.length; i++) {
            int f = axes[i].brake();
            jointFlags[i] = f;
            all |= f;
            command[i] = axes[i].q;
        }
        return all;
    }

    /** Copies every joint's state (position, velocity, acceleration) into {@code store} (length 3 x joints). */
    void saveState(double[] store) {
        for (int i = 0; i < axes.length; i++) {
            store[3 * i] = axes[i].q;
            store[3 * i + 1] = axes[i].v;
            store[3 * i + 2] = axes[i].a;
        }
    }

    /** Puts back a state taken by {@link #saveState}; the plan memory is forgotten, as by a reset. */
    void restoreState(double[] store) {
        for (int i = 0; i < axes.length; i++) {
            axes[i].set(store[3 * i], store[3 * i + 1], store[3 * i + 2]);
        }
    }

    /** Flags of joint {@code joint} from the last {@link #apply} or {@link #brake}. */
    public int flags(int joint) {
        return jointFlags[joint];
    }

    /** Commanded position of a joint (the last command). */
    public double position(int joint) {
        return axes[joint].q;
    }

    /** Velocity of the commanded trajectory of a joint at the last tick. */
    public double velocity(int joint) {
        return axes[joint].v;
    }

    /** Acceleration of the commanded trajectory of a joint at the last tick. */
    public double acceleration(int joint) {
        return axes[joint].a;
    }

    /** Writes the last command into {@code out} (length {@link #joints()}). */
    public void position(double[] out) {
        checkLength("out", out);
        for (int i = 0; i < axes.length; i++) {
            out[i] = axes[i].q;
        }
    }

    /** Whether every joint has zero velocity and acceleration. */
    public boolean atRest() {
        for (AxisFilter ax : axes) {
            if (ax.v != 0.0 || ax.a != 0.0) {
                return false;
            }
        }
        return true;
    }

    /** Time in seconds the stop would take for joint {@code joint} from its current state. */
    public double stoppingTime(int joint) {
        return axes[joint].stoppingTime();
    }

    /** Longest {@link #stoppingTime(int)} over the joints. */
    public double stoppingTime() {
        double t = 0.0;
        for (int i = 0; i < axes.length; i++) {
            t = Math.max(t, axes[i].stoppingTime());
        }
        return t;
    }

    /** Position at which joint {@code joint} comes to rest if the stop starts now. */
    public double restPosition(int joint) {
        return axes[joint].restPosition();
    }

    private void checkLength(String what, double[] x) {
        if (x == null || x.length != axes.length) {
            throw new IllegalArgumentException("jerk limiter: " + what + " must have length " + axes.length
                    + ", was " + (x == null ? "null" : String.valueOf(x.length)));
        }
    }
}
