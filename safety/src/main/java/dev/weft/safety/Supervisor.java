package dev.weft.safety;

/**
 * The arming and controlled-stop state machine. It owns the {@link JerkLimiter}s and produces the
 * command of every tick from the blended target and the watchdog result, so a stop runs through the
 * same jerk-limited dynamics as normal motion.
 *
 * <pre>
 *   DISARMED --arm()--&gt; ARMING --reached plan--&gt; ARMED
 *      ^                  |                       |
 *      |            fault / disarm          fault / disarm
 *      |                  v                       v
 *      +--standstill-- STOPPING &lt;-----------------+
 *                         | standstill after a fault
 *                         v
 *                      FAULTED --reset(), fault cleared--&gt; DISARMED
 * </pre>
 *
 * <ul>
 *   <li>DISARMED and FAULTED send hold commands only (the limiter's stop, which is a hold at rest).</li>
 *   <li>ARMING starts at the last command (the held pose, at rest), so the emitted command
 *   sequence stays within its bounds across the switch, and follows its ramped target under limits
 *   scaled down by the arming factors, then (after the ramp) the plan under the full limits; it is
 *   refused when the first planned action is farther from the measured pose than the configured
 *   offset. Once the ramp is over and every joint is within the arming tolerance of the plan: ARMED.</li>
 *   <li>A watchdog code other than 0, a non-finite target, a limiter fault or the arming timeout
 *   seen in {@link #step} at tick n makes the command of tick n the first command of the
 *   controlled stop.</li>
 *   <li>STOPPING brings every joint to standstill along the time-optimal stop under the full
 *   acceleration and jerk bounds. With {@link StopCategory#CATEGORY_1},
 *   {@link #powerRemovalRequested()} turns true at standstill.</li>
 *   <li>A fault is latched: after the stop the state is FAULTED until {@link #reset} succeeds, which
 *   needs the last tick to have been free of watchdog conditions and non-finite targets.</li>
 * </ul>
 *
 * <p>Every transition goes to the {@link TransitionListener} with tick, time, states and cause.
 *
 * <p>Threading and allocation: all methods run on the control thread; {@link #step}, {@link #arm},
 * {@link #requestDisarm} and {@link #reset} allocate nothing.
 */
public final class Supervisor {

    private final JerkLimiter main;
    private final JerkLimiter soft;
    private final StopCategory category;
    private final double[] maxArmingOffset;
    private final double armingTolerance;
    private final long armingTimeoutTicks;
    private final long armingRampTicks;
    private final double period;
    private final double[] armStart;
    private final double[] rampTarget;
    private final double[] rampVelocity;
    private final double[] rampAcceleration;
    private final double[] atRest;
    private final double[] saved;
    private final TransitionListener listener;
    private final int joints;

    private SupervisorState state = SupervisorState.DISARMED;
    private boolean faultLatched;
    private int latchedCause;
    private boolean disarmRequested;
    private boolean powerRemovalRequested;
    private int lastWatchdogCode;
    private boolean lastTargetFinite = true;
    private long armingTicks;
    /** After the soft start's ramp: the full-limit limiter closes the gap to the plan before ARMED. */
    private boolean catchingUp;
    private int lastFlags;
    private int refusedJoint = -1;
    private JerkLimiter active;
    private final JointLimits limits;

    private Supervisor(Builder b, double[] initialPose) {
        this.limits = b.limits;
        this.main = JerkLimiter.create(b.limits, b.period);
        this.soft = JerkLimiter.create(b.limits.scaled(b.armVelocity, b.armAcceleration, b.armJerk), b.period);
        this.category = b.category;
        this.joints = b.limits.count();
        this.maxArmingOffset = b.maxArmingOffset.clone();
        this.armingTolerance = b.armingTolerance;
        this.armingTimeoutTicks = b.armingTimeoutTicks;
        this.armingRampTicks = b.armingRampTicks;
        this.period = b.period;
        this.armStart = new double[b.limits.count()];
        this.rampTarget = new double[b.limits.count()];
        this.rampVelocity = new double[b.limits.count()];
        this.rampAcceleration = new double[b.limits.count()];
        this.atRest = new double[b.limits.count()];
        this.saved = new double[3 * b.limits.count()];
        this.listener = b.listener;
        if (initialPose == null || initialPose.length != joints) {
            throw new IllegalArgumentException("supervisor: initial pose must have length " + joints);
        }
        for (int i = 0; i < joints; i++) {
            double x = initialPose[i];
            if (!(Double.isFinite(x) && x >= b.limits.operatingMin(i) && x <= b.limits.operatingMax(i))) {
                throw new IllegalArgumentException("supervisor: initial pose of " + JointLimits.where(i, b.limits.name(i))
                        + " is " + x + ", outside the operating range [" + b.limits.operatingMin(i) + ", "
                        + b.limits.operatingMax(i) + "]");
            }
        }
        this.active = main;
        if (!main.reset(initialPose)) {
            throw new IllegalArgumentException("supervisor: initial pose not accepted by the limiter");
        }
    }

