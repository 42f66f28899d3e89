package dev.weft.safety;

/**
 * One joint of the {@link JerkLimiter}: the state of the commanded trajectory and the per-tick jerk
 * choice. Package-private; see {@link JerkLimiter} for the method and the guarantees.
 *
 * <p>The commanded trajectory is a continuous-time chain of three integrators whose jerk is
 * piecewise constant. Each tick advances it by exactly one control period; the emitted command is
 * the position sample at the end of the tick. Within a tick the jerk is {@code keep * brake(t) +
 * push}, a blend of the time-optimal stopping profile of the current state and a constant jerk: the
 * linear zone's jerk near the plan ({@link #follow}), a full jerk toward the target far from it,
 * as large as the shield ({@link #feasible}) admits.
 *
 * <p>All fields are scratch or state owned by the single control thread. No method allocates.
 */
final class AxisFilter {

    static final int OK = 0;
    static final int FAIL_ACCELERATION = 1;
    static final int FAIL_VELOCITY = 2;
    static final int FAIL_POSITION = 3;
    static final int FAIL_TARGET = 4;

    /** Bisection steps on lambda: resolution 2^-24 of the jerk range, far below any bound's tolerance. */
    private static final int BISECTION_STEPS = 24;
    /** Bisection steps when the shield clips the linear zone's jerk: resolution 2^-16 of the clipped step. */
    private static final int TRACK_BISECTION_STEPS = 16;
    /** Closed-loop poles of the linear zone, rad/s (time constants 250, 83 and 25 ms). */
    static final double[] POLES = {4.0, 12.0, 40.0};
    /** Time constant of the plan velocity the minimum-time law moves with, s. */
    static final double RATE_TIME_CONSTANT = 0.1;
    /** Time constant with which the feed-forward share recovers once the plan is back inside the bounds, s. */
    static final double FEASIBILITY_RECOVERY = 0.1;
    /**
     * Time a feed-forward share is held after the plan last asked for it (within HOLD_BAND), before
     * it recovers, s: longer than the interval between the jerk peaks of a wiggle the share must
     * not follow (recovering between them, the share of a 0.1 mrad wiggle at 18.5 Hz modulated
     * at its 0.5 Hz beat with the tick and came out 1.57 times larger).
     */
    static final double SHARE_HOLD = 0.03;
    /**
     * A tick whose ratio allows a share up to this multiple of the current one renews the hold: the
     * sampled peaks of a steady wiggle differ by a few per cent from tick to tick (with 1, only
     * peaks that lowered the share renewed it, and 0.1 mrad at 18.5 Hz came out 8 times larger).
     */
    static final double HOLD_BAND = 1.1;
    /**
     * Time constant of the plan's acceleration load (its |acceleration| over the bound through a
     * first-order lag), s: the velocity fed forward falls only when that load stays high, not at a
     * single rough knot of the plan.
     */
    static final double LOAD_TIME_CONSTANT = 0.2;
    /**
     * Multiple of the acceleration load counted against the velocity feed-forward (a plan whose
     * velocity is fed forward while its acceleration is out of reach drives a saturated loop: on
     * the demo's lift joint, with 1 a 10 mrad wiggle at 4 Hz came out 1.95 times larger, with 1.25
     * a 20 mrad wiggle at 2.5 Hz 1.36 times; the mean of |sin| is 2/pi of its peak).
     */
    static final double LOAD_WEIGHT = 1.6;
    /** Time constant of the estimate of how fast the plan moves beyond its own derivatives, s. */
    static final double DRIFT_TIME_CONSTANT = 0.05;
    /** Multiple of the jerk bound within which the linear zone is entered. */
    static final double ENTRY_SHARE = 1.0;
    /**
     * Multiple of the jerk bound the linear law may ask for, clipped to the bound, before the
     * minimum-time law takes over (with 3, a 10 mrad wiggle at 3 to 4 Hz on the demo's lift joint
     * came out 1.44 times larger: the minimum-time law took over too early).
     */
    static final double EXIT_SHARE = 6.0;
    /** Share of a bound up to which the plan's derivatives are fed forward in full; beyond it the share falls as (FULL / ratio)^2. */
    static final double FEED_FORWARD_FULL = 0.9;
    /**
     * Share of the acceleration bound by which the acceleration fed forward may lag the plan's (its
     * jerk beyond the bound) before the minimum-time law stops moving in the plan's frame.
     */
    static final double FOLLOW_DEFICIT = 0.05;

