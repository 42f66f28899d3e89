package dev.weft.safety;

/**
 * The receding-horizon law of one joint: the first jerk of a least-squares plan of the commanded
 * trajectory over the plan's preview, with the jerk inside its bound and the acceleration and
 * velocity kept near theirs.
 *
 * <p>The commanded trajectory is the jerk-driven triple integrator sampled at {@code dt}. Over the
 * horizon, split into runs of ticks, its jerk is held constant over each run (move blocking, as in
 * Maciejowski, <i>Predictive Control with Constraints</i>, Prentice Hall 2002, Section 3.2), so the
 * decision is {@code u = (u_0 .. u_{B-1})}; the first runs are short, so that the first jerk, the one
 * used, is planned almost as finely as it is applied. The command's mean position over run {@code b}
 * is affine in the state {@code x = (q, v, a)} and in {@code u}: {@code c_b = F_b x + G_b u}. The law
 * minimises {@code sum_b n_b (c_b - r_b)^2 + tau^6 sum_j n_j u_j^2}, with {@code r_b} the plan's mean
 * over the same run of {@code n_b} ticks and {@code tau} the time that prices jerk in position units
 * (a jerk {@code u} held for {@code tau} moves the command by about {@code u tau^3}), subject to
 * {@code |u_j| <= J}: a box-constrained quadratic program, solved exactly by a primal active set
 * method (solveBox below; the primal-dual active set method of Hintermüller, Ito and Kunisch,
 * SIAM J. Optim. 13(3), 2002, was tried first and cycled on 14 % of the demo's programs), warm-started
 * from the last solve's active set. The accelerations and velocities at the
 * ends of the runs are kept near their bounds by quadratic penalties added where a solution breaks
 * them, up to {@link #OUTER} more solves (an exterior penalty method). Only the first jerk is used,
 * for one tick, before the next tick solves again. The shield of {@link AxisFilter} then keeps
 * every bound exactly; the penalties only keep the plan from counting on what the shield will not
 * allow.
 *
 * <p>Built once at construction (allocates); then the control thread alone calls
 * {@link #boundedJerk}, which allocates nothing.
 */
final class PreviewLaw {

    /** Weight of a penalised acceleration or velocity beyond its bound (with a position run weighing its ticks). */
    static final double PENALTY = 100.0;
    /** Rounds of penalties added after the first solve. */
    static final int OUTER = 3;
    /** Largest number of active-set steps of one box-constrained solve (three per run). */
    static final int MAX_ITERATIONS = 48;

    final int runs;
    /** Tick offset (from this tick) of the end of each run, exclusive. */
    final int[] runEnds;
    final int horizonTicks;
    /** Time of each run's centre from this tick's command, s (the mean of its ticks' times). */
    final double[] centres;
    /** The time unit of the internal problem, s (so that its entries are of order one). */
    private final double unit;
    /** Run means of the position for a unit jerk in run j, and for the state. */
    private final double[][] g;
    private final double[][] f;
    /** Acceleration and velocity at the end of run k for a unit jerk in run j (rows 0..B-1 and B..2B-1). */
    private final double[][] rate;
    /** Their part from the state: acceleration rows take a, velocity rows v + t_k a (t_k in units). */
    private final double[] endTime;
    private final double[] weight;
    private final double[][] hess;

    private final double[][] hmod;
    private final double[] b;
    private final double[] u;
    private final double[] mu;
    private final double[] x;
    private final int[] state;
    private final double[][] factor;
    /** The Cholesky factor of the Hessian itself, every run free. */
    private final double[][] wholeFactor;
    /** The Hessian of the current solve: {@code hess} itself, or {@code hmod} once it carries penalties. */
    private double[][] current;
    private final double[] rhs;
    private final int[] free;
    private final boolean[] penalised;
    /** Whether the last solve put the first run's jerk at its bound. */
    boolean firstAtBound;

