package dev.weft.safety;

/**
 * Gains of the receding-horizon law: the first jerk of the unconstrained least-squares plan of the
 * commanded trajectory over the plan's preview, as a linear function of the preview and the state.
 *
 * <p>The commanded trajectory is the jerk-driven triple integrator sampled at {@code dt}. Over the
 * horizon of {@code blocks} runs of {@code blockTicks} ticks, its jerk is held constant over each run
 * (move blocking, as in Maciejowski, <i>Predictive Control with Constraints</i>, Prentice Hall 2002,
 * Section 3.2), so the decision is {@code u = (u_0 .. u_{B-1})}. The command's mean position over run
 * {@code b} is affine in the state {@code x = (q, v, a)} and in {@code u}: {@code c_b = F_b x + G_b u}.
 * The law minimises {@code sum_b (c_b - r_b)^2 + tau^6 sum_j u_j^2} over {@code u}, with {@code r_b}
 * the plan's mean over the same run and {@code tau} a time that prices jerk in position units (a jerk
 * {@code u} held for {@code tau} moves the command by about {@code u tau^3}). The minimiser is
 * {@code u = (G'G + tau^6 I)^-1 G' (r - F x)}; only its first entry is used, and only for one tick,
 * before the next tick solves again: {@code u_0 = sum_b w_b r_b - wq q - wv v - wa a}.
 *
 * <p>Built once at construction (allocates); the gains are then read on the control thread.
 */
final class PreviewGains {

    final int blocks;
    final int blockTicks;
    /** Weights of the plan's run means in the first jerk. */
    final double[] w;
    /** Gains on the state (sum of w_b times F_b). */
    final double wq;
    final double wv;
    final double wa;

    PreviewGains(double dt, int blocks, int blockTicks, double jerkTime) {
        if (blocks < 1 || blockTicks < 1 || !(dt > 0.0) || !(jerkTime > 0.0)) {
            throw new IllegalArgumentException("preview gains: blocks " + blocks + ", ticks " + blockTicks
                    + ", dt " + dt + ", jerk time " + jerkTime);
        }
        this.blocks = blocks;
        this.blockTicks = blockTicks;
        // time in units of one run, so that the entries of G are of order one
        double span = blockTicks * dt;
        double h = dt / span;
        int steps = blocks * blockTicks;
        double[][] g = new double[blocks][blocks];
        double[][] f = new double[blocks][3];
        for (int j = 0; j < blocks; j++) {
            double p = 0.0;
            double vel = 0.0;
            double acc = 0.0;
            for (int s = 0; s < steps; s++) {
                double jerk = s / blockTicks == j ? 1.0 : 0.0;
                p += h * (vel + h * (0.5 * acc + h * jerk / 6.0));
                vel += h * (acc + 0.5 * h * jerk);
                acc += h * jerk;
                g[s / blockTicks][j] += p / blockTicks;
            }
        }
        for (int s = 0; s < steps; s++) {
            double t = (s + 1) * h;
            f[s / blockTicks][0] += 1.0 / blockTicks;
            f[s / blockTicks][1] += t / blockTicks;
            f[s / blockTicks][2] += 0.5 * t * t / blockTicks;
        }
        double lambda = Math.pow(jerkTime / span, 6);
        double[][] hess = new double[blocks][blocks];
        for (int r = 0; r < blocks; r++) {
            for (int c = 0; c < blocks; c++) {
                double sum = r == c ? lambda : 0.0;
                for (int b = 0; b < blocks; b++) {
                    sum += g[b][r] * g[b][c];
                }
                hess[r][c] = sum;
            }
        }
        this.g = g;
        this.f = f;
        this.span = span;
        this.hess = new double[blocks][blocks];
        for (int r = 0; r < blocks; r++) {
            System.arraycopy(hess[r], 0, this.hess[r], 0, blocks);
        }
        this.b = new double[blocks];
        this.u = new double[blocks];
        this.mu = new double[blocks];
        this.state = new int[blocks];
        this.chol = new double[blocks][blocks];
        this.rhs = new double[blocks];
        this.free = new int[blocks];
        this.hmod = new double[blocks][blocks];
        this.bmod = new double[blocks];
        this.penalised = new boolean[2 * blocks];
        double diag = 0.0;
        for (int r = 0; r < blocks; r++) {
            diag += this.hess[r][r];
        }
        this.dualScale = blocks / diag;
        double[] y = new double[blocks];
        y[0] = 1.0;
        solve(hess, y);
        this.w = new double[blocks];
        double sq = 0.0;
        double sv = 0.0;
        double sa = 0.0;
        for (int b = 0; b < blocks; b++) {
            double s = 0.0;
            for (int j = 0; j < blocks; j++) {
                s += g[b][j] * y[j];
            }
            // back from run units to seconds: jerk in units of 1/span^3
            w[b] = s / (span * span * span);
            sq += w[b] * f[b][0];
            sv += w[b] * f[b][1] * span;
            sa += w[b] * f[b][2] * span * span;
        }
        this.wq = sq;
        this.wv = sv;
        this.wa = sa;
    }