    /**
     * Runs of the receding-horizon law's preview (with 16 runs growing by 1.3 the demo tracked about
     * as well, at about twice the cost of a tick at the bounds; the active-set solve is cubic in it).
     */
    static final int PREVIEW_BLOCKS = 10;
    /**
     * Length of the receding-horizon law's preview, s: longer than a joint's stop from full speed
     * (V / A + A / J, 0.38 s on the demo's lift joint); with 0.2 s the command overshot plans that
     * reverse at full speed and swung by 0.17 rad.
     */
    static final double PREVIEW_HORIZON = 0.4;
    /**
     * Position error, in the joint's units, that a jerk at the bound is worth in the receding-horizon
     * law's cost: the weight of the jerk is (PREVIEW_JERK_PRICE / J)^2 (on the demo, 0.0025 and 0.006
     * both tracked worse).
     */
    static final double PREVIEW_JERK_PRICE = 0.00384;
    /**
     * Growth of each run's length over the one before: 2, 3, 4, 6, 9, 13, 20, 30, 45, 68 ticks at
     * 500 Hz, so the jerk that is used is planned almost as finely as it is applied (with equal runs
     * the demo's slew joint tracked 3 times worse; with 1.6, from one tick, a 50 mrad wiggle at 3.5 Hz
     * carried 6 % of its amplitude at other frequencies, 3.2 % with 1.5).
     */
    static final double PREVIEW_GROWTH = 1.5;

    /**
     * Lengths in ticks of the preview's runs at period dt: PREVIEW_BLOCKS runs growing geometrically
     * by PREVIEW_GROWTH (above 1), together about PREVIEW_HORIZON long, none shorter than a tick.
     */
    static int[] previewRuns(double dt) {
        double total = Math.max(PREVIEW_BLOCKS, PREVIEW_HORIZON / dt);
        double r = PREVIEW_GROWTH;
        double first = total * (r - 1.0) / (Math.pow(r, PREVIEW_BLOCKS) - 1.0);
        int[] runs = new int[PREVIEW_BLOCKS];
        for (int b = 0; b < PREVIEW_BLOCKS; b++) {
            runs[b] = Math.max(1, (int) Math.round(first * Math.pow(r, b)));
        }
        return runs;
    }

    private final double dt;
    /** Operating range used for planning (already shrunk by the rounding slack). */
    final double qLo;
    final double qHi;
    /** Hard operating range (positionMin + margin, positionMax - margin). */
    final double qLoHard;
    final double qHiHard;
    private final double posSlack;
    private final double arriveTol;
    /** Bounds a committed state must satisfy (true bound minus the floating-point margin). */
    final double vLoose;
    final double aLoose;
    /** Bounds the lambda search plans against (slightly inside the loose ones). */
    private final double vStrict;
    private final double aStrict;
    /** Jerk magnitude used by every profile and blend. */
    final double jUse;

    double q;
    double v;
    double a;

    /** A plan whose velocity and acceleration are within these (rounding level) counts as at rest for the hold. */
    private final double restVelocity;
    private final double restAcceleration;
    /** Feedback gains of the linear zone on the predicted position, velocity and acceleration error. */
    final double k1;
    final double k2;
    final double k3;
    /** Share of the plan's velocity the minimum-time frame takes per tick (first-order lag of RATE_TIME_CONSTANT). */
    private final double rateGain;

    /** Whether a plan state was seen since the last reset, brake or non-finite target. */
    private boolean havePlan;
    /** The plan's (clamped) acceleration at the previous tick, for the feed-forward jerk. */
    private double previousPlanAcceleration;
    /** The plan's (clamped) velocity through a first-order lag: the frame of the minimum-time law. */
    private double planRate;
    /** Whether the last tick was in the linear zone. */
    boolean tracking;
    /**
     * Share of the plan's acceleration and jerk fed forward: 1 on a plan inside the bounds, less
     * while its velocity, acceleration or jerk is beyond them.
     */
    private final FeedShare feasibility;
    /** Share of the plan's velocity fed forward: less only while its velocity or its acceleration load is beyond the bounds. */
    private final FeedShare velocityShare;
    /** The plan's |acceleration| over the bound through a first-order lag of LOAD_TIME_CONSTANT. */
    private double accelerationLoad;
    private final double loadGain;
    /** The plan's acceleration at the previous tick as given (not clamped), for its jerk. */
    private double previousGivenAcceleration;
    /** Recovery of a share (and of {@link #followable}) toward 1 per tick (time constant FEASIBILITY_RECOVERY). */
    private final double feasibilityGain;
    /** K B: the feedback gains applied to the jerk's own effect over one tick. */
    private final double kb;
    /** The acceleration fed forward: the plan's, followed at a rate within the jerk bound. */
    private double feedAcceleration;
    /** The plan's position and velocity at the previous tick (clamped as used). */
    private double previousPlanPosition;
    private double previousPlanVelocity;
    /** The rate at which the plan moves beyond its own derivatives, through a first-order lag. */
    private double drift;
    private final double driftGain;
    /** 1 while the plan's jerk has lately stayed within the bound, falling to 0 when it did not. */
    private double followable = 1.0;
    /** Frame rate of the current minimum-time feasibility checks. */
    private double frameRate;

    /** This joint's receding-horizon law. */
    final PreviewLaw law;
    /** Scratch: this joint's run means of the preview, as fetched this tick. */
    private final double[] runMeans;
    /** Ticks left in which the receding-horizon law leads: renewed whenever the plan, now or ahead, is beyond 0.9 of a bound. */
    private int previewLatch;

    private final double[] base = new double[6];
    private final double[] prof = new double[6];