    /**
     * Starts a builder.
     *
     * @param limits        joint limits enforced in every state
     * @param periodSeconds control period
     */
    public static Builder builder(JointLimits limits, double periodSeconds) {
        return new Builder(limits, periodSeconds);
    }

    /** The joint limits enforced in every state. */
    public JointLimits limits() {
        return limits;
    }

    /** Current state. */
    public SupervisorState state() {
        return state;
    }

    /** Stop category in use. */
    public StopCategory stopCategory() {
        return category;
    }

    /** Cause code of the latched fault, 0 when none is latched. */
    public int latchedCause() {
        return faultLatched ? latchedCause : 0;
    }

    /** Whether the port should remove power (category 1 stop at standstill). Cleared by a successful arm. */
    public boolean powerRemovalRequested() {
        return powerRemovalRequested;
    }

    /** Runs of the preview {@link #step(long, long, double[], double[], double[], PlanPreview, int, double[])} takes per joint. */
    public int previewRuns() {
        return main.previewRuns();
    }

    /** Where each run of the preview ends, in ticks ahead (see {@link JerkLimiter#previewRunEnds()}). */
    public int[] previewRunEnds() {
        return main.previewRunEnds();
    }

    /** OR of the limiter flags of the last {@link #step}. */
    public int limiterFlags() {
        return lastFlags;
    }

    /** Limiter flags of one joint at the last {@link #step}. */
    public int limiterFlags(int joint) {
        return active.flags(joint);
    }

    /** Joint named by the last refused {@link #arm}, or -1. */
    public int refusedJoint() {
        return refusedJoint;
    }

    /** Velocity of the commanded trajectory of a joint at the last tick. */
    public double commandVelocity(int joint) {
        return active.velocity(joint);
    }

    /** Acceleration of the commanded trajectory of a joint at the last tick. */
    public double commandAcceleration(int joint) {
        return active.acceleration(joint);
    }

    /**
     * Asks to arm: soft start from {@code measuredPosition} toward the plan. Allowed only when
     * disarmed, when the last {@link #step} saw no watchdog condition, when the measured pose is
     * finite and inside the operating range, and when every joint of {@code firstPlannedAction} is
     * finite, inside the range and within the arming offset of the measured pose.
     *
     * @param measuredPosition   read only
     * @param firstPlannedAction read only
     * @return 0 when arming started, otherwise an {@code ARM_REFUSED_*} code of {@link Cause}
     *         ({@link #refusedJoint()} names the joint where one is at fault)
     */
    public int arm(long tick, long timeNanos, double[] measuredPosition, double[] firstPlannedAction) {
        checkLength("measured position", measuredPosition);
        checkLength("first planned action", firstPlannedAction);
        refusedJoint = -1;
        int refusal = 0;
        JointLimits limits = main.limits();
        if (state != SupervisorState.DISARMED) {
            refusal = Cause.ARM_REFUSED_STATE;
        } else if (lastWatchdogCode != 0) {
            refusal = Cause.ARM_REFUSED_CONDITION;
        } else {
            for (int i = 0; i < joints && refusal == 0; i++) {
                double m = measuredPosition[i];
                double p = firstPlannedAction[i];
                double held = main.position(i);
                if (!(Double.isFinite(m) && m >= limits.operatingMin(i) && m <= limits.operatingMax(i))) {
                    refusal = Cause.ARM_REFUSED_POSE;
                    refusedJoint = i;
                } else if (!(Math.abs(m - held) <= maxArmingOffset[i])) {
                    refusal = Cause.ARM_REFUSED_DRIFT;
                    refusedJoint = i;
                } else if (!(Double.isFinite(p) && p >= limits.operatingMin(i) && p <= limits.operatingMax(i))) {
                    refusal = Cause.ARM_REFUSED_PLAN;
                    refusedJoint = i;
                } else if (!(Math.abs(p - m) <= maxArmingOffset[i])) {
                    refusal = Cause.ARM_REFUSED_OFFSET;
                    refusedJoint = i;
                }
            }
            // the soft start begins where the commands are (the held pose, at rest), never at the
            // measured pose: a jump between the two would break the bounds of the emitted sequence
            if (refusal == 0 && !soft.resetFrom(main)) {
                refusal = Cause.ARM_REFUSED_POSE;
            }
        }
        if (refusal != 0) {
            listener.onTransition(tick, timeNanos, state, state, refusal);
            return refusal;
        }
        powerRemovalRequested = false;
        disarmRequested = false;
        armingTicks = 0;
        catchingUp = false;
        main.position(armStart);
        transition(tick, timeNanos, SupervisorState.ARMING, Cause.ARM_REQUEST);
        return 0;
    }