    /** Response of the run means to the run jerks, and to the state, in run units; the cost's Hessian. */
    private final double[][] g;
    private final double[][] f;
    private final double span;
    private final double[][] hess;
    private final double dualScale;
    /** Scratch of the constrained solve. */
    private final double[] b;
    private final double[] u;
    private final double[] mu;
    private final int[] state;
    private final double[][] chol;
    private final double[] rhs;
    private final int[] free;
    /** Iterations the last constrained solve took. */
    int iterations;
    /** Hessian and gradient of the current penalised problem. */
    private final double[][] hmod;
    private final double[] bmod;
    /** Which run-end accelerations (0..B-1) and velocities (B..2B-1) carry a penalty. */
    private final boolean[] penalised;
    /** Weight of a penalised acceleration or velocity beyond its bound. */
    static final double PENALTY = 100.0;
    /** Rounds of penalties added after the first solve. */
    static final int OUTER = 3;

    /** Largest number of active-set iterations of one constrained solve. */
    static final int MAX_ITERATIONS = 12;

    /**
     * The first jerk of the least-squares plan with every run's jerk inside {@code [-jMax, jMax]}:
     * the box-constrained quadratic program solved by the primal-dual active set method (Hintermüller,
     * Ito and Kunisch, SIAM J. Optim. 13(3), 2002), started from the unconstrained solution clipped to
     * the box, at most {@link #MAX_ITERATIONS} iterations (the last iterate, clipped, otherwise).
     */
    double boxedJerk(double q, double v, double a, double[] preview, int at, double jMax, double unconstrained) {
        return boundedJerk(q, v, a, preview, at, jMax, Double.POSITIVE_INFINITY, Double.POSITIVE_INFINITY);
    }

    /**
     * As {@link #boxedJerk}, with the accelerations and velocities at the ends of the runs kept near
     * {@code aMax} and {@code vMax} by penalties added where the plan breaks them (up to OUTER rounds).
     */
    double boundedJerk(double q, double v, double a, double[] preview, int at, double jMax, double aMax, double vMax) {
        int n = blocks;
        double vs = v * span;
        double as = a * span * span;
        double aLim = aMax * span * span;
        double vLim = vMax * span;
        for (int k = 0; k < 2 * n; k++) {
            penalised[k] = false;
        }
        double first = 0.0;
        for (int round = 0; round <= OUTER; round++) {
            for (int r = 0; r < n; r++) {
                System.arraycopy(hess[r], 0, hmod[r], 0, n);
            }
            for (int j = 0; j < n; j++) {
                bmod[j] = 0.0;
            }
            for (int k = 0; k < 2 * n; k++) {
                if (!penalised[k]) {
                    continue;
                }
                // acceleration at the end of run k: as + sum_{j<=k} u_j; velocity: vs + (k+1) as + sum_{j<=k} (k - j + 1/2) u_j
                int kk = k < n ? k : k - n;
                double offset = k < n ? as : vs + (kk + 1) * as;
                double now = offset;
                for (int j = 0; j <= kk; j++) {
                    now += row(k, kk, j) * u[j];
                }
                double lim = k < n ? aLim : vLim;
                double goal = now > 0 ? lim : -lim;
                for (int r = 0; r <= kk; r++) {
                    double cr = row(k, kk, r);
                    bmod[r] += PENALTY * cr * (goal - offset);
                    for (int c = 0; c <= kk; c++) {
                        hmod[r][c] += PENALTY * cr * row(k, kk, c);
                    }
                }
            }
            first = solveBox(q, vs, as, preview, at, jMax);
            boolean added = false;
            for (int k = 0; k < 2 * n; k++) {
                int kk = k < n ? k : k - n;
                double x = k < n ? as : vs + (kk + 1) * as;
                for (int j = 0; j <= kk; j++) {
                    x += row(k, kk, j) * u[j];
                }
                double lim = k < n ? aLim : vLim;
                if (!penalised[k] && (x > lim || x < -lim)) {
                    penalised[k] = true;
                    added = true;
                }
            }
            if (!added) {
                break;
            }
        }
        return first;
    }