    double nq;
    double nv;
    double na;
    private double tVmin;
    private double tVmax;
    private double tAmin;
    private double tAmax;

    double pQmin;
    double pQmax;
    double pVmin;
    double pVmax;
    double pQend;
    double pTime;

    private double sq;
    private double sv;
    private double sa;
    private boolean trackQ;
    private double eQmin;
    private double eQmax;
    private double eVmin;
    private double eVmax;
    private double eAmin;
    private double eAmax;

    AxisFilter(double dt, double lo, double hi, double vMax, double aMax, double jMax,
               double vMargin, double aMargin, double jMargin, double posSlack, int[] previewRuns) {
        this.dt = dt;
        this.law = new PreviewLaw(dt, previewRuns, PREVIEW_JERK_PRICE / (jMax - jMargin));
        this.runMeans = new double[law.runs];
        this.qLoHard = lo;
        this.qHiHard = hi;
        this.posSlack = posSlack;
        this.qLo = lo + 2.0 * posSlack;
        this.qHi = hi - 2.0 * posSlack;
        this.arriveTol = 8.0 * posSlack;
        this.vLoose = vMax - vMargin;
        this.aLoose = aMax - aMargin;
        this.vStrict = vLoose - 1e-9 * vMax;
        this.aStrict = aLoose - 1e-9 * aMax;
        this.jUse = jMax - jMargin;
        this.q = 0.5 * (lo + hi);
        double[] k = linearZoneGains(dt);
        this.k1 = k[0];
        this.k2 = k[1];
        this.k3 = k[2];
        this.rateGain = 1.0 - Math.exp(-dt / RATE_TIME_CONSTANT);
        this.feasibilityGain = 1.0 - Math.exp(-dt / FEASIBILITY_RECOVERY);
        this.driftGain = 1.0 - Math.exp(-dt / DRIFT_TIME_CONSTANT);
        this.loadGain = 1.0 - Math.exp(-dt / LOAD_TIME_CONSTANT);
        int holdTicks = (int) Math.round(SHARE_HOLD / dt);
        this.feasibility = new FeedShare(holdTicks, feasibilityGain);
        this.velocityShare = new FeedShare(holdTicks, feasibilityGain);
        this.kb = k1 * dt * dt * dt / 6.0 + k2 * dt * dt / 2.0 + k3 * dt;
        this.restVelocity = posSlack / dt;
        this.restAcceleration = posSlack / (dt * dt);
    }

    /**
     * State-feedback gains {@code K = (k1, k2, k3)} of the linear zone. The limiter is the
     * jerk-driven triple integrator sampled at {@code dt} with the jerk held over each tick
     * ({@code x[n+1] = A x[n] + B u[n]}); the law acts on the error predicted at the end of the
     * tick, so the error evolves as {@code e[n+1] = A (I - B K) e[n] = (A - (A B) K) e[n]}. The gains
     * place the poles of {@code A - (A B) K} at {@code exp(-w dt)} for the three {@link #POLES}, by
     * Ackermann's formula for the pair {@code (A, A B)}: {@code K = [0 0 1] C^-1 phi(A)} with
     * {@code C = [A B, A^2 B, A^3 B]} and {@code phi} the wanted characteristic polynomial.
     */
    static double[] linearZoneGains(double dt) {
        double h = dt;
        double[][] am = {{1, h, h * h / 2}, {0, 1, h}, {0, 0, 1}};
        double[] b = {h * h * h / 6, h * h / 2, h};
        // the loop is e' = A e + (A B) u: input matrix A B
        double[] ab = mulVec(am, b);
        double[] c1 = ab;
        double[] c2 = mulVec(am, c1);
        double[] c3 = mulVec(am, c2);
        double[][] ctrb = {{c1[0], c2[0], c3[0]}, {c1[1], c2[1], c3[1]}, {c1[2], c2[2], c3[2]}};
        double z1 = Math.exp(-POLES[0] * h);
        double z2 = Math.exp(-POLES[1] * h);
        double z3 = Math.exp(-POLES[2] * h);
        // (z - z1)(z - z2)(z - z3) = z^3 + p1 z^2 + p2 z + p3
        double p1 = -(z1 + z2 + z3);
        double p2 = z1 * z2 + z1 * z3 + z2 * z3;
        double p3 = -z1 * z2 * z3;
        double[][] a2 = mul(am, am);
        double[][] a3 = mul(a2, am);
        double[][] phi = new double[3][3];
        for (int r = 0; r < 3; r++) {
            for (int c = 0; c < 3; c++) {
                phi[r][c] = a3[r][c] + p1 * a2[r][c] + p2 * am[r][c] + (r == c ? p3 : 0.0);
            }
        }
        double[][] inv = inverse(ctrb);
        double[] k = new double[3];
        for (int c = 0; c < 3; c++) {
            double s = 0.0;
            for (int m = 0; m < 3; m++) {
                s += inv[2][m] * phi[m][c];
            }
            k[c] = s;
        }
        return k;
    }