    /** Asks for a controlled stop to DISARMED (not a fault). Takes effect at the next {@link #step}. */
    public void requestDisarm() {
        if (state == SupervisorState.ARMING || state == SupervisorState.ARMED) {
            disarmRequested = true;
        }
    }

    /**
     * Clears a latched fault. Allowed only when FAULTED and when the last {@link #step} saw no
     * watchdog condition and a finite target.
     *
     * @return 0 when the state went to DISARMED, otherwise a {@code RESET_REFUSED_*} code of {@link Cause}
     */
    public int reset(long tick, long timeNanos) {
        int refusal = 0;
        if (state != SupervisorState.FAULTED) {
            refusal = Cause.RESET_REFUSED_STATE;
        } else if (lastWatchdogCode != 0 || !lastTargetFinite) {
            refusal = Cause.RESET_REFUSED_CONDITION;
        }
        if (refusal != 0) {
            listener.onTransition(tick, timeNanos, state, state, refusal);
            return refusal;
        }
        faultLatched = false;
        latchedCause = 0;
        transition(tick, timeNanos, SupervisorState.DISARMED, Cause.RESET);
        return 0;
    }

    /**
     * Produces the command of one tick toward a target at rest (a set point per joint): the same
     * as {@link #step(long, long, double[], double[], double[], int, double[])} with zero velocity
     * and acceleration.
     */
    public SupervisorState step(long tick, long timeNanos, double[] target, int watchdogCode, double[] command) {
        return step(tick, timeNanos, target, atRest, atRest, watchdogCode, command);
    }

    /**
     * Produces the command of one tick.
     *
     * @param tick                the control tick
     * @param timeNanos           time of the tick (for events only)
     * @param target              the plan's position at this tick, read only, any values (non-finite ones start a stop)
     * @param targetVelocity      the plan's velocity at this tick (units/s), read only; non-finite values start a stop
     * @param targetAcceleration  the plan's acceleration at this tick (units/s^2), read only; likewise
     * @param watchdogCode        result of {@link Watchdog#check} for this tick (0 = none)
     * @param command             written: the command to send, always finite and inside the operating range
     * @return the state after this tick
     */
    public SupervisorState step(long tick, long timeNanos, double[] target, double[] targetVelocity,
            double[] targetAcceleration, int watchdogCode, double[] command) {
        return step(tick, timeNanos, target, targetVelocity, targetAcceleration, null, watchdogCode, command);
    }

