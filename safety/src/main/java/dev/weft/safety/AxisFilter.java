package dev.weft.safety;

/**
 * One joint of the {@link JerkLimiter}: the state of the commanded trajectory and the per-tick jerk
 * choice. Package-private; see {@link JerkLimiter} for the method and the guarantees.
 *
 * <p>The commanded trajectory is a continuous-time chain of three integrators whose jerk is
 * piecewise constant. Each tick advances it by exactly one control period; the emitted command is
 * the position sample at the end of the tick. Within a tick the jerk is a blend
 * {@code (1 - lambda) * brake(t) + lambda * dir * J} of the time-optimal stopping profile of the
 * current state and a full jerk toward the target; {@code lambda} is the largest value in [0, 1]
 * whose successor state still satisfies every bound and, seen from the target moving on at its
 * last rate, can still come to rest without passing it.
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

    /** Rate of the (clamped) target over the last tick, clamped to the velocity bound. */
    private double targetRate;
    private double previousWall;
    private boolean havePrevious;

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
               double vMargin, double aMargin, double jMargin, double posSlack) {
        this.dt = dt;
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
    }

    /** Sets the state; the caller has checked it. */
    void set(double q0, double v0, double a0) {
        q = q0;
        v = v0;
        a = a0;
        havePrevious = false;
        targetRate = 0.0;
    }

    /** Takes over the target-rate estimate of another axis (after {@link #set}, when switching limits). */
    void copyTracking(AxisFilter o) {
        previousWall = o.previousWall;
        havePrevious = o.havePrevious;
        targetRate = o.targetRate;
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
     * Advances a copy of the state by one tick under the blend of the current stopping profile
     * (held in {@code base}) and a full jerk in direction {@code dir}; fills nq, nv, na and the
     * within-tick extremes of velocity and acceleration.
     */
    private void simulateTick(double lambda, int dir) {
        sq = q;
        sv = v;
        sa = a;
        trackQ = false;
        eVmin = v;
        eVmax = v;
        eAmin = a;
        eAmax = a;
        double rem = dt;
        double push = lambda * dir * jUse;
        double keep = 1.0 - lambda;
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
        if (brakeDone && push == 0.0) {
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

    private int feasible(double lambda, int dir, double wall, boolean strict) {
        simulateTick(lambda, dir);
        double aB = strict ? aStrict : aLoose;
        double vB = strict ? vStrict : vLoose;
        double slack = strict ? 0.0 : posSlack;
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
        if (pQmin < qLo - slack || pQmax > qHi + slack) {
            return FAIL_POSITION;
        }
        if (dir != 0) {
            // Where the successor comes to rest relative to the target moving on at its current rate.
            profileExtremes(nq - wall, nv - targetRate, na);
            if ((dir > 0 && pQend > 0.0) || (dir < 0 && pQend < 0.0)) {
                return FAIL_TARGET;
            }
        }
        return OK;
    }

    /**
     * One tick toward target {@code r}; {@code brakeOnly} forces the stopping profile. Updates the
     * state and returns the bound flags of {@link JerkLimiter}.
     */
    int step(double r, boolean brakeOnly) {
        int flags = 0;
        brakeProfile(v, a, base);
        int dir = 0;
        double wall = 0.0;
        if (!brakeOnly && !Double.isFinite(r)) {
            flags |= JerkLimiter.NON_FINITE_TARGET;
        } else if (!brakeOnly) {
            wall = r;
            if (wall > qHi) {
                wall = qHi;
                flags |= JerkLimiter.POSITION;
            } else if (wall < qLo) {
                wall = qLo;
                flags |= JerkLimiter.POSITION;
            }
            double rate = havePrevious ? (wall - previousWall) / dt : 0.0;
            targetRate = Math.max(-vStrict, Math.min(vStrict, rate));
            previousWall = wall;
            havePrevious = true;
            // Where the current state comes to rest relative to where the target was a tick ago,
            // moving on at its rate: behind it, push forward; ahead of it, push back.
            profileExtremes(q - (wall - targetRate * dt), v - targetRate, a);
            double lead = pQend;
            if (lead < -arriveTol) {
                dir = 1;
            } else if (lead > arriveTol) {
                dir = -1;
            } else if (targetRate != 0.0) {
                dir = targetRate > 0.0 ? 1 : -1;
            }
        }
        if (dir == 0) {
            targetRate = 0.0;
        }
        if (brakeOnly || !Double.isFinite(r)) {
            havePrevious = false;
        }
        double lambda = 0.0;
        if (dir != 0) {
            int full = feasible(1.0, dir, wall, true);
            if (full == OK) {
                lambda = 1.0;
                flags |= JerkLimiter.JERK;
            } else {
                int none = feasible(0.0, dir, wall, false);
                if (none != OK && none != FAIL_TARGET) {
                    flags |= JerkLimiter.NOT_VIABLE;
                } else {
                    double lo = 0.0;
                    double hi = 1.0;
                    int hiCode = full;
                    for (int i = 0; i < BISECTION_STEPS; i++) {
                        double mid = 0.5 * (lo + hi);
                        int c = feasible(mid, dir, wall, true);
                        if (c == OK) {
                            lo = mid;
                        } else {
                            hi = mid;
                            hiCode = c;
                        }
                    }
                    lambda = lo;
                    flags |= flagOf(hiCode);
                }
            }
        } else {
            int none = feasible(0.0, 0, 0.0, false);
            if (none != OK) {
                flags |= JerkLimiter.NOT_VIABLE;
            }
        }
        simulateTick(lambda, dir);
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