    private static double[] mulVec(double[][] m, double[] x) {
        double[] y = new double[3];
        for (int r = 0; r < 3; r++) {
            y[r] = m[r][0] * x[0] + m[r][1] * x[1] + m[r][2] * x[2];
        }
        return y;
    }

    private static double[][] mul(double[][] x, double[][] y) {
        double[][] z = new double[3][3];
        for (int r = 0; r < 3; r++) {
            for (int c = 0; c < 3; c++) {
                z[r][c] = x[r][0] * y[0][c] + x[r][1] * y[1][c] + x[r][2] * y[2][c];
            }
        }
        return z;
    }

    private static double[][] inverse(double[][] m) {
        double a = m[0][0], b = m[0][1], c = m[0][2];
        double d = m[1][0], e = m[1][1], f = m[1][2];
        double g = m[2][0], hh = m[2][1], i = m[2][2];
        double det = a * (e * i - f * hh) - b * (d * i - f * g) + c * (d * hh - e * g);
        return new double[][] {
            {(e * i - f * hh) / det, (c * hh - b * i) / det, (b * f - c * e) / det},
            {(f * g - d * i) / det, (a * i - c * g) / det, (c * d - a * f) / det},
            {(d * hh - e * g) / det, (b * g - a * hh) / det, (a * e - b * d) / det}};
    }

    /** Sets the state; the caller has checked it. */
    void set(double q0, double v0, double a0) {
        q = q0;
        v = v0;
        a = a0;
        forgetPlan();
    }

    /** Takes over the plan memory of another axis (after {@link #set}, when switching limits). */
    void copyTracking(AxisFilter o) {
        havePlan = o.havePlan;
        previousPlanAcceleration = o.previousPlanAcceleration;
        feasibility.copy(o.feasibility);
        velocityShare.copy(o.velocityShare);
        accelerationLoad = o.accelerationLoad;
        previousGivenAcceleration = o.previousGivenAcceleration;
        followable = o.followable;
        previousPlanPosition = o.previousPlanPosition;
        previousPlanVelocity = o.previousPlanVelocity;
        drift = o.drift;
        feedAcceleration = o.feedAcceleration;
        planRate = o.planRate;
        tracking = o.tracking;
    }

    /**
     * Time-optimal stop from (v0, a0) to v = 0, a = 0 with |a| &lt;= aStrict, |j| &lt;= jUse: up to
     * three phases written to {@code out} as (duration, jerk) pairs.
     */
    private void brakeProfile(double v0, double a0, double[] out) {
        final double J = jUse;
        final double A = aStrict;
        double vz = v0 + a0 * Math.abs(a0) / (2.0 * J);
        if (vz == 0.0) {
            out[0] = Math.abs(a0) / J;
            out[1] = -Math.signum(a0) * J;
            out[2] = 0.0;
            out[3] = 0.0;
            out[4] = 0.0;
            out[5] = 0.0;
            return;
        }
        double s = vz > 0.0 ? 1.0 : -1.0;
        double vv = s * v0;
        double aa = s * a0;
        double apFree = Math.sqrt(Math.max(J * vv + 0.5 * aa * aa, 0.0));
        double ap = Math.max(Math.min(apFree, A), -aa);
        double t2 = 0.0;
        if (ap < apFree && ap > 0.0) {
            t2 = Math.max((vv + aa * aa / (2.0 * J) - ap * ap / J) / ap, 0.0);
        }
        out[0] = Math.max((aa + ap) / J, 0.0);
        out[1] = -s * J;
        out[2] = t2;
        out[3] = 0.0;
        out[4] = ap / J;
        out[5] = s * J;
    }

    /** Runs the stopping profile from (q0, v0, a0); fills pQmin..pTime. */
    void profileExtremes(double q0, double v0, double a0) {
        brakeProfile(v0, a0, prof);
        sq = q0;
        sv = v0;
        sa = a0;
        trackQ = true;
        eQmin = q0;
        eQmax = q0;
        eVmin = v0;
        eVmax = v0;
        eAmin = a0;
        eAmax = a0;
        segment(prof[1], prof[0]);
        segment(prof[3], prof[2]);
        segment(prof[5], prof[4]);
        pQmin = eQmin;
        pQmax = eQmax;
        pVmin = eVmin;
        pVmax = eVmax;
        pQend = sq;
        pTime = prof[0] + prof[2] + prof[4];
    }