    /**
     * Produces the command of one tick, with the plan's preview for the receding-horizon law of the
     * full-limit limiter once ARMED (see {@link JerkLimiter#apply(double[], double[], double[], PlanPreview, double[])}).
     * While arming, neither the ramp nor the catch-up after it uses it: the receding-horizon law
     * closing a gap of tenths of a radian at full speed arrived with the speed still off the plan's,
     * and overshot by up to 70 mrad on the demo.
     *
     * @param preview the plan ahead, asked per joint as the limiter needs it, or null
     */
    public SupervisorState step(long tick, long timeNanos, double[] target, double[] targetVelocity,
            double[] targetAcceleration, PlanPreview preview, int watchdogCode, double[] command) {
        checkLength("target", target);
        checkLength("target velocity", targetVelocity);
        checkLength("target acceleration", targetAcceleration);
        checkLength("command", command);
        lastWatchdogCode = watchdogCode;
        boolean finite = true;
        for (int i = 0; i < joints; i++) {
            finite &= Double.isFinite(target[i]) && Double.isFinite(targetVelocity[i])
                    && Double.isFinite(targetAcceleration[i]);
        }
        lastTargetFinite = finite;
        int fault = watchdogCode != 0 ? watchdogCode : (finite ? 0 : Cause.NON_FINITE_TARGET);
        switch (state) {
            case ARMING:
                if (fault != 0 || disarmRequested) {
                    startStop(tick, timeNanos, fault != 0 ? fault : Cause.DISARM_REQUEST, command, true);
                } else {
                    stepArming(tick, timeNanos, target, targetVelocity, targetAcceleration, command);
                }
                break;
            case ARMED:
                if (fault != 0 || disarmRequested) {
                    startStop(tick, timeNanos, fault != 0 ? fault : Cause.DISARM_REQUEST, command, false);
                } else {
                    active = main;
                    applyOrStop(main, tick, timeNanos, target, targetVelocity, targetAcceleration, preview, command, false);
                }
                break;
            case STOPPING:
                if (fault != 0 && !faultLatched) {
                    faultLatched = true;
                    latchedCause = fault;
                    listener.onTransition(tick, timeNanos, state, state, fault);
                }
                active = main;
                lastFlags = main.brake(command);
                finishStopIfAtRest(tick, timeNanos);
                break;
            case DISARMED:
            case FAULTED:
            default:
                active = main;
                lastFlags = main.brake(command);
                break;
        }
        return state;
    }

    /**
     * One tick of the soft start. Over the ramp, under the reduced limits, its own target goes from
     * the held pose to the plan along the quintic smooth step {@code f(s) = 10 s^3 - 15 s^4 + 6 s^5},
     * whose first and second derivatives vanish at both ends, so the target and its velocity and
     * acceleration are continuous where it begins and where it joins the plan. After the ramp the
     * full-limit limiter takes the state over (the bounds only widen, so the commands stay within
     * them) and closes what gap is left to the plan; the state is ARMED once every joint is within
     * the arming tolerance of the plan. A limiter fault or the timeout seen at this tick makes this
     * tick's command the first of the stop.
     */
    private void stepArming(long tick, long timeNanos, double[] target, double[] targetVelocity,
            double[] targetAcceleration, double[] command) {
        armingTicks++;
        if (!catchingUp && armingRampTicks > 0 && armingTicks > armingRampTicks) {
            if (!main.resetFrom(soft)) {
                startStop(tick, timeNanos, Cause.LIMITER_FAULT, command, true);
                return;
            }
            catchingUp = true;
        }
        JerkLimiter limiter = catchingUp ? main : soft;
        active = limiter;
        double[] goal = target;
        double[] goalVelocity = targetVelocity;
        double[] goalAcceleration = targetAcceleration;
        if (armingRampTicks > 0 && armingTicks < armingRampTicks) {
            double s = (double) armingTicks / armingRampTicks;
            double rampSeconds = armingRampTicks * period;
            double f = s * s * s * (10.0 + s * (-15.0 + 6.0 * s));
            double f1 = 30.0 * s * s * (1.0 - s) * (1.0 - s) / rampSeconds;
            double f2 = 60.0 * s * (1.0 - s) * (1.0 - 2.0 * s) / (rampSeconds * rampSeconds);
            for (int i = 0; i < joints; i++) {
                double gap = target[i] - armStart[i];
                rampTarget[i] = armStart[i] + f * gap;
                rampVelocity[i] = f * targetVelocity[i] + f1 * gap;
                rampAcceleration[i] = f * targetAcceleration[i] + 2.0 * f1 * targetVelocity[i] + f2 * gap;
            }
            goal = rampTarget;
            goalVelocity = rampVelocity;
            goalAcceleration = rampAcceleration;
        }
        if (!applyOrStop(limiter, tick, timeNanos, goal, goalVelocity, goalAcceleration, null, command, !catchingUp)) {
            return;
        }
        if (armingTicks >= armingRampTicks && withinTolerance(limiter, target)) {
            if (catchingUp || main.resetFrom(soft)) {
                active = main;
                transition(tick, timeNanos, SupervisorState.ARMED, Cause.ARMING_COMPLETE);
            } else {
                soft.restoreState(saved);
                startStop(tick, timeNanos, Cause.LIMITER_FAULT, command, true);
            }
        } else if (armingTicks >= armingTimeoutTicks) {
            limiter.restoreState(saved);
            startStop(tick, timeNanos, Cause.ARMING_TIMEOUT, command, !catchingUp);
        }
    }

