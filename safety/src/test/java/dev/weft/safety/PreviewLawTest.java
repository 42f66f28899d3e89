package dev.weft.safety;

import static org.assertj.core.api.Assertions.assertThat;

import java.util.SplittableRandom;
import org.ejml.simple.SimpleMatrix;
import org.junit.jupiter.api.Test;

/**
 * The receding-horizon law's quadratic program, checked against an independent build of the same
 * program: the prediction matrices of the sampled triple integrator formed with EJML from the
 * zero-order-hold discretisation {@code x[k+1] = Ad x[k] + Bd u[k]} (Ad = exp(A dt), exact here since
 * A is nilpotent; common practice), the cost of {@link PreviewLaw} written out tick by tick, and
 * the box-constrained minimum found by a different method, accelerated projected gradient (FISTA,
 * Beck and Teboulle, SIAM J. Imaging Sci. 2(1), 2009) run to convergence, with its step from
 * EJML's eigenvalues of the Hessian.
 */
class PreviewLawTest {

    private static final double DT = 0.002;
    private static final double JERK = 50.0;

    @Test
    void theFirstJerkIsTheMinimiserOfTheBoxConstrainedProgram() {
        int[] runs = AxisFilter.previewRuns(DT);
        double tau = Math.cbrt(AxisFilter.PREVIEW_JERK_PRICE / JERK);
        PreviewLaw law = new PreviewLaw(DT, runs, AxisFilter.PREVIEW_JERK_PRICE / JERK);
        Reference ref = new Reference(runs, tau);
        SplittableRandom rng = new SplittableRandom(42);
        int atBound = 0;
        int inside = 0;
        double worst = 0;
        for (int trial = 0; trial < 30; trial++) {
            // a state near a plan that moves on at a steady rate, plus (in two trials of three) a
            // step of random size somewhere in the horizon: small mismatches give answers inside
            // the box, large ones answers at its bound
            double q = rng.nextDouble(-1, 1);
            double rate = rng.nextDouble(-1.5, 1.5);
            double mismatch = Math.pow(10, rng.nextDouble(-4, -1));
            double v = rate + mismatch * rng.nextDouble(-1, 1);
            double a = 10 * mismatch * rng.nextDouble(-1, 1);
            double[] preview = new double[runs.length];
            double step = mismatch * rng.nextDouble(-1, 1) * (trial % 3);
            double stepAt = rng.nextDouble(0, 0.4);
            for (int b = 0; b < runs.length; b++) {
                double t = law.centres[b];
                preview[b] = q + rate * t + (t > stepAt ? step : 0.0);
            }
            double mine = law.boundedJerk(q, v, a, preview, JERK, Double.POSITIVE_INFINITY,
                    Double.POSITIVE_INFINITY);
            double theirs = ref.firstJerk(q, v, a, preview, JERK);
            worst = Math.max(worst, Math.abs(mine - theirs));
            if (Math.abs(theirs) > JERK * (1 - 1e-9)) {
                atBound++;
            } else {
                inside++;
            }
            assertThat(mine).as("trial %d", trial).isCloseTo(theirs, org.assertj.core.api.Assertions.within(1e-6 * JERK));
        }
        System.out.printf("preview law: 30 programs, %d with the first jerk at its bound, %d inside; worst |difference| %.2e%n",
                atBound, inside, worst);
        // both kinds of answer were exercised
        assertThat(atBound).isPositive();
        assertThat(inside).isPositive();
    }

    @Test
    void onAPlanThatRestsAtTheCommandTheLawAsksForNoJerk() {
        int[] runs = AxisFilter.previewRuns(DT);
        PreviewLaw law = new PreviewLaw(DT, runs, AxisFilter.PREVIEW_JERK_PRICE / JERK);
        double[] preview = new double[runs.length];
        java.util.Arrays.fill(preview, 0.7);
        assertThat(law.boundedJerk(0.7, 0, 0, preview, JERK, 5, 1.4)).isCloseTo(0.0,
                org.assertj.core.api.Assertions.within(1e-9));
    }

    /** The same program built independently, tick by tick, in EJML. */
    static final class Reference {
        final int n;
        final SimpleMatrix hess;
        /** Run means of the position: runs x 3 (state part) and runs x n (jerk part). */
        final SimpleMatrix free;
        final SimpleMatrix forced;
        final SimpleMatrix weights;
        final double step;