    private static double row(int k, int kk, int j) {
        return k == kk ? 1.0 : (kk - j + 0.5);
    }

    private double solveBox(double q, double vs, double as, double[] preview, int at, double jMax) {
        int n = blocks;
        double lim = jMax * span * span * span;
        for (int j = 0; j < n; j++) {
            b[j] = bmod[j];
        }
        for (int r = 0; r < n; r++) {
            double res = preview[at + r] - (f[r][0] * q + f[r][1] * vs + f[r][2] * as);
            double[] gr = g[r];
            for (int j = 0; j < n; j++) {
                b[j] += gr[j] * res;
            }
        }
        // start: every run free, then the active sets of the clipped unconstrained plan
        for (int j = 0; j < n; j++) {
            state[j] = 0;
        }
        solveFree(lim);
        iterations = 0;
        for (int it = 0; it < MAX_ITERATIONS; it++) {
            iterations = it + 1;
            boolean changed = false;
            for (int j = 0; j < n; j++) {
                double trial = u[j] + dualScale * mu[j];
                int next = trial > lim ? 1 : (trial < -lim ? -1 : 0);
                if (next != state[j]) {
                    state[j] = next;
                    changed = true;
                }
            }
            if (!changed) {
                break;
            }
            solveFree(lim);
        }
        double first = u[0];
        if (first > lim) {
            first = lim;
        } else if (first < -lim) {
            first = -lim;
        }
        return first / (span * span * span);
    }

    /** Fixes the active runs at their bound, solves for the free ones, and sets the multipliers. */
    private void solveFree(double lim) {
        int n = blocks;
        int m = 0;
        for (int j = 0; j < n; j++) {
            if (state[j] == 0) {
                free[m++] = j;
            } else {
                u[j] = state[j] * lim;
            }
        }
        for (int r = 0; r < m; r++) {
            int jr = free[r];
            double s = b[jr];
            for (int j = 0; j < n; j++) {
                if (state[j] != 0) {
                    s -= hmod[jr][j] * u[j];
                }
            }
            rhs[r] = s;
            for (int c = 0; c <= r; c++) {
                double sum = hmod[jr][free[c]];
                for (int k = 0; k < c; k++) {
                    sum -= chol[r][k] * chol[c][k];
                }
                chol[r][c] = c == r ? Math.sqrt(sum) : sum / chol[c][c];
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
                    s -= hmod[j][k] * u[k];
                }
                mu[j] = s;
            }
        }
    }

    /** The unconstrained first jerk for state (q, v, a) and the run means {@code preview[at .. at + blocks)}. */
    double jerk(double q, double v, double a, double[] preview, int at) {
        double s = 0.0;
        for (int b = 0; b < blocks; b++) {
            s += w[b] * preview[at + b];
        }
        return s - wq * q - wv * v - wa * a;
    }

    /** Solves {@code m x = rhs} in place (rhs becomes x) by Gaussian elimination with partial pivoting. */
    private static void solve(double[][] m, double[] rhs) {
        int n = rhs.length;
        for (int c = 0; c < n; c++) {
            int piv = c;
            for (int r = c + 1; r < n; r++) {
                if (Math.abs(m[r][c]) > Math.abs(m[piv][c])) {
                    piv = r;
                }
            }
            double[] tmp = m[c];
            m[c] = m[piv];
            m[piv] = tmp;
            double t = rhs[c];
            rhs[c] = rhs[piv];
            rhs[piv] = t;
            for (int r = c + 1; r < n; r++) {
                double k = m[r][c] / m[c][c];
                for (int k2 = c; k2 < n; k2++) {
                    m[r][k2] -= k * m[c][k2];
                }
                rhs[r] -= k * rhs[c];
            }
        }
        for (int r = n - 1; r >= 0; r--) {
            double s = rhs[r];
            for (int c = r + 1; c < n; c++) {
                s -= m[r][c] * rhs[c];
            }
            rhs[r] = s / m[r][r];
        }
    }
}