    /**
     * One tick of {@code limiter} along the plan. A fault flag seen at this tick puts back the state
     * of the tick before and makes this tick's command the first of the stop.
     *
     * @return whether the tick went on without a fault
     */
    private boolean applyOrStop(JerkLimiter limiter, long tick, long timeNanos, double[] goal, double[] goalVelocity,
            double[] goalAcceleration, PlanPreview preview, double[] command, boolean fromArming) {
        limiter.saveState(saved);
        lastFlags = limiter.apply(goal, goalVelocity, goalAcceleration, preview, command);
        if ((lastFlags & JerkLimiter.FAULT_FLAGS) == 0) {
            return true;
        }
        int flags = lastFlags;
        limiter.restoreState(saved);
        startStop(tick, timeNanos, Cause.LIMITER_FAULT, command, fromArming);
        lastFlags |= flags;
        return false;
    }

    private boolean withinTolerance(JerkLimiter limiter, double[] target) {
        for (int i = 0; i < joints; i++) {
            if (!(Math.abs(limiter.position(i) - target[i]) <= armingTolerance)) {
                return false;
            }
        }
        return true;
    }

    /** Starts the stop in this tick: the command written is the first step of the stop. */
    private void startStop(long tick, long timeNanos, int cause, double[] command, boolean fromArming) {
        boolean viable = !fromArming || main.resetFrom(soft);
        active = main;
        enterStopping(tick, timeNanos, cause);
        lastFlags = main.brake(command) | (viable ? 0 : JerkLimiter.NOT_VIABLE);
        finishStopIfAtRest(tick, timeNanos);
    }

    private void enterStopping(long tick, long timeNanos, int cause) {
        disarmRequested = false;
        if (Cause.isFault(cause)) {
            faultLatched = true;
            latchedCause = cause;
        }
        transition(tick, timeNanos, SupervisorState.STOPPING, cause);
    }

    private void finishStopIfAtRest(long tick, long timeNanos) {
        if (state == SupervisorState.STOPPING && main.atRest()) {
            if (category == StopCategory.CATEGORY_1) {
                powerRemovalRequested = true;
            }
            transition(tick, timeNanos, faultLatched ? SupervisorState.FAULTED : SupervisorState.DISARMED,
                    Cause.STANDSTILL);
        }
    }

    private void transition(long tick, long timeNanos, SupervisorState to, int cause) {
        SupervisorState from = state;
        state = to;
        listener.onTransition(tick, timeNanos, from, to, cause);
    }

    private void checkLength(String what, double[] x) {
        if (x == null || x.length != joints) {
            throw new IllegalArgumentException("supervisor: " + what + " must have length " + joints + ", was "
                    + (x == null ? "null" : String.valueOf(x.length)));
        }
    }

    /** Collects the configuration; {@link #build(double[])} validates it. Not thread-safe. */
    public static final class Builder {
        private final JointLimits limits;
        private final double period;
        private StopCategory category = StopCategory.CATEGORY_2;
        private double armVelocity = 0.25;
        private double armAcceleration = 0.25;
        private double armJerk = 0.25;
        private double[] maxArmingOffset;
        private double armingTolerance = 1e-2;
        private long armingTimeoutTicks;
        private long armingRampTicks;
        private TransitionListener listener = TransitionListener.NONE;

