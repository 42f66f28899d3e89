package dev.weft.examples.demo;

import static org.assertj.core.api.Assertions.assertThat;

import dev.weft.runtime.config.JointConfig;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.dryrun.DryRunTrace;
import dev.weft.safety.JerkLimiter;
import dev.weft.safety.JointLimits;
import dev.weft.safety.PlanPreview;
import dev.weft.safety.SupervisorState;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.Map;
import org.ejml.data.DMatrixRMaj;
import org.ejml.data.DMatrixSparseCSC;
import org.ejml.interfaces.linsol.LinearSolverSparse;
import org.ejml.sparse.FillReducing;
import org.ejml.sparse.csc.factory.LinearSolverFactory_DSCC;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * How far the limiter is from the best tracking the joint bounds allow, on the clean demo episodes.
 *
 * <p>For each joint the armed ticks of an episode (the first to the last armed tick with a finite
 * blended target {@code r_k}) are tracked offline by the positions {@code x_k} that minimise
 * {@code sum (x_k - r_k)^2} subject to, at every tick, {@code |x_k - x_{k-1}| <= V dt},
 * {@code |x_k - 2 x_{k-1} + x_{k-2}| <= A dt^2} and {@code |x_k - 3 x_{k-1} + 3 x_{k-2} - x_{k-3}| <= J dt^3},
 * with the three samples before the first armed tick fixed to the limiter's commands there. A k-th
 * finite difference over {@code dt^k} is a weighted mean of the k-th derivative (the Peano-kernel
 * form of a divided difference, with a B-spline as the weight; e.g. de Boor, A Practical Guide to
 * Splines; from memory), so a trajectory within the continuous bounds is feasible here: the program's
 * minimum is a lower bound on what any limiter, however clever, could reach with these bounds. The
 * test also checks that premise on the limiter's own commands.
 *
 * <p>The program is solved by a primal-dual interior-point method (below) and its answer is then
 * certified without the solver's iterates: feasibility row by row, the KKT stationarity residual,
 * and weak duality, which bounds the distance to the true minimum from the multipliers alone.
 *
 * <p>Measured with the receding-horizon law (per joint and episode, the four clean episodes): the
 * limiter 0.56 to 12.0 mrad RMS, the optimum 0.04 to 2.12 mrad, the ratio 1.3 to 15.3 (the law of
 * commit 7d6ac9a, which saw the plan one tick at a time: 8.5 to 39.3 mrad, ratio 9.9 to 268). The
 * issue's aim, within twice the optimum, is met by reach and pitch in most episodes (their ratios 1.3
 * to 2.8) and by no other joint: with the whole plan in view
 * the optimum starts each correction before the chunk that asks for it has even arrived, and rides
 * its bounds (within 0.1 % of one of them on 31 to 95 % of the ticks); the law sees only the plan
 * the blender holds, 0.2 s or so.
 *
 * <p>Which of the two, the law or what it sees, keeps the limiter from the optimum: the same law is
 * also run offline on each joint with foresight (see {@link #foresight}), its preview being the plan
 * it is measured against instead of the plan the blender holds at that tick. It then reaches 0.52 to
 * 2.38 mrad RMS on every joint (lift 1.4 to 2.4 and twist 1.1 to 1.3, against 4.0 to 7.2 and 4.0 to 12.0
 * in the runtime), within 1.1 to 3.2 times the optimum on all joints but roll (6.4 to 14.2; roll's plan
 * is nearly feasible and the law's jerk price costs it about 0.5 mrad whatever it sees). The gap on
 * lift and twist is what the blender's plan does not yet say: a move that the next chunks reveal, and
 * accelerate, after the preview was read.
 */
class DemoOptimumTest {

    /**
     * Regression bound on RMS(limiter) / RMS(optimum) per joint, about 25 % above the worst of the
     * four clean episodes measured: slew 8.8, lift 5.9, reach 2.2, pitch 2.8, roll 14.5, twist
     * 15.3. The aim is 2 on every joint. Roll's ratio is among the largest because its plan
     * is nearly within the bounds (optimum 0.04 to 0.09 mrad, the law 0.56 to 0.61), not because its
     * tracking is the worst.
     */
    static final Map<String, Double> RATIO_MAX = Map.of("slew", 11.0, "lift", 7.5, "reach", 2.8,
            "pitch", 3.5, "roll", 18.0, "twist", 19.0);
    /**
     * The aim for RMS(command - plan), rad, met by the same law when its preview is the plan
     * it is measured against (measured 0.52 to 2.38 mrad).
     */
    static final double FORESIGHT_RMS_MAX = 0.005;
    /**
     * Regression bound on RMS(law with foresight) / RMS(optimum), about 25 % above the worst of the
     * four clean episodes measured: slew 3.2, lift 1.6, reach 1.9, pitch 1.5, roll 14.2, twist 2.2.
     */
    static final Map<String, Double> FORESIGHT_RATIO_MAX = Map.of("slew", 4.0, "lift", 2.0, "reach", 2.4,
            "pitch", 2.0, "roll", 18.0, "twist", 2.8);
    /** Largest relative excess of a bound allowed in the optimum's finite differences. */
    static final double VIOLATION_MAX = 1e-3;
    /** Largest relative excess allowed in the limiter's commands for the lower bound to hold. */
    static final double LIMITER_VIOLATION_MAX = 1e-6;
    /** Largest ||(x - r) + C^T y||_inf / ||x - r||_inf accepted (measured up to 1e-5 on the demo). */
    static final double STATIONARITY_MAX = 1e-3;
    /**
     * Largest duality gap accepted, relative to the objective. The solver stops when its
     * complementarity is at most {@link InteriorPoint#GAP} of the objective; for a feasible pair
     * the gap of weak duality is at most that plus half the squared dual residual (measured up to
     * 2.5e-6).
     */
    static final double GAP_MAX = 2 * InteriorPoint.GAP;

    static WeftConfig config;

    @TempDir
    static Path reports;

    @BeforeAll
    static void load() throws Exception {
        config = WeftConfig.parse(Files.readString(DemoTrackingTest.CONFIG), DemoTrackingTest.CONFIG.getParent(),
                DemoTrackingTest.CONFIG.toString());
    }

    static Iterable<String> episodes() {
        return DemoTrackingTest.episodes();
    }

    @ParameterizedTest
    @MethodSource("episodes")
    void theLimiterStaysWithinItsRegressionBoundOfTheOfflineOptimum(String name) throws Exception {
        DryRunTrace t = DemoTrackingTest.trace(config, name, reports);
        double dt = config.timing().controlPeriod();
        int armed = SupervisorState.ARMED.ordinal();
        Map<String, double[]> figures = new LinkedHashMap<>();
        for (int i = 0; i < t.joints().size(); i++) {
            DryRunTrace.JointTrace j = t.joints().get(i);
            JointConfig bounds = config.robot().joints().get(i);
            assertThat(bounds.name()).isEqualTo(j.name());
            int first = -1;
            int last = -1;
            for (int k = 0; k < t.states().length; k++) {
                if (t.states()[k] == armed && !Double.isNaN(j.target()[k])) {
                    first = first < 0 ? k : first;
                    last = k;
                }
            }
            assertThat(first).as("%s %s: armed ticks after three ticks of history", name, j.name())
                    .isGreaterThanOrEqualTo(3);
            for (int k = first; k <= last; k++) {
                assertThat(t.states()[k] == armed && !Double.isNaN(j.target()[k]))
                        .as("%s %s: tick %d inside the armed run is armed with a target", name, j.name(), k).isTrue();
            }
            Program p = Program.of(j.target(), j.command(), first, last, bounds.velocity(), bounds.acceleration(),
                    bounds.jerk(), dt);
            double[] command = Arrays.copyOfRange(j.command(), first, last + 1);
            double limiterViolation = p.worstViolation(command);
            double[] foresight = foresight(j.target(), j.command(), first, last, bounds, dt);
            double foresightViolation = p.worstViolation(foresight);
            Solution s = InteriorPoint.solve(p);
            Certificate c = Certificate.of(p, s.x(), s.y());
            double rmsForesight = p.rms(foresight);
            double rmsLimiter = p.rms(command);
            double rmsOptimum = p.rms(s.x());
            double ratio = rmsLimiter / rmsOptimum;
            System.out.printf("demo optimum %s %s: limiter %.3f mrad, optimum %.4f mrad (dual bound %.4f), "
                            + "ratio %.1f over %d armed ticks; %d interior-point iterations, gap %.1e, "
                            + "worst bound excess %.1e, stationarity %.1e, limiter's worst excess %.1e, "
                            + "at a bound on %.0f %% of the ticks%n",
                    name, j.name(), rmsLimiter * 1e3, rmsOptimum * 1e3, c.dualRms(p) * 1e3, ratio, p.n(),
                    s.iterations(), c.relativeGap(), c.worstViolation(), c.relativeStationarity(), limiterViolation,
                    100.0 * p.ticksAtABound(s.x()) / p.n());
            System.out.printf("demo foresight %s %s: the same law with the realised plan in view %.3f mrad, "
                            + "%.1f times the optimum (in the runtime %.1f), worst bound excess %.1e%n",
                    name, j.name(), rmsForesight * 1e3, rmsForesight / rmsOptimum, ratio, foresightViolation);
            figures.put(j.name(), new double[] {rmsLimiter, rmsOptimum, ratio, c.worstViolation(),
                    c.relativeStationarity(), c.relativeGap(), limiterViolation, rmsForesight, foresightViolation});
        }
        figures.forEach((joint, f) -> {
            // the optimum is certified: feasible, stationary, and within the duality gap of the minimum
            assertThat(f[3]).as("%s %s: worst relative bound excess of the optimum", name, joint)
                    .isLessThanOrEqualTo(VIOLATION_MAX);
            assertThat(f[4]).as("%s %s: ||(x - r) + C^T y||_inf / ||x - r||_inf", name, joint)
                    .isLessThanOrEqualTo(STATIONARITY_MAX);
            assertThat(f[5]).as("%s %s: duality gap / objective", name, joint).isLessThanOrEqualTo(GAP_MAX);
            // the premise of the lower bound: the limiter's commands are feasible for the program
            assertThat(f[6]).as("%s %s: worst relative bound excess of the limiter's commands", name, joint)
                    .isLessThanOrEqualTo(LIMITER_VIOLATION_MAX);
            // a lower bound: if this fails, the solver is wrong
            assertThat(f[1]).as("%s %s: RMS of the optimum against the limiter's", name, joint)
                    .isLessThanOrEqualTo(f[0]);
            assertThat(f[2]).as("%s %s: RMS(limiter) / RMS(optimum)", name, joint)
                    .isLessThanOrEqualTo(RATIO_MAX.get(joint));
            // the same law, shown the plan it is measured against: feasible, no better than the
            // optimum (else the solver is wrong), and within the 5 mrad on every joint
            assertThat(f[8]).as("%s %s: worst relative bound excess of the law with foresight", name, joint)
                    .isLessThanOrEqualTo(LIMITER_VIOLATION_MAX);
            assertThat(f[1]).as("%s %s: RMS of the optimum against the law with foresight", name, joint)
                    .isLessThanOrEqualTo(f[7]);
            assertThat(f[7]).as("%s %s: RMS(law with foresight - plan), rad", name, joint)
                    .isLessThanOrEqualTo(FORESIGHT_RMS_MAX);
            assertThat(f[7] / f[1]).as("%s %s: RMS(law with foresight) / RMS(optimum)", name, joint)
                    .isLessThanOrEqualTo(FORESIGHT_RATIO_MAX.get(joint));
        });
    }

    /**
     * The runtime's limiter law run offline on one joint with foresight: at each tick {@code k} of
     * {@code first..last} its preview is the run means of {@code target} itself from {@code k} on (held
     * at {@code target[last]} past the end), which is the plan the optimum and the tracking test measure
     * against, and its plan velocity and acceleration are central differences of {@code target}. In the
     * runtime the preview is the plan the blender holds at {@code k}, which later chunks revise. Starts
     * from the runtime's command at {@code first - 1}, with the velocity and acceleration there of the
     * cubic through the runtime's last four commands.
     *
     * @return the commands at ticks {@code first..last}
     */
    static double[] foresight(double[] target, double[] command, int first, int last, JointConfig b, double dt) {
        JerkLimiter limiter = JerkLimiter.create(JointLimits.builder()
                .joint(b.name(), b.min(), b.max(), b.velocity(), b.acceleration(), b.jerk(), b.margin()).build(), dt);
        // velocity and acceleration at first - 1 of the cubic through the last four commands: exact
        // for the limiter's triple integrator while its jerk was constant over those three ticks
        // (the backward-difference formulas of that cubic, e.g. Fornberg, Math. Comp. 51, 1988)
        double x0 = command[first - 1];
        double x1 = command[first - 2];
        double x2 = command[first - 3];
        double x3 = command[first - 4];
        double v0 = (11 * x0 - 18 * x1 + 9 * x2 - 2 * x3) / (6 * dt);
        double a0 = (2 * x0 - 5 * x1 + 4 * x2 - x3) / (dt * dt);
        assertThat(limiter.reset(new double[] {command[first - 1]}, new double[] {v0}, new double[] {a0}))
                .as("%s: the runtime's state before its first armed tick is accepted", b.name()).isTrue();
        int[] ends = limiter.previewRunEnds();
        int[] now = new int[1];
        PlanPreview preview = (joint, out) -> {
            int start = 0;
            for (int run = 0; run < ends.length; run++) {
                double sum = 0;
                for (int m = start; m < ends[run]; m++) {
                    sum += target[Math.min(now[0] + m, last)];
                }
                out[run] = sum / (ends[run] - start);
                start = ends[run];
            }
            return true;
        };
        double[] r = new double[1];
        double[] v = new double[1];
        double[] a = new double[1];
        double[] out = new double[1];
        double[] x = new double[last - first + 1];
        for (int k = first; k <= last; k++) {
            now[0] = k;
            int ahead = Math.min(k + 1, last);
            int behind = Math.max(k - 1, first);
            r[0] = target[k];
            v[0] = (target[ahead] - target[behind]) / ((ahead - behind) * dt);
            a[0] = ahead - behind == 2 ? (target[ahead] - 2 * target[k] + target[behind]) / (dt * dt) : 0.0;
            limiter.apply(r, v, a, preview, out);
            x[k - first] = out[0];
        }
        return x;
    }

    /** The demo's slew bounds, for the synthetic plans. */
    static final double V = 1.6;
    static final double A = 6;
    static final double J = 60;
    static final double DT = 0.002;

    /** {@code amplitude * sin(omega t)} at ticks 0..n-1, and its three samples before tick 0 as history. */
    static Program sine(double amplitude, double omega, int n) {
        double[] target = new double[n + 3];
        double[] command = new double[n + 3];
        for (int k = 0; k < n + 3; k++) {
            target[k] = amplitude * Math.sin(omega * (k - 3) * DT);
            command[k] = target[k];
        }
        return Program.of(target, command, 3, n + 2, V, A, J, DT);
    }

    @Test
    void aPlanWithinTheBoundsIsItsOwnOptimumAndOneBeyondThemIsNot() {
        // omega = J / A = 10 rad/s puts the acceleration and the jerk of the sine at the same share
        // of their bounds: 0.9 here, velocity 0.34; a finite difference is a mean of the derivative,
        // so the sampled plan is inside the bounds too.
        double omega = J / A;
        double amplitude = 0.9 * A / (omega * omega);
        Program inside = sine(amplitude, omega, 1500);
        assertThat(inside.worstViolation(inside.r())).isLessThan(0);
        Solution s = InteriorPoint.solve(inside);
        double worst = 0;
        for (int k = 0; k < inside.n(); k++) {
            worst = Math.max(worst, Math.abs(s.x()[k] - inside.r()[k]));
        }
        System.out.printf("synthetic sine at 0.9 of the bounds: optimum - plan at most %.1e rad, %d iterations%n",
                worst, s.iterations());
        assertThat(worst).isLessThanOrEqualTo(1e-6);
        assertThat(Certificate.of(inside, s.x(), s.y()).worstViolation()).isLessThanOrEqualTo(VIOLATION_MAX);

        // the same sine 25 % larger asks for 1.125 of the acceleration and jerk bounds: the optimum
        // must leave the plan, and stays within the bounds
        Program beyond = sine(1.25 * amplitude, omega, 1500);
        assertThat(beyond.worstViolation(beyond.r())).isGreaterThan(0.1);
        Solution b = InteriorPoint.solve(beyond);
        Certificate c = Certificate.of(beyond, b.x(), b.y());
        System.out.printf("synthetic sine at 1.125 of the bounds: optimum RMS %.4f mrad, gap %.1e, excess %.1e%n",
                beyond.rms(b.x()) * 1e3, c.relativeGap(), c.worstViolation());
        assertThat(beyond.rms(b.x())).isGreaterThan(1e-5);
        assertThat(c.worstViolation()).isLessThanOrEqualTo(VIOLATION_MAX);
        assertThat(c.relativeGap()).isLessThanOrEqualTo(GAP_MAX);
        assertThat(c.relativeStationarity()).isLessThanOrEqualTo(STATIONARITY_MAX);
    }

    @Test
    void aStepIsApproachedEarlyWithinTheBoundsAndReached() {
        // at rest at 0, then a 0.2 rad step at tick 300 of 1000
        int n = 1000;
        int step = 300;
        double height = 0.2;
        double[] target = new double[n + 3];
        double[] command = new double[n + 3];
        for (int k = step + 3; k < n + 3; k++) {
            target[k] = height;
        }
        Program p = Program.of(target, command, 3, n + 2, V, A, J, DT);
        Solution s = InteriorPoint.solve(p);
        Certificate c = Certificate.of(p, s.x(), s.y());
        double rms = p.rms(s.x());
        System.out.printf("synthetic step: optimum RMS %.3f mrad, at %.4f rad the tick before the step, "
                        + "%.2e rad from the step at the end; %d iterations, gap %.1e, excess %.1e, stationarity %.1e%n",
                rms * 1e3, s.x()[step - 1], Math.abs(s.x()[n - 1] - height), s.iterations(), c.relativeGap(),
                c.worstViolation(), c.relativeStationarity());
        assertThat(rms).isGreaterThan(0);
        assertThat(c.worstViolation()).isLessThanOrEqualTo(VIOLATION_MAX);
        assertThat(c.relativeGap()).isLessThanOrEqualTo(GAP_MAX);
        assertThat(c.relativeStationarity()).isLessThanOrEqualTo(STATIONARITY_MAX);
        // with the whole plan in view the optimum moves before the step, and it settles on it
        assertThat(s.x()[step - 1]).isGreaterThan(0.01 * height);
        assertThat(Math.abs(s.x()[n - 1] - height)).isLessThanOrEqualTo(1e-6);
        // the certificate can fail: halfway between the optimum and the rest pose is feasible (a
        // mean of two feasible trajectories), and weak duality tells it from the optimum
        double[] half = new double[n];
        for (int k = 0; k < n; k++) {
            half[k] = 0.5 * s.x()[k];
        }
        Certificate h = Certificate.of(p, half, s.y());
        assertThat(h.worstViolation()).isLessThanOrEqualTo(0);
        assertThat(h.relativeGap()).isGreaterThan(100 * GAP_MAX);
    }

    /**
     * The program for one joint: minimise {@code sum (x_k - r_k)^2} over {@code x_0..x_{n-1}}, with
     * {@code |D_p x (k)| <= b_p} for p = 1, 2, 3 and every k, {@code D_p} the p-th backward
     * difference and {@code x_{-1}, x_{-2}, x_{-3}} fixed.
     *
     * @param r the plan at ticks 0..n-1
     * @param history {@code x_{-1}, x_{-2}, x_{-3}}
     * @param bound {@code b_1 = V dt, b_2 = A dt^2, b_3 = J dt^3}
     */
    record Program(double[] r, double[] history, double[] bound) {

        /** Backward-difference coefficients of orders 1, 2, 3 (binomial with alternating signs). */
        static final double[][] DIFFERENCE = {{1, -1}, {1, -2, 1}, {1, -3, 3, -1}};

        /** The ticks {@code first..last} of {@code target}, with history from {@code command}. */
        static Program of(double[] target, double[] command, int first, int last, double velocity,
                          double acceleration, double jerk, double dt) {
            return new Program(Arrays.copyOfRange(target, first, last + 1),
                    new double[] {command[first - 1], command[first - 2], command[first - 3]},
                    new double[] {velocity * dt, acceleration * dt * dt, jerk * dt * dt * dt});
        }

        int n() {
            return r.length;
        }

        /** {@code D_order x (k)}, order 1..3, with the history before tick 0. */
        double difference(int order, double[] x, int k) {
            double[] c = DIFFERENCE[order - 1];
            double sum = 0;
            for (int d = 0; d < c.length; d++) {
                sum += c[d] * (k - d >= 0 ? x[k - d] : history[d - k - 1]);
            }
            return sum;
        }

        /** Largest {@code |D_p x (k)| / b_p - 1} over p and k: at most 0 when x is feasible. */
        double worstViolation(double[] x) {
            double worst = Double.NEGATIVE_INFINITY;
            for (int p = 1; p <= 3; p++) {
                for (int k = 0; k < n(); k++) {
                    worst = Math.max(worst, Math.abs(difference(p, x, k)) / bound[p - 1] - 1);
                }
            }
            return worst;
        }

        /** Ticks at which one of the three differences is within 0.1 % of its bound. */
        int ticksAtABound(double[] x) {
            int count = 0;
            for (int k = 0; k < n(); k++) {
                for (int p = 1; p <= 3; p++) {
                    if (Math.abs(difference(p, x, k)) / bound[p - 1] > 1 - 1e-3) {
                        count++;
                        break;
                    }
                }
            }
            return count;
        }

        double rms(double[] x) {
            double sum = 0;
            for (int k = 0; k < n(); k++) {
                sum += (x[k] - r[k]) * (x[k] - r[k]);
            }
            return Math.sqrt(sum / n());
        }
    }

    /**
     * An answer of the solver.
     *
     * @param x the positions
     * @param y one multiplier per row of the rows scaled so that each bound is 1: {@code y[(p-1) n + k]}
     *     belongs to {@code D_p x (k) / b_p}
     * @param iterations interior-point iterations (each one Cholesky factorization)
     */
    record Solution(double[] x, double[] y, int iterations) {
    }

    /**
     * What (x, y) proves about the program, from the program's definition alone. With {@code C} the
     * rows {@code D_p / b_p} (bounds ±1, history moved to the right-hand side), the Lagrange dual
     * function of {@code min 1/2 ||x - r||^2 s.t. -1 <= C x + c <= 1} is
     * {@code g(y) = sum_i (y_i (C r + c)_i - |y_i|) - 1/2 ||C^T y||^2}, and {@code g(y)} is at most the
     * minimum for every y (weak duality; Boyd and Vandenberghe, Convex Optimization, 2004, §5.1 to
     * 5.2, from memory; derived here: the minimum over x of the Lagrangian is at {@code x = r - C^T y},
     * over the box of the multiplier term at its corner). So a feasible x whose objective is within
     * {@code gap = 1/2 ||x - r||^2 - g(y)} of {@code g(y)} is within that gap of the minimum, and
     * {@code ||x - x*||^2 <= 2 gap} since the objective is 1-strongly convex.
     *
     * @param worstViolation largest {@code |D_p x (k)| / b_p - 1}
     * @param stationarity {@code ||(x - r) + C^T y||_inf}
     * @param scale {@code ||x - r||_inf}
     * @param objective {@code 1/2 ||x - r||^2}
     * @param dual {@code g(y)}
     */
    record Certificate(double worstViolation, double stationarity, double scale, double objective, double dual) {

        static Certificate of(Program p, double[] x, double[] y) {
            int n = p.n();
            // C^T y, column by column: row (p, k) holds DIFFERENCE[p][d] / b_p at column k - d
            double[] cty = new double[n];
            for (int order = 1; order <= 3; order++) {
                double[] c = Program.DIFFERENCE[order - 1];
                for (int k = 0; k < n; k++) {
                    double yk = y[(order - 1) * n + k] / p.bound()[order - 1];
                    for (int d = 0; d < c.length && k - d >= 0; d++) {
                        cty[k - d] += c[d] * yk;
                    }
                }
            }
            double stationarity = 0;
            double scale = 0;
            double objective = 0;
            double squares = 0;
            for (int k = 0; k < n; k++) {
                double e = x[k] - p.r()[k];
                stationarity = Math.max(stationarity, Math.abs(e + cty[k]));
                scale = Math.max(scale, Math.abs(e));
                objective += 0.5 * e * e;
                squares += cty[k] * cty[k];
            }
            double dual = -0.5 * squares;
            for (int order = 1; order <= 3; order++) {
                for (int k = 0; k < n; k++) {
                    double yi = y[(order - 1) * n + k];
                    dual += yi * p.difference(order, p.r(), k) / p.bound()[order - 1] - Math.abs(yi);
                }
            }
            return new Certificate(p.worstViolation(x), stationarity, scale, objective, dual);
        }

        double relativeStationarity() {
            return stationarity / scale;
        }

        /** {@code (objective - g(y)) / objective}. */
        double relativeGap() {
            return (objective - dual) / objective;
        }

        /** The RMS that weak duality guarantees no feasible trajectory beats: {@code sqrt(2 g(y) / n)}. */
        double dualRms(Program p) {
            return Math.sqrt(Math.max(0, 2 * dual / p.n()));
        }
    }

    /**
     * A primal-dual interior-point method with Mehrotra's predictor-corrector steps for the convex
     * quadratic program of a {@link Program} (Mehrotra, SIAM J. Optim. 2, 1992; for quadratic
     * programs Nocedal and Wright, Numerical Optimization, 2nd ed., 2006, §16.6; both from memory).
     * Each row {@code lo_i <= a_i x <= hi_i} (the difference rows scaled to unit length, the history
     * moved into the bounds) gets two slacks and two multipliers; each step solves the normal
     * equations {@code (I + A^T W A) dx = rhs}, banded with three off-diagonals, by EJML's sparse
     * Cholesky factorization, its symbolic analysis done once per program.
     *
     * <p>Why not ADMM in the form of OSQP (Stellato et al., Math. Prog. Comp. 2020), as first
     * planned: on these plans the optimum is at a bound on most ticks, in runs of up to about a
     * hundred ticks, and over such a run the third
     * difference is a triple sum whose conditioning grows like the run length to the sixth power;
     * operator splitting then converges far too slowly. Measured while writing this test on dip-01's
     * lift: after 20000 iterations of ADMM in OSQP's form (rows scaled to unit length, over-relaxation
     * 1.6, rho from 1e-2 to 1e9) the best rho left the jerk bound exceeded by 0.8 % and a dual
     * residual of 16 % of ||x - r||, the others worse; OSQP 1.1.3 itself, with its own scaling, rho
     * adaptation and polishing, still exceeded the jerk bound 1.3 times after 100000 iterations.
     * This method needs 19 to 26 factorizations on the demo's plans.
     */
    static final class InteriorPoint {

        /**
         * The solver stops when the complementarity {@code sum(s lambda)} (the duality gap of a
         * feasible pair) is at most this share of the objective {@code 1/2 ||x - r||^2}. Run on, the
         * normal equations lose positive definiteness in double precision a few iterations later
         * (measured on the demo's plans near 3e-8 to 8e-8); 1e-5 keeps the RMS exact to a few parts
         * in a million.
         */
        static final double GAP = 1e-5;
        /** ... plus this much, in rad^2, for plans the bounds allow (objective near 0). */
        static final double GAP_FLOOR = 1e-14;
        /**
         * ... and the primal residuals are at most this share of each row's bound. The dual residual
         * is not waited for: it settles near 1e-6 to 1e-4 of {@code ||x - r||_inf}, the rounding of
         * the normal equations once some weights reach 1e15 and more, and what it costs is in the
         * duality gap the test checks.
         */
        static final double FEASIBLE = 1e-7;
        static final int ITERATIONS_MAX = 100;
        /** Share of the way to the boundary of the positive orthant taken in each step (common practice). */
        static final double STEP = 0.99;

        static Solution solve(Program p) {
            int n = p.n();
            int m = 3 * n;
            // unit rows a = D_p / |D_p|, bounds beta_p = b_p / |D_p|, history offset h
            double[][] coef = new double[3][];
            double[] beta = new double[m];
            double[] lo = new double[m];
            double[] hi = new double[m];
            for (int f = 0; f < 3; f++) {
                double[] c = Program.DIFFERENCE[f];
                double norm = 0;
                for (double v : c) {
                    norm += v * v;
                }
                norm = Math.sqrt(norm);
                coef[f] = new double[c.length];
                for (int d = 0; d < c.length; d++) {
                    coef[f][d] = c[d] / norm;
                }
                for (int k = 0; k < n; k++) {
                    double h = 0;
                    for (int d = k + 1; d < c.length; d++) {
                        h += coef[f][d] * p.history()[d - k - 1];
                    }
                    int i = f * n + k;
                    beta[i] = p.bound()[f] / norm;
                    lo[i] = -beta[i] - h;
                    hi[i] = beta[i] - h;
                }
            }
            Rows rows = new Rows(coef, n);

            // start at rest at the last fixed sample, not on the plan: a plan the bounds allow is then
            // reached by the iterations instead of being handed back as it came
            double[] x = new double[n];
            Arrays.fill(x, p.history()[0]);
            double[] ax = rows.apply(x);
            double[] su = new double[m];
            double[] sl = new double[m];
            double[] lu = new double[m];
            double[] ll = new double[m];
            for (int i = 0; i < m; i++) {
                // slacks at least a bound's width, multipliers so that each product starts at 1 on
                // the rows scaled to bounds of ±1 (an infeasible start, common practice)
                su[i] = Math.max(hi[i] - ax[i], beta[i]);
                sl[i] = Math.max(ax[i] - lo[i], beta[i]);
                lu[i] = 1 / beta[i];
                ll[i] = 1 / beta[i];
            }
            NormalEquations normal = new NormalEquations(rows, n);
            double[] y = new double[m];
            double[] rd = new double[n];
            double[] ru = new double[m];
            double[] rl = new double[m];
            double[] w = new double[m];
            for (int it = 0; it < ITERATIONS_MAX; it++) {
                for (int i = 0; i < m; i++) {
                    y[i] = lu[i] - ll[i];
                    ru[i] = ax[i] + su[i] - hi[i];
                    rl[i] = -ax[i] + sl[i] + lo[i];
                }
                double[] aty = rows.applyTransposed(y);
                double dual = 0;
                double scale = 0;
                double objective = 0;
                for (int k = 0; k < n; k++) {
                    double e = x[k] - p.r()[k];
                    rd[k] = e + aty[k];
                    dual = Math.max(dual, Math.abs(rd[k]));
                    scale = Math.max(scale, Math.abs(e));
                    objective += 0.5 * e * e;
                }
                double primal = 0;
                double complementarity = 0;
                for (int i = 0; i < m; i++) {
                    primal = Math.max(primal, Math.max(Math.abs(ru[i]), Math.abs(rl[i])) / beta[i]);
                    complementarity += su[i] * lu[i] + sl[i] * ll[i];
                }
                double mu = complementarity / (2 * m);
                if (primal <= FEASIBLE && complementarity <= GAP * objective + GAP_FLOOR) {
                    double[] scaledY = new double[m];
                    for (int i = 0; i < m; i++) {
                        scaledY[i] = y[i] * beta[i];
                    }
                    return new Solution(x, scaledY, it);
                }
                for (int i = 0; i < m; i++) {
                    w[i] = lu[i] / su[i] + ll[i] / sl[i];
                }
                if (!normal.factor(w)) {
                    throw new IllegalStateException(String.format("interior point: the normal equations are not "
                                    + "positive definite in double precision at iteration %d, before the stopping "
                                    + "tolerance (complementarity %.1e of the objective, primal residual %.1e of a bound, "
                                    + "dual residual %.1e of ||x - r||)", it, complementarity / objective, primal,
                            dual / scale));
                }
                // predictor (affine scaling), then corrector with Mehrotra's centring sigma = (mu_aff / mu)^3
                double[] cu = new double[m];
                double[] cl = new double[m];
                for (int i = 0; i < m; i++) {
                    cu[i] = su[i] * lu[i];
                    cl[i] = sl[i] * ll[i];
                }
                Step aff = direction(rows, normal, rd, ru, rl, su, sl, lu, ll, cu, cl);
                double alpha = Math.min(Math.min(boundary(su, aff.dsu), boundary(sl, aff.dsl)),
                        Math.min(boundary(lu, aff.dlu), boundary(ll, aff.dll)));
                double muAff = 0;
                for (int i = 0; i < m; i++) {
                    muAff += (su[i] + alpha * aff.dsu[i]) * (lu[i] + alpha * aff.dlu[i])
                            + (sl[i] + alpha * aff.dsl[i]) * (ll[i] + alpha * aff.dll[i]);
                }
                muAff /= 2 * m;
                double sigma = Math.pow(muAff / mu, 3);
                for (int i = 0; i < m; i++) {
                    cu[i] = su[i] * lu[i] + aff.dsu[i] * aff.dlu[i] - sigma * mu;
                    cl[i] = sl[i] * ll[i] + aff.dsl[i] * aff.dll[i] - sigma * mu;
                }
                Step s = direction(rows, normal, rd, ru, rl, su, sl, lu, ll, cu, cl);
                alpha = STEP * Math.min(Math.min(boundary(su, s.dsu), boundary(sl, s.dsl)),
                        Math.min(boundary(lu, s.dlu), boundary(ll, s.dll)));
                for (int k = 0; k < n; k++) {
                    x[k] += alpha * s.dx[k];
                }
                for (int i = 0; i < m; i++) {
                    su[i] += alpha * s.dsu[i];
                    sl[i] += alpha * s.dsl[i];
                    lu[i] += alpha * s.dlu[i];
                    ll[i] += alpha * s.dll[i];
                }
                ax = rows.apply(x);
            }
            throw new IllegalStateException("interior point: no convergence in " + ITERATIONS_MAX + " iterations");
        }

        record Step(double[] dx, double[] dsu, double[] dsl, double[] dlu, double[] dll) {
        }

        /**
         * The Newton step of the perturbed KKT conditions {@code x - r + A^T (lu - ll) = 0},
         * {@code A x + su = hi}, {@code -A x + sl = -lo}, {@code su lu = cu_target}, {@code sl ll = cl_target},
         * with {@code cu, cl} the complementarity residuals to remove; the slack and multiplier
         * steps are eliminated into the normal equations.
         */
        static Step direction(Rows rows, NormalEquations normal, double[] rd, double[] ru, double[] rl, double[] su,
                              double[] sl, double[] lu, double[] ll, double[] cu, double[] cl) {
            int m = su.length;
            double[] g = new double[m];
            for (int i = 0; i < m; i++) {
                g[i] = (-cu[i] + lu[i] * ru[i]) / su[i] - (-cl[i] + ll[i] * rl[i]) / sl[i];
            }
            double[] atg = rows.applyTransposed(g);
            double[] rhs = new double[rd.length];
            for (int k = 0; k < rd.length; k++) {
                rhs[k] = -rd[k] - atg[k];
            }
            double[] dx = normal.solve(rhs);
            double[] adx = rows.apply(dx);
            double[] dsu = new double[m];
            double[] dsl = new double[m];
            double[] dlu = new double[m];
            double[] dll = new double[m];
            for (int i = 0; i < m; i++) {
                dsu[i] = -ru[i] - adx[i];
                dsl[i] = -rl[i] + adx[i];
                dlu[i] = (-cu[i] - lu[i] * dsu[i]) / su[i];
                dll[i] = (-cl[i] - ll[i] * dsl[i]) / sl[i];
            }
            return new Step(dx, dsu, dsl, dlu, dll);
        }

        /** Largest step in [0, 1] that keeps {@code v + step dv} non-negative. */
        static double boundary(double[] v, double[] dv) {
            double step = 1;
            for (int i = 0; i < v.length; i++) {
                if (dv[i] < 0) {
                    step = Math.min(step, -v[i] / dv[i]);
                }
            }
            return step;
        }
    }

    /** The unit difference rows: row {@code f n + k} holds {@code coef[f][d]} at column {@code k - d}. */
    static final class Rows {
        final double[][] coef;
        final int n;

        Rows(double[][] coef, int n) {
            this.coef = coef;
            this.n = n;
        }

        double[] apply(double[] x) {
            double[] out = new double[3 * n];
            for (int f = 0; f < 3; f++) {
                for (int k = 0; k < n; k++) {
                    double sum = 0;
                    for (int d = 0; d < coef[f].length && k - d >= 0; d++) {
                        sum += coef[f][d] * x[k - d];
                    }
                    out[f * n + k] = sum;
                }
            }
            return out;
        }

        double[] applyTransposed(double[] y) {
            double[] out = new double[n];
            for (int f = 0; f < 3; f++) {
                for (int k = 0; k < n; k++) {
                    double yk = y[f * n + k];
                    for (int d = 0; d < coef[f].length && k - d >= 0; d++) {
                        out[k - d] += coef[f][d] * yk;
                    }
                }
            }
            return out;
        }
    }

    /**
     * {@code I + A^T diag(w) A} in EJML's compressed-column form, upper triangle only (what EJML's
     * Cholesky reads), with the fixed band structure: column j holds rows {@code max(0, j - 3)..j}.
     */
    static final class NormalEquations {
        final Rows rows;
        final int n;
        final DMatrixSparseCSC matrix;
        final LinearSolverSparse<DMatrixSparseCSC, DMatrixRMaj> cholesky =
                LinearSolverFactory_DSCC.cholesky(FillReducing.NONE);
        final DMatrixRMaj b;
        final DMatrixRMaj solution;

        NormalEquations(Rows rows, int n) {
            this.rows = rows;
            this.n = n;
            int nz = 0;
            for (int j = 0; j < n; j++) {
                nz += Math.min(j, 3) + 1;
            }
            matrix = new DMatrixSparseCSC(n, n, nz);
            int at = 0;
            for (int j = 0; j < n; j++) {
                matrix.col_idx[j] = at;
                for (int i = Math.max(0, j - 3); i <= j; i++) {
                    matrix.nz_rows[at++] = i;
                }
            }
            matrix.col_idx[n] = at;
            matrix.nz_length = at;
            matrix.indicesSorted = true;
            b = new DMatrixRMaj(n, 1);
            solution = new DMatrixRMaj(n, 1);
        }

        /** Position of (i, j), {@code j - 3 <= i <= j}, in the value array. */
        int at(int i, int j) {
            return matrix.col_idx[j] + i - Math.max(0, j - 3);
        }

        /** Fills the matrix for weights w and factors it; false when it is not positive definite. */
        boolean factor(double[] w) {
            double[] v = matrix.nz_values;
            Arrays.fill(v, 0, matrix.nz_length, 0);
            for (int j = 0; j < n; j++) {
                v[at(j, j)] = 1;
            }
            for (int f = 0; f < 3; f++) {
                double[] c = rows.coef[f];
                for (int k = 0; k < n; k++) {
                    double wk = w[f * n + k];
                    // row k touches columns k - d; the pair (k - d2, k - d1) with d1 <= d2 is upper
                    for (int d1 = 0; d1 < c.length && k - d1 >= 0; d1++) {
                        for (int d2 = d1; d2 < c.length && k - d2 >= 0; d2++) {
                            v[at(k - d2, k - d1)] += wk * c[d1] * c[d2];
                        }
                    }
                }
            }
            boolean ok = cholesky.setA(matrix);
            cholesky.setStructureLocked(true);
            return ok;
        }

        double[] solve(double[] rhs) {
            System.arraycopy(rhs, 0, b.data, 0, n);
            cholesky.solve(b, solution);
            double[] out = new double[n];
            System.arraycopy(solution.data, 0, out, 0, n);
            for (double v : out) {
                if (!Double.isFinite(v)) {
                    throw new IllegalStateException("interior point: the normal equations gave a non-finite step");
                }
            }
            return out;
        }
    }
}