    /**
     * @param runTicks  the runs' lengths in ticks, each at least 1
     * @param jerkPrice the position error a jerk of 1 is worth: the cost's {@code tau^3}, so its
     *                  jerk weight is {@code jerkPrice^2}
     */
    PreviewLaw(double dt, int[] runTicks, double jerkPrice) {
        if (runTicks.length < 1 || !(dt > 0.0) || !(jerkPrice > 0.0)) {
            throw new IllegalArgumentException("preview: " + runTicks.length + " runs, dt " + dt + ", jerk price " + jerkPrice);
        }
        int n = runTicks.length;
        this.runs = n;
        this.runEnds = new int[n];
        int total = 0;
        for (int j = 0; j < n; j++) {
            if (runTicks[j] < 1) {
                throw new IllegalArgumentException("preview: run " + j + " has " + runTicks[j] + " ticks");
            }
            total += runTicks[j];
            runEnds[j] = total;
        }
        this.horizonTicks = total;
        this.centres = new double[n];
        for (int j = 0; j < n; j++) {
            int from = j == 0 ? 0 : runEnds[j - 1];
            centres[j] = 0.5 * (from + runEnds[j] - 1) * dt;
        }
        this.unit = total * dt / n;
        double h = dt / unit;
        int[] runOf = new int[total];
        for (int s = 0, j = 0; s < total; s++) {
            if (s >= runEnds[j]) {
                j++;
            }
            runOf[s] = j;
        }
        this.g = new double[n][n];
        this.f = new double[n][3];
        this.rate = new double[2 * n][n];
        this.endTime = new double[n];
        this.weight = new double[n];
        for (int k = 0; k < n; k++) {
            weight[k] = runTicks[k];
            endTime[k] = runEnds[k] * h;
        }
        for (int j = 0; j < n; j++) {
            double p = 0.0;
            double vel = 0.0;
            double acc = 0.0;
            for (int s = 0; s < total; s++) {
                double jerk = runOf[s] == j ? 1.0 : 0.0;
                p += h * (vel + h * (0.5 * acc + h * jerk / 6.0));
                vel += h * (acc + 0.5 * h * jerk);
                acc += h * jerk;
                int k = runOf[s];
                g[k][j] += p / runTicks[k];
                if (s + 1 == runEnds[k]) {
                    rate[k][j] = acc;
                    rate[n + k][j] = vel;
                }
            }
        }
        for (int s = 0; s < total; s++) {
            double t = (s + 1) * h;
            int k = runOf[s];
            f[k][0] += 1.0 / runTicks[k];
            f[k][1] += t / runTicks[k];
            f[k][2] += 0.5 * t * t / runTicks[k];
        }
        // tau^6 in the internal time unit, by products alone (a NumPy mirror gets the same double)
        double cube = jerkPrice / (unit * unit * unit);
        double lambda = cube * cube;
        this.hess = new double[n][n];
        for (int r = 0; r < n; r++) {
            for (int c = 0; c < n; c++) {
                double sum = r == c ? lambda * weight[r] : 0.0;
                for (int k = 0; k < n; k++) {
                    sum += weight[k] * g[k][r] * g[k][c];
                }
                hess[r][c] = sum;
            }
        }
        this.hmod = new double[n][n];
        this.b = new double[n];
        this.u = new double[n];
        this.mu = new double[n];
        this.x = new double[n];
        this.state = new int[n];
        this.factor = new double[n][n];
        this.wholeFactor = new double[n][n];
        int[] all = new int[n];
        for (int j = 0; j < n; j++) {
            all[j] = j;
        }
        for (int r = 0; r < n; r++) {
            factorRow(hess, all, wholeFactor, r);
        }
        this.rhs = new double[n];
        this.free = new int[n];
        this.penalised = new boolean[2 * n];
    }