    /** Advances the scratch state (sq, sv, sa) by duration t at constant jerk j, tracking extremes. */
    private void segment(double j, double t) {
        if (!(t > 0.0)) {
            return;
        }
        final double q0 = sq;
        final double v0 = sv;
        final double a0 = sa;
        if (j != 0.0) {
            double tau = -a0 / j;
            if (tau > 0.0 && tau < t) {
                double ve = v0 - a0 * a0 / (2.0 * j);
                if (ve < eVmin) {
                    eVmin = ve;
                }
                if (ve > eVmax) {
                    eVmax = ve;
                }
            }
        }
        if (trackQ) {
            if (j == 0.0) {
                if (a0 != 0.0) {
                    positionAt(q0, v0, a0, j, -v0 / a0, t);
                }
            } else {
                double h = 0.5 * j;
                double disc = a0 * a0 - 4.0 * h * v0;
                if (disc >= 0.0) {
                    double w = -0.5 * (a0 + Math.copySign(Math.sqrt(disc), a0));
                    if (w != 0.0) {
                        positionAt(q0, v0, a0, j, w / h, t);
                        positionAt(q0, v0, a0, j, v0 / w, t);
                    }
                }
            }
        }
        double t2 = t * t;
        sq = q0 + v0 * t + 0.5 * a0 * t2 + j * t2 * t / 6.0;
        sv = v0 + a0 * t + 0.5 * j * t2;
        sa = a0 + j * t;
        if (sq < eQmin) {
            eQmin = sq;
        }
        if (sq > eQmax) {
            eQmax = sq;
        }
        if (sv < eVmin) {
            eVmin = sv;
        }
        if (sv > eVmax) {
            eVmax = sv;
        }
        if (sa < eAmin) {
            eAmin = sa;
        }
        if (sa > eAmax) {
            eAmax = sa;
        }
    }

    private void positionAt(double q0, double v0, double a0, double j, double tau, double t) {
        if (tau > 0.0 && tau < t) {
            double qe = q0 + tau * (v0 + tau * (0.5 * a0 + tau * j / 6.0));
            if (qe < eQmin) {
                eQmin = qe;
            }
            if (qe > eQmax) {
                eQmax = qe;
            }
        }
    }

    /**
     * Advances a copy of the state by one tick under the jerk {@code keep * brake(t) + push}, where
     * brake(t) is the current stopping profile (held in {@code base}); fills nq, nv, na and the
     * within-tick extremes of velocity and acceleration.
     */
    private void simulateTick(double keep, double push) {
        sq = q;
        sv = v;
        sa = a;
        trackQ = false;
        eVmin = v;
        eVmax = v;
        eAmin = a;
        eAmax = a;
        double rem = dt;
        for (int k = 0; k < 3 && rem > 0.0; k++) {
            double d = Math.min(base[2 * k], rem);
            if (d > 0.0) {
                segment(keep * base[2 * k + 1] + push, d);
                rem -= d;
            }
        }
        boolean brakeDone = rem > 0.0;
        if (brakeDone) {
            segment(push, rem);
        }
        nq = sq;
        if (brakeDone && push == 0.0 && keep != 0.0) {
            nv = 0.0;
            na = 0.0;
        } else {
            nv = sv;
            na = sa;
        }
        tVmin = eVmin;
        tVmax = eVmax;
        tAmin = eAmin;
        tAmax = eAmax;
    }

    /**
     * Whether the tick under {@code keep * brake(t) + push} keeps every bound and leaves a state
     * that can still stop inside the operating range; with {@code dir != 0} also whether that
     * state, seen from the target {@code wall} moving on at {@code frameRate}, can come to rest
     * without passing it.
     */
    private int feasible(double keep, double push, int dir, double wall, boolean strict) {
        simulateTick(keep, push);
        double aB = strict ? aStrict : aLoose;
        double vB = strict ? vStrict : vLoose;
        if (tAmin < -aB || tAmax > aB) {
            return FAIL_ACCELERATION;
        }
        if (tVmin < -vB || tVmax > vB) {
            return FAIL_VELOCITY;
        }
        profileExtremes(nq, nv, na);
        if (pVmin < -vB || pVmax > vB) {
            return FAIL_VELOCITY;
        }
        if (strict ? (pQmin < qLo || pQmax > qHi) : (pQmin < qLoHard || pQmax > qHiHard)) {
            return FAIL_POSITION;
        }
        if (dir != 0) {
            profileExtremes(nq - wall, nv - frameRate, na);
            if ((dir > 0 && pQend > 0.0) || (dir < 0 && pQend < 0.0)) {
                return FAIL_TARGET;
            }
        }
        return OK;
    }

    /**
     * One tick toward a plan whose state at the end of this tick is position {@code p}, velocity
     * {@code pv} and acceleration {@code pa}. Updates the state and returns the bound flags of
     * {@link JerkLimiter}. A plan at rest ({@code pv == pa == 0}) is a set point.
     */
    int follow(double p, double pv, double pa) {
        return follow(p, pv, pa, null, 0);
    }

    /** The run means of the preview for this tick, or null when the source has none. */
    private double[] fetch(PlanPreview source, int joint) {
        return source.runMeans(joint, runMeans) ? runMeans : null;
    }