        Reference(int[] runs, double tau) {
            n = runs.length;
            int total = 0;
            for (int r : runs) {
                total += r;
            }
            SimpleMatrix ad = new SimpleMatrix(new double[][] {{1, DT, DT * DT / 2}, {0, 1, DT}, {0, 0, 1}});
            SimpleMatrix bd = new SimpleMatrix(new double[][] {{DT * DT * DT / 6}, {DT * DT / 2}, {DT}});
            SimpleMatrix c = new SimpleMatrix(new double[][] {{1, 0, 0}});
            // per tick: position after s+1 steps = C Ad^(s+1) x0 + sum_i C Ad^(s-i) Bd u_tick[i]
            SimpleMatrix tickFree = new SimpleMatrix(total, 3);
            SimpleMatrix tickForced = new SimpleMatrix(total, total);
            SimpleMatrix power = ad.copy();
            SimpleMatrix[] markov = new SimpleMatrix[total];
            SimpleMatrix pb = bd.copy();
            for (int s = 0; s < total; s++) {
                tickFree.insertIntoThis(s, 0, c.mult(power));
                power = ad.mult(power);
                markov[s] = c.mult(pb);
                pb = ad.mult(pb);
            }
            for (int s = 0; s < total; s++) {
                for (int i = 0; i <= s; i++) {
                    tickForced.set(s, i, markov[s - i].get(0, 0));
                }
            }
            // runs: ticks -> run means (M) and run jerks -> tick jerks (S)
            SimpleMatrix mean = new SimpleMatrix(n, total);
            SimpleMatrix spread = new SimpleMatrix(total, n);
            weights = new SimpleMatrix(n, n);
            for (int b = 0, from = 0; b < n; from += runs[b], b++) {
                for (int s = from; s < from + runs[b]; s++) {
                    mean.set(b, s, 1.0 / runs[b]);
                    spread.set(s, b, 1.0);
                }
                weights.set(b, b, runs[b]);
            }
            free = mean.mult(tickFree);
            forced = mean.mult(tickForced).mult(spread);
            double lambda = Math.pow(tau, 6);
            hess = forced.transpose().mult(weights).mult(forced).plus(weights.scale(lambda));
            double largest = 0;
            var eig = hess.eig();
            for (int i = 0; i < n; i++) {
                largest = Math.max(largest, Math.abs(eig.getEigenvalue(i).getReal()));
            }
            step = 1.0 / largest;
        }

        double firstJerk(double q, double v, double a, double[] preview, double jMax) {
            SimpleMatrix x0 = new SimpleMatrix(new double[][] {{q}, {v}, {a}});
            SimpleMatrix r = new SimpleMatrix(n, 1, true, preview);
            SimpleMatrix lin = forced.transpose().mult(weights).mult(r.minus(free.mult(x0)));
            // FISTA on plain arrays (the matrices above are EJML's; the loop is only arithmetic)
            double[][] h = new double[n][n];
            double[] l = new double[n];
            for (int i = 0; i < n; i++) {
                l[i] = lin.get(i, 0);
                for (int j = 0; j < n; j++) {
                    h[i][j] = hess.get(i, j);
                }
            }
            double[] u = new double[n];
            double[] y = new double[n];
            double[] next = new double[n];
            double t = 1.0;
            for (int it = 0; it < 2_000_000; it++) {
                double moved = 0;
                for (int i = 0; i < n; i++) {
                    double g = -l[i];
                    for (int j = 0; j < n; j++) {
                        g += h[i][j] * y[j];
                    }
                    next[i] = Math.max(-jMax, Math.min(jMax, y[i] - step * g));
                    moved = Math.max(moved, Math.abs(next[i] - u[i]));
                }
                double tNext = 0.5 * (1 + Math.sqrt(1 + 4 * t * t));
                // restart the momentum when it stops helping (O'Donoghue and Candes 2015)
                double dot = 0;
                for (int i = 0; i < n; i++) {
                    dot += (y[i] - next[i]) * (next[i] - u[i]);
                }
                if (dot > 0) {
                    tNext = 1.0;
                }
                for (int i = 0; i < n; i++) {
                    y[i] = next[i] + (t - 1) / tNext * (next[i] - u[i]);
                    u[i] = next[i];
                }
                t = tNext;
                if (moved < 1e-14 * jMax && it > 1000) {
                    break;
                }
            }
            return u[0];
        }
    }
}