    /**
     * The first jerk for state (q, v, a) and the run means {@code preview[0 .. runs)}, with
     * {@code |jerk| <= jMax} (exactly {@code +-jMax} when the first run is at its bound, see
     * {@link #firstAtBound}); non-finite when the preview is.
     */
    double boundedJerk(double q, double v, double a, double[] preview, double jMax, double aMax, double vMax) {
        int n = runs;
        double u1 = unit;
        double vs = v * u1;
        double as = a * u1 * u1;
        double aLim = aMax * u1 * u1;
        double vLim = vMax * u1;
        double jLim = jMax * u1 * u1 * u1;
        for (int k = 0; k < 2 * n; k++) {
            penalised[k] = false;
        }
        for (int round = 0; round <= OUTER; round++) {
            // the first round has no penalty and solves with the Hessian itself
            current = round == 0 ? hess : hmod;
            for (int r = 0; r < n; r++) {
                if (round > 0) {
                    System.arraycopy(hess[r], 0, hmod[r], 0, n);
                }
                b[r] = 0.0;
            }
            for (int k = 0; k < n; k++) {
                double res = preview[k] - (f[k][0] * q + f[k][1] * vs + f[k][2] * as);
                double wr = weight[k] * res;
                double[] gk = g[k];
                // run k's mean depends on the jerks of runs 0..k only (G is lower triangular)
                for (int j = 0; j <= k; j++) {
                    b[j] += gk[j] * wr;
                }
            }
            for (int k = 0; k < 2 * n; k++) {
                if (!penalised[k]) {
                    continue;
                }
                double offset = freeRate(k, vs, as);
                double lim = k < n ? aLim : vLim;
                int last = k < n ? k : k - n;
                double goal = (offset + dot(rate[k], u, last)) > 0.0 ? lim : -lim;
                double[] ck = rate[k];
                for (int r = 0; r <= last; r++) {
                    double cr = ck[r];
                    if (cr == 0.0) {
                        continue;
                    }
                    b[r] += PENALTY * cr * (goal - offset);
                    for (int c = 0; c <= last; c++) {
                        hmod[r][c] += PENALTY * cr * ck[c];
                    }
                }
            }
            solveBox(jLim);
            boolean added = false;
            for (int k = 0; k < 2 * n; k++) {
                if (penalised[k]) {
                    continue;
                }
                double x = freeRate(k, vs, as) + dot(rate[k], u, k < n ? k : k - n);
                double lim = k < n ? aLim : vLim;
                if (x > lim || x < -lim) {
                    penalised[k] = true;
                    added = true;
                }
            }
            if (!added) {
                break;
            }
        }
        double first = u[0];
        firstAtBound = first >= jLim || first <= -jLim;
        return firstAtBound ? (first > 0.0 ? jMax : -jMax) : first / (u1 * u1 * u1);
    }

    private double freeRate(int k, double vs, double as) {
        return k < runs ? as : vs + endTime[k - runs] * as;
    }

    /**
     * {@code x . y} over entries 0..last: a rate row is zero past its own run (a jerk after the end of
     * run k does not change the rate there), so the terms left out are exact zeros.
     */
    private static double dot(double[] x, double[] y, int last) {
        double s = 0.0;
        for (int j = 0; j <= last; j++) {
            s += x[j] * y[j];
        }
        return s;
    }