    /**
     * As {@link #follow(double, double, double)}, with the plan's preview ({@code source}, asked for
     * joint {@code joint} only when this tick needs it), or {@code source == null}.
     */
    int follow(double p, double pv, double pa, PlanPreview source, int joint) {
        brakeProfile(v, a, base);
        if (!(Double.isFinite(p) && Double.isFinite(pv) && Double.isFinite(pa))) {
            forgetPlan();
            return commit(JerkLimiter.NON_FINITE_TARGET | holdOrBrake());
        }
        int flags = 0;
        double wall = p;
        double fv = pv;
        double fa = pa;
        if (wall > qHi || wall < qLo) {
            // a target outside the operating range is the nearest point inside it, at rest
            wall = wall > qHi ? qHi : qLo;
            fv = 0.0;
            fa = 0.0;
            flags |= JerkLimiter.POSITION;
        }
        if (fv > vStrict || fv < -vStrict) {
            fv = fv > 0.0 ? vStrict : -vStrict;
            flags |= JerkLimiter.VELOCITY;
        }
        if (fa > aStrict || fa < -aStrict) {
            fa = fa > 0.0 ? aStrict : -aStrict;
            flags |= JerkLimiter.ACCELERATION;
        }
        double jff = 0.0;
        if (havePlan) {
            // the acceleration fed forward follows the plan's at a rate inside the jerk bound: on a
            // plan inside the bounds it is the plan's own, elsewhere it never leaves the range the
            // plan's acceleration spans
            double step = fa - feedAcceleration;
            double most = jUse * dt;
            if (step > most || step < -most) {
                step = step > 0.0 ? most : -most;
            }
            jff = step / dt;
            feedAcceleration += step;
            planRate += rateGain * (fv - planRate);
            feasibility.age();
            velocityShare.age();
            accelerationLoad += loadGain * (Math.abs(pa) / aStrict - accelerationLoad);
            // how far the plan moved over the tick beyond what its own velocity and acceleration
            // account for (trapezoid rule with its end correction: exact to O(dt^4) on a smooth
            // plan): a plan that steps at every new chunk is followed at the rate it really moves
            double moved = wall - previousPlanPosition;
            double explained = dt * (0.5 * (fv + previousPlanVelocity) - dt * (fa - previousPlanAcceleration) / 12.0);
            double mismatch = (moved - explained) / dt;
            if (mismatch > vStrict || mismatch < -vStrict) {
                mismatch = mismatch > 0.0 ? vStrict : -vStrict;
            }
            drift += driftGain * (mismatch - drift);
        } else {
            planRate = fv;
            drift = 0.0;
            feedAcceleration = fa;
            feasibility.value = 1.0;
            velocityShare.value = 1.0;
            accelerationLoad = Math.abs(pa) / aStrict;
            previousGivenAcceleration = pa;
        }
        // whether the plan's jerk was within the bound lately: its own frame is fit for the
        // minimum-time law only then
        followable = recovered(followable);
        if (Math.abs(fa - feedAcceleration) > FOLLOW_DEFICIT * aStrict) {
            followable = 0.0;
        }
        // a plan beyond a bound is fed forward only in part: each share falls to (FULL / ratio)^2
        // at once, is held while the plan keeps asking for about as little (SHARE_HOLD,
        // HOLD_BAND), then recovers over FEASIBILITY_RECOVERY. The acceleration and jerk fed
        // forward fall with the plan's velocity, acceleration and jerk (its jerk from the change
        // of its acceleration over the tick): fed forward through the rate limit above, a plan
        // whose jerk is beyond the bound at every tick (a fast wiggle) would be rectified into a
        // slow drift. The velocity fed forward falls with the plan's velocity and its
        // acceleration load only, so a plan that is rough at its knots but moves at a feasible
        // pace is still followed without lag.
        double jerkRatio = Math.abs(pa - previousGivenAcceleration) / (dt * jUse);
        previousGivenAcceleration = pa;
        double ratio = Math.max(Math.max(Math.abs(pv) / vStrict, Math.abs(pa) / aStrict), jerkRatio);
        feasibility.ask(ratio);
        velocityShare.ask(Math.max(Math.abs(pv) / vStrict, LOAD_WEIGHT * accelerationLoad));
        previousPlanAcceleration = fa;
        previousPlanPosition = wall;
        previousPlanVelocity = fv;
        havePlan = true;
        boolean planAtRest = fv == 0.0 && fa == 0.0;
        boolean holding = v == 0.0 && a == 0.0 && Math.abs(q - wall) <= posSlack && Math.abs(fv) <= restVelocity
                && Math.abs(fa) <= restAcceleration;
        // a hold does not look ahead (nor ask for the preview): nothing moves until the plan does,
        // and then it is judged
        double[] preview = source == null || holding ? null : fetch(source, joint);
        if (source != null) {
            if (preview != null && (ratio > FEED_FORWARD_FULL
                    || (flags & (JerkLimiter.POSITION | JerkLimiter.VELOCITY | JerkLimiter.ACCELERATION)) != 0
                    || previewBeyond(preview))) {
                previewLatch = law.horizonTicks;
            } else if (previewLatch > 0) {
                previewLatch--;
            }
        }
        if (holding) {
            // holding on a plan at rest (to within the position's rounding slack: a blend of equal
            // poses may come back an ulp off, with derivatives of 1e-13): nothing moves, and a state
            // at rest inside the range is viable
            tracking = false;
            return flags;
        }
        if (preview != null && previewLatch > 0) {
            // receding horizon: the plan ahead is beyond the bounds, so the least-squares plan of the
            // command over the preview chooses the jerk, clipped to the bound and to the shield
            double jerk = law.boundedJerk(q, v, a, preview, jUse, aStrict, vStrict);
            if (Double.isFinite(jerk)) {
                tracking = true;
                if (law.firstAtBound) {
                    flags |= JerkLimiter.JERK;
                }
                return commit(flags | shieldConstantJerk(jerk));
            }
        } else if (!planAtRest) {
            // linear zone: state feedback on the error predicted at the end of the tick (zero-jerk
            // prediction q0, v0, a), with the plan's derivatives as feed-forward
            double q0 = q + dt * (v + 0.5 * dt * a);
            double v0 = v + dt * a;
            double feedForward = feasibility.value * ((1.0 - kb) * jff + k3 * feedAcceleration)
                    + velocityShare.value * k2 * (fv + drift);
            double jerk = feedForward + k1 * (wall - q0) - k2 * v0 - k3 * a;
            double zone = tracking ? EXIT_SHARE * jUse : ENTRY_SHARE * jUse;
            if (jerk <= zone && jerk >= -zone) {
                tracking = true;
                if (jerk > jUse || jerk < -jUse) {
                    jerk = jerk > 0.0 ? jUse : -jUse;
                    flags |= JerkLimiter.JERK;
                }
                return commit(flags | shieldConstantJerk(jerk));
            }
        }
        tracking = false;
        // far from the plan: the minimum-time law, in the frame of the plan's (lagged) velocity while
        // the plan is inside the bounds, toward its position alone otherwise: chasing an infeasible
        // plan in its own frame would amplify it, and a law that never passes its target cannot
        // leave the range the target spans
        return commit(flags | minimumTime(wall, planAtRest || feasibility.value < 1.0 || followable < 1.0 ? 0.0 : planRate));
    }