        private Builder(JointLimits limits, double period) {
            if (limits == null) {
                throw new IllegalArgumentException("supervisor: limits must not be null");
            }
            if (!Double.isFinite(period) || !(period > 0.0)) {
                throw new IllegalArgumentException("supervisor: control period must be finite and > 0 s, was " + period);
            }
            this.limits = limits;
            this.period = period;
            this.maxArmingOffset = new double[limits.count()];
            java.util.Arrays.fill(maxArmingOffset, 0.1);
            this.armingTimeoutTicks = Math.max(1L, Math.round(10.0 / period));
        }

        /** Stop category; default {@link StopCategory#CATEGORY_2}. */
        public Builder stopCategory(StopCategory category) {
            if (category == null) {
                throw new IllegalArgumentException("supervisor: stop category must not be null");
            }
            this.category = category;
            return this;
        }

        /** Factors (each in (0, 1]) on velocity, acceleration and jerk bounds during the soft start; default 0.25 each. */
        public Builder armingScale(double velocity, double acceleration, double jerk) {
            limits.scaled(velocity, acceleration, jerk);
            this.armVelocity = velocity;
            this.armAcceleration = acceleration;
            this.armJerk = jerk;
            return this;
        }

        /** Largest distance between measured pose and first planned action, same for every joint; default 0.1. */
        public Builder maxArmingOffset(double offset) {
            double[] all = new double[limits.count()];
            java.util.Arrays.fill(all, offset);
            return maxArmingOffset(all);
        }

        /** Largest distance between measured pose and first planned action, per joint (finite, &gt; 0). */
        public Builder maxArmingOffset(double[] perJoint) {
            if (perJoint == null || perJoint.length != limits.count()) {
                throw new IllegalArgumentException("supervisor: max arming offset must have length " + limits.count());
            }
            for (int i = 0; i < perJoint.length; i++) {
                if (!Double.isFinite(perJoint[i]) || !(perJoint[i] > 0.0)) {
                    throw new IllegalArgumentException("supervisor: max arming offset of "
                            + JointLimits.where(i, limits.name(i)) + " must be finite and > 0, was " + perJoint[i]);
                }
            }
            this.maxArmingOffset = perJoint.clone();
            return this;
        }

        /** Distance to the plan at which the soft start is ARMED (finite, &gt; 0); default 1e-2. */
        public Builder armingTolerance(double tolerance) {
            if (!Double.isFinite(tolerance) || !(tolerance > 0.0)) {
                throw new IllegalArgumentException("supervisor: arming tolerance must be finite and > 0, was " + tolerance);
            }
            this.armingTolerance = tolerance;
            return this;
        }

        /** Ticks the soft start may take before it becomes a fault (&gt;= 1); default 10 s worth. */
        public Builder armingTimeoutTicks(long ticks) {
            if (ticks < 1) {
                throw new IllegalArgumentException("supervisor: arming timeout must be >= 1 tick, was " + ticks);
            }
            this.armingTimeoutTicks = ticks;
            return this;
        }

        /**
         * Ticks over which the soft start blends its target from the held pose to the plan along a
         * quintic smooth step (&gt;= 0). With a ramp, the full-limit limiter takes over at the end of
         * the ramp and closes what gap is left, so a moving plan can be armed onto; with 0 (the
         * default) the soft start chases the plan directly. Either way the state is ARMED once
         * every joint is within {@link #armingTolerance} of the plan.
         */
        public Builder armingRampTicks(long ticks) {
            if (ticks < 0) {
                throw new IllegalArgumentException("supervisor: arming ramp must be >= 0 ticks, was " + ticks);
            }
            this.armingRampTicks = ticks;
            return this;
        }

        /** Receiver of transitions; default {@link TransitionListener#NONE}. */
        public Builder listener(TransitionListener listener) {
            if (listener == null) {
                throw new IllegalArgumentException("supervisor: listener must not be null");
            }
            this.listener = listener;
            return this;
        }

        /**
         * Builds a DISARMED supervisor holding {@code initialPose}.
         *
         * @param initialPose read only; finite and inside each joint's operating range
         * @throws IllegalArgumentException naming the joint when the pose is not acceptable
         */
        public Supervisor build(double[] initialPose) {
            return new Supervisor(this, initialPose);
        }
    }
}