    /**
     * The box-constrained minimiser of {@code u' current u / 2 - b' u}, |u| <= lim, by a primal active
     * set method (the strategy of Stark and Parker's bounded-variable least squares, Computational
     * Statistics 10, 1995): from the last solve's fixed runs at their bounds and the others at 0,
     * solve on the free runs; step toward that solution until a run meets its bound and fix it there; once the solution is inside the box, free the fixed run
     * whose multiplier has the wrong sign most. The cost falls at every step. Leaves the result in
     * {@code u}; stops after {@link #MAX_ITERATIONS} steps with the feasible point reached.
     */
    private void solveBox(double lim) {
        int n = runs;
        // warm start: the runs fixed at a bound by the last solve (this tick's previous round, or
        // the tick before) start fixed there, the others at 0, a point inside the box
        for (int j = 0; j < n; j++) {
            x[j] = state[j] * lim;
        }
        for (int it = 0; it < MAX_ITERATIONS; it++) {
            solveFree(lim);
            // the largest step from x toward the free solution that stays in the box
            double step = 1.0;
            int hit = -1;
            for (int j = 0; j < n; j++) {
                if (state[j] != 0) {
                    continue;
                }
                double to = u[j];
                if (to > lim || to < -lim) {
                    double bound = to > 0.0 ? lim : -lim;
                    double s = (bound - x[j]) / (to - x[j]);
                    if (s < step) {
                        step = s;
                        hit = j;
                    }
                }
            }
            if (hit >= 0) {
                for (int j = 0; j < n; j++) {
                    if (state[j] == 0) {
                        x[j] += step * (u[j] - x[j]);
                    }
                }
                state[hit] = u[hit] > 0.0 ? 1 : -1;
                x[hit] = state[hit] * lim;
                continue;
            }
            for (int j = 0; j < n; j++) {
                x[j] = u[j];
            }
            // the solution is in the box: free the fixed run whose multiplier pulls inward most
            int release = -1;
            double worst = 0.0;
            for (int j = 0; j < n; j++) {
                if (state[j] == 0) {
                    continue;
                }
                // mu is b - current u: the descent direction; at +lim it must not point down, at -lim not up
                double wrong = -state[j] * mu[j];
                if (wrong > worst) {
                    worst = wrong;
                    release = j;
                }
            }
            if (release < 0) {
                break;
            }
            state[release] = 0;
        }
        for (int j = 0; j < n; j++) {
            u[j] = x[j];
        }
    }

    /** Row r of the Cholesky factor of {@code m} restricted to the runs {@code idx[0..]}. */
    private static void factorRow(double[][] m, int[] idx, double[][] chol, int r) {
        int jr = idx[r];
        for (int c = 0; c <= r; c++) {
            double sum = m[jr][idx[c]];
            for (int k = 0; k < c; k++) {
                sum -= chol[r][k] * chol[c][k];
            }
            chol[r][c] = c == r ? Math.sqrt(sum) : sum / chol[c][c];
        }
    }

    /** Fixes the active runs at their bound, solves for the free ones (Cholesky), and sets the multipliers. */
    private void solveFree(double lim) {
        int n = runs;
        int m = 0;
        for (int j = 0; j < n; j++) {
            if (state[j] == 0) {
                free[m++] = j;
            } else {
                u[j] = state[j] * lim;
            }
        }
        // with every run free and no penalty the factor is the one formed at construction (the same
        // loop, so the same doubles)
        boolean whole = m == n && current == hess;
        double[][] chol = whole ? wholeFactor : factor;
        for (int r = 0; r < m; r++) {
            int jr = free[r];
            double s = b[jr];
            for (int j = 0; j < n; j++) {
                if (state[j] != 0) {
                    s -= current[jr][j] * u[j];
                }
            }
            rhs[r] = s;
            if (!whole) {
                factorRow(current, free, chol, r);
            }
        }
        for (int r = 0; r < m; r++) {
            double s = rhs[r];
            for (int k = 0; k < r; k++) {
                s -= chol[r][k] * rhs[k];
            }
            rhs[r] = s / chol[r][r];
        }
        for (int r = m - 1; r >= 0; r--) {
            double s = rhs[r];
            for (int k = r + 1; k < m; k++) {
                s -= chol[k][r] * rhs[k];
            }
            rhs[r] = s / chol[r][r];
        }
        for (int r = 0; r < m; r++) {
            u[free[r]] = rhs[r];
        }
        for (int j = 0; j < n; j++) {
            if (state[j] == 0) {
                mu[j] = 0.0;
            } else {
                double s = b[j];
                for (int k = 0; k < n; k++) {
                    s -= current[j][k] * u[k];
                }
                mu[j] = s;
            }
        }
    }
}