    /** Constant jerk {@code jerk} over the tick if admissible, otherwise the admissible blend closest to it. */
    private int shieldConstantJerk(double jerk) {
        int full = feasible(0.0, jerk, 0, 0.0, true);
        if (full == OK) {
            return 0;
        }
        if (feasible(1.0, 0.0, 0, 0.0, false) != OK) {
            simulateTick(1.0, 0.0);
            return JerkLimiter.NOT_VIABLE;
        }
        return bisect(jerk, 0, 0.0, full, TRACK_BISECTION_STEPS);
    }

    /**
     * The largest share {@code mu} in [0, 1), to {@code steps} halvings, whose tick under
     * {@code (1 - mu) * brake(t) + mu * push} is feasible (the stop itself, mu = 0, is); leaves
     * that successor in nq, nv, na and returns the flag of the bound that stopped a larger share.
     */
    private int bisect(double push, int dir, double wall, int failCode, int steps) {
        double lo = 0.0;
        double hi = 1.0;
        int hiCode = failCode;
        for (int i = 0; i < steps; i++) {
            double mid = 0.5 * (lo + hi);
            int c = feasible(1.0 - mid, mid * push, dir, wall, true);
            if (c == OK) {
                lo = mid;
            } else {
                hi = mid;
                hiCode = c;
            }
        }
        simulateTick(1.0 - lo, lo * push);
        return flagOf(hiCode);
    }

    /**
     * Minimum-time law toward {@code wall} seen in the frame moving at {@code rate}: the largest
     * blend toward full jerk whose successor keeps every bound and can still come to rest without
     * passing the target. Leaves the successor in nq, nv, na.
     */
    private int minimumTime(double wall, double rate) {
        frameRate = rate;
        // Where the current state comes to rest relative to where the target was a tick ago,
        // moving on at the rate: behind it, push forward; ahead of it, push back.
        profileExtremes(q - (wall - rate * dt), v - rate, a);
        double lead = pQend;
        int dir = 0;
        if (lead < -arriveTol) {
            dir = 1;
        } else if (lead > arriveTol) {
            dir = -1;
        } else if (rate != 0.0) {
            dir = rate > 0.0 ? 1 : -1;
        }
        if (dir == 0) {
            return holdOrBrake();
        }
        double push = dir * jUse;
        int full = feasible(0.0, push, dir, wall, true);
        if (full == OK) {
            return JerkLimiter.JERK;
        }
        int none = feasible(1.0, 0.0, dir, wall, false);
        if (none != OK && none != FAIL_TARGET) {
            simulateTick(1.0, 0.0);
            return JerkLimiter.NOT_VIABLE;
        }
        return bisect(push, dir, wall, full, BISECTION_STEPS);
    }

    /** The stopping profile for this tick (a hold once at rest); NOT_VIABLE when even it breaks a bound. */
    private int holdOrBrake() {
        int code = feasible(1.0, 0.0, 0, 0.0, false);
        if (code == OK) {
            return 0;
        }
        simulateTick(1.0, 0.0);
        return JerkLimiter.NOT_VIABLE;
    }

    /** One tick along the stopping profile; forgets the plan. */
    int brake() {
        brakeProfile(v, a, base);
        forgetPlan();
        return commit(holdOrBrake());
    }

