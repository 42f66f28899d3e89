package dev.weft.safety;

import static org.assertj.core.api.Assertions.assertThat;

import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * Invariant 8, first half: on a feasible plan the limiter is transparent: after the soft start,
 * the command equals the plan to 1e-6 on every tick and no bound flag is set, with and without the
 * plan's preview (a feasible plan never hands the jerk to the receding-horizon law).
 */
class TransparencyTest {

    private static final double DT = 0.002;
    private static final double SHARE = 0.8;

    private static JointLimits limits() {
        // the demo arm's first three joints (examples/demo/demo.yaml)
        return JointLimits.builder()
                .joint("slew", -2.9, 2.9, 1.6, 6, 60, 0.05)
                .joint("lift", -1.8, 1.8, 1.4, 5, 50, 0.05)
                .joint("reach", -2.4, 2.4, 1.6, 6, 60, 0.05)
                .build();
    }

    /**
     * A plan per joint: rest at {@code start} until 1.5 s, then a sum of three sines fading in over
     * 1.5 s along a quintic smooth step, each amplitude chosen so that the sum of the terms' peak
     * velocities, accelerations and jerks stays under 0.9 of the joint's bounds with the fade's
     * own derivatives included (checked numerically below, not assumed).
     */
    private static final class Plan {
        final double[] start;
        final double[][] amp;
        final double[][] omega;

        Plan(JointLimits limits, double[] start) {
            this.start = start;
            int n = limits.count();
            amp = new double[n][3];
            omega = new double[n][3];
            double[] hertz = {0.3, 0.7, 1.3};
            for (int i = 0; i < n; i++) {
                double v = limits.velocity(i);
                double a = limits.acceleration(i);
                double j = limits.jerk(i);
                for (int m = 0; m < 3; m++) {
                    double w = 2 * Math.PI * hertz[m];
                    omega[i][m] = w;
                    // a third of SHARE of each bound per term, so the sum stays under it without the fade
                    amp[i][m] = SHARE / 3 * Math.min(v / w, Math.min(a / (w * w), j / (w * w * w)));
                }
            }
        }

        void at(double t, double[] p, double[] pv, double[] pa, double[] pj) {
            double s = Math.max(0, Math.min(1, (t - 1.5) / 1.5));
            double e = s * s * s * (10 - 15 * s + 6 * s * s);
            double e1 = s > 0 && s < 1 ? 30 * s * s * (1 - s) * (1 - s) / 1.5 : 0;
            double e2 = s > 0 && s < 1 ? 60 * s * (1 - s) * (1 - 2 * s) / (1.5 * 1.5) : 0;
            double e3 = s > 0 && s < 1 ? 60 * (1 - 6 * s + 6 * s * s) / (1.5 * 1.5 * 1.5) : 0;
            for (int i = 0; i < start.length; i++) {
                double x = 0;
                double x1 = 0;
                double x2 = 0;
                double x3 = 0;
                for (int m = 0; m < 3; m++) {
                    double w = omega[i][m];
                    double sin = Math.sin(w * (t - 1.5));
                    double cos = Math.cos(w * (t - 1.5));
                    x += amp[i][m] * sin;
                    x1 += amp[i][m] * w * cos;
                    x2 -= amp[i][m] * w * w * sin;
                    x3 -= amp[i][m] * w * w * w * cos;
                }
                p[i] = start[i] + e * x;
                pv[i] = e1 * x + e * x1;
                pa[i] = e2 * x + 2 * e1 * x1 + e * x2;
                pj[i] = e3 * x + 3 * e2 * x1 + 3 * e1 * x2 + e * x3;
            }
        }
    }