    /** Takes the successor (nq, nv, na) as the new state, with the last-resort position clamp. */
    private int commit(int flags) {
        double nextQ = nq;
        if (nextQ > qHiHard) {
            nextQ = qHiHard;
            flags |= JerkLimiter.POSITION_CLAMPED;
        } else if (nextQ < qLoHard) {
            nextQ = qLoHard;
            flags |= JerkLimiter.POSITION_CLAMPED;
        }
        q = nextQ;
        v = nv;
        a = na;
        return flags;
    }

    /**
     * One tick of recovery toward 1 over FEASIBILITY_RECOVERY, reaching 1 exactly once within 1e-9
     * of it (the geometric approach alone would stay a few ulps short for ever).
     */
    private double recovered(double x) {
        return recovered(x, feasibilityGain);
    }

    private static double recovered(double x, double gain) {
        double y = x + gain * (1.0 - x);
        return y > 1.0 - 1e-9 ? 1.0 : y;
    }

    /**
     * One feed-forward share in [0, 1]: falls at once to {@code (FULL / ratio)^2} when the plan's
     * ratio to a bound is beyond FULL, is held while the plan keeps asking for a share within
     * HOLD_BAND of it, and recovers toward 1 once SHARE_HOLD has passed since it last did.
     */
    static final class FeedShare {
        double value = 1.0;
        /** Ticks since the plan last asked for about this share, up to the hold. */
        private int held;
        private final int holdTicks;
        private final double gain;

        FeedShare(int holdTicks, double gain) {
            this.holdTicks = holdTicks;
            this.gain = gain;
        }

        /** One tick on: recovers once held for SHARE_HOLD, counts the hold until then. */
        void age() {
            if (held >= holdTicks) {
                value = recovered(value, gain);
            } else {
                held++;
            }
        }

        /** The plan's ratio to the bound this share looks at, this tick. */
        void ask(double ratio) {
            if (!(ratio > FEED_FORWARD_FULL)) {
                return;
            }
            double s = FEED_FORWARD_FULL / ratio;
            s *= s;
            if (s <= HOLD_BAND * value) {
                held = 0;
                if (s < value) {
                    value = s;
                }
            }
        }

        void copy(FeedShare o) {
            value = o.value;
            held = o.held;
        }
    }

    /**
     * Whether the plan's preview moves faster than 0.9 of the velocity or acceleration bound:
     * Newton's divided differences of the run means at the runs' centres, times 1 and 2. (Not the
     * jerk: a run's mean is its centre's value plus half the curvature times the variance of its
     * ticks' times, and at the short first runs that bias alone made the third differences of a plan
     * at 0.36 of the jerk bound read 1.8 of it. The plan's jerk counts at the current tick.)
     */
    private boolean previewBeyond(double[] preview) {
        int n = law.runs;
        double[] c = law.centres;
        double vLim = FEED_FORWARD_FULL * vStrict;
        double aLim = FEED_FORWARD_FULL * aStrict / 2.0;
        double d1Prev = 0.0;
        for (int b = 1; b < n; b++) {
            double d1 = (preview[b] - preview[b - 1]) / (c[b] - c[b - 1]);
            if (Math.abs(d1) > vLim) {
                return true;
            }
            if (b >= 2 && Math.abs((d1 - d1Prev) / (c[b] - c[b - 2])) > aLim) {
                return true;
            }
            d1Prev = d1;
        }
        return false;
    }

    private void forgetPlan() {
        previewLatch = 0;
        havePlan = false;
        tracking = false;
        planRate = 0.0;
        previousPlanAcceleration = 0.0;
        feasibility.value = 1.0;
        velocityShare.value = 1.0;
        followable = 1.0;
        drift = 0.0;
    }

    private static int flagOf(int failCode) {
        switch (failCode) {
            case FAIL_ACCELERATION:
                return JerkLimiter.ACCELERATION;
            case FAIL_VELOCITY:
                return JerkLimiter.VELOCITY;
            case FAIL_POSITION:
                return JerkLimiter.POSITION;
            default:
                return 0;
        }
    }

    /** Whether (q0, v0, a0) lies inside the bounds and can stop inside the operating range. */
    boolean viable(double q0, double v0, double a0) {
        if (!(Double.isFinite(q0) && Double.isFinite(v0) && Double.isFinite(a0))) {
            return false;
        }
        if (q0 < qLoHard || q0 > qHiHard || Math.abs(v0) > vLoose || Math.abs(a0) > aLoose) {
            return false;
        }
        profileExtremes(q0, v0, a0);
        return pVmin >= -vLoose && pVmax <= vLoose && pQmin >= qLoHard && pQmax <= qHiHard;
    }

    /** Time to standstill along the stopping profile from the current state. */
    double stoppingTime() {
        profileExtremes(q, v, a);
        return pTime;
    }

    /** Where the current state comes to rest along the stopping profile. */
    double restPosition() {
        profileExtremes(q, v, a);
        return pQend;
    }
}