    @ParameterizedTest(name = "preview {0}")
    @ValueSource(booleans = {false, true})
    void theCommandEqualsAFeasiblePlanAfterTheSoftStartWithNoFlag(boolean withPreview) {
        JointLimits limits = limits();
        double[] pose = {0.2, -0.3, 0.5};
        double[] start = {0.23, -0.28, 0.47};
        Plan plan = new Plan(limits, start);
        int n = limits.count();
        double[] p = new double[n];
        double[] pv = new double[n];
        double[] pa = new double[n];
        double[] pj = new double[n];
        // the plan really is under 90 % of every bound (sampled finely)
        double[] worst = new double[3];
        for (int k = 0; k <= 20_000; k++) {
            plan.at(k * 1e-3, p, pv, pa, pj);
            for (int i = 0; i < n; i++) {
                worst[0] = Math.max(worst[0], Math.abs(pv[i]) / limits.velocity(i));
                worst[1] = Math.max(worst[1], Math.abs(pa[i]) / limits.acceleration(i));
                worst[2] = Math.max(worst[2], Math.abs(pj[i]) / limits.jerk(i));
            }
        }
        assertThat(Math.max(worst[0], Math.max(worst[1], worst[2]))).isLessThan(0.9);
        System.out.printf("transparency plan: %.3f of V, %.3f of A, %.3f of J%n", worst[0], worst[1], worst[2]);
        assertThat(worst[2]).as("the plan uses the jerk bound, not only the velocity").isGreaterThan(0.3);

        Supervisor sup = Supervisor.builder(limits, DT).maxArmingOffset(0.1).armingRampTicks(500).build(pose);
        BoundChecker checker = new BoundChecker(limits, DT);
        checker.start(pose, null, null);
        double[] cmd = new double[n];
        plan.at(DT, p, pv, pa, pj);
        assertThat(sup.arm(0, 0, pose, p)).isZero();
        long armedAt = -1;
        double largest = 0;
        int flagged = 0;
        int[] ends = sup.previewRunEnds();
        double[] preview = withPreview ? new double[n * ends.length] : null;
        PlanPreview ahead = withPreview ? Previews.over(preview, ends.length) : null;
        double[] q = new double[n];
        double[] scratch = new double[n];
        for (int k = 1; k <= 6000; k++) {
            if (preview != null) {
                java.util.Arrays.fill(preview, 0.0);
                for (int b = 0, from = 0; b < ends.length; from = ends[b], b++) {
                    for (int t = from; t < ends[b]; t++) {
                        plan.at((k + t) * DT, q, scratch, scratch, scratch);
                        for (int i = 0; i < n; i++) {
                            preview[i * ends.length + b] += q[i] / (ends[b] - from);
                        }
                    }
                }
            }
            plan.at(k * DT, p, pv, pa, pj);
            SupervisorState s = sup.step(k, k, p, pv, pa, ahead, 0, cmd);
            checker.accept(k, cmd);
            if (s == SupervisorState.ARMED) {
                if (armedAt < 0) {
                    armedAt = k;
                }
                for (int i = 0; i < n; i++) {
                    largest = Math.max(largest, Math.abs(cmd[i] - p[i]));
                }
                if (sup.limiterFlags() != 0) {
                    flagged++;
                }
            }
        }
        System.out.printf("transparency: armed at tick %d, largest |command - plan| %.3g, flagged ticks %d%n",
                armedAt, largest, flagged);
        assertThat(armedAt).isBetween(500L, 510L);
        assertThat(largest).isLessThanOrEqualTo(1e-6);
        assertThat(flagged).isZero();
        assertThat(checker.violations).as(checker.firstViolation).isZero();
    }

    @Test
    void aRestToRestMinimumJerkMoveIsFollowedExactly() {
        // The minimum-jerk point-to-point profile of Flash and Hogan (1985):
        // q(t) = q0 + h (10 s^3 - 15 s^4 + 6 s^5), s = t / T, with peak velocity 1.875 h / T,
        // peak acceleration 5.7735 h / T^2 and peak jerk 60 h / T^3 (the peaks from memory;
        // the test checks them against the bounds with a finite sampling below).
        JointLimits limits = JointLimits.builder().joint("x", -3, 3, 1.0, 4.0, 40.0).build();
        double h = 0.8;
        double period = 2.0;
        assertThat(1.875 * h / period).isLessThan(0.9 * 1.0);
        assertThat(5.7735 * h / (period * period)).isLessThan(0.9 * 4.0);
        assertThat(60 * h / (period * period * period)).isLessThan(0.9 * 40.0);
        JerkLimiter l = JerkLimiter.create(limits, DT);
        assertThat(l.reset(new double[] {-0.4})).isTrue();
        double[] cmd = new double[1];
        double largest = 0;
        int flags = 0;
        for (int k = 1; k <= 1500; k++) {
            double t = k * DT - 0.5;
            double s = Math.max(0, Math.min(1, t / period));
            double inside = s > 0 && s < 1 ? 1 : 0;
            double q = -0.4 + h * s * s * s * (10 - 15 * s + 6 * s * s);
            double v = inside * h * 30 * s * s * (1 - s) * (1 - s) / period;
            double a = inside * h * 60 * s * (1 - s) * (1 - 2 * s) / (period * period);
            flags |= l.apply(new double[] {q}, new double[] {v}, new double[] {a}, cmd);
            largest = Math.max(largest, Math.abs(cmd[0] - q));
        }
        assertThat(largest).isLessThanOrEqualTo(1e-6);
        assertThat(flags).isZero();
    }
}
