package dev.weft.examples.demo;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;
import org.junit.jupiter.api.Test;

/** The scripted expert keeps the configured limits, so its recordings are a fair plan for weft. */
class ExpertDemoTest {

    static List<String> episodes() {
        return BuildDemo.names();
    }

    /**
     * Largest |finite difference| of order 1, 2, 3 of {@code p[joint]} sampled every {@code dt}:
     * {@code v = Δq/dt}, {@code a = Δv/dt}, {@code j = Δa/dt}, as the limiter's guarantee defines them.
     */
    static double[] peaks(List<double[]> p, int joint, double dt) {
        double v = 0;
        double a = 0;
        double j = 0;
        for (int n = 3; n < p.size(); n++) {
            double q0 = p.get(n)[joint];
            double q1 = p.get(n - 1)[joint];
            double q2 = p.get(n - 2)[joint];
            double q3 = p.get(n - 3)[joint];
            v = Math.max(v, Math.abs(q0 - q1) / dt);
            a = Math.max(a, Math.abs(q0 - 2 * q1 + q2) / (dt * dt));
            j = Math.max(j, Math.abs(q0 - 3 * q1 + 3 * q2 - q3) / (dt * dt * dt));
        }
        return new double[] {v, a, j};
    }

    static List<double[]> sampled(ExpertScript s, double dt) {
        List<double[]> out = new ArrayList<>();
        int n = (int) Math.ceil(s.duration() / dt) + 1;
        for (int i = -3; i <= n; i++) {
            double[] q = new double[DipCell.D];
            s.command(i * dt, q);
            out.add(q);
        }
        return out;
    }

    @ParameterizedTest
    @MethodSource("episodes")
    void theExpertStaysWithinItsShareOfEveryBoundAtTheControlPeriod(String name) {
        List<double[]> p = sampled(BuildDemo.script(name), DipCell.CONTROL_PERIOD);
        for (int k = 0; k < DipCell.D; k++) {
            DipCell.Joint joint = DipCell.JOINTS.get(k);
            double[] peak = peaks(p, k, DipCell.CONTROL_PERIOD);
            double share = DipCell.EXPERT_SHARE * (1 + 1e-6);
            assertThat(peak[0]).as("%s velocity", joint.name()).isLessThanOrEqualTo(share * joint.velocity());
            assertThat(peak[1]).as("%s acceleration", joint.name()).isLessThanOrEqualTo(share * joint.acceleration());
            assertThat(peak[2]).as("%s jerk", joint.name()).isLessThanOrEqualTo(share * joint.jerk());
            for (double[] q : p) {
                assertThat(q[k]).as("%s position", joint.name()).isBetween(joint.lower(), joint.upper());
            }
        }
    }

    @ParameterizedTest
    @MethodSource("episodes")
    void theShippedActionColumnsKeepEveryBoundAtTheSamplePeriod(String name) throws Exception {
        // the recorded actions, rounded to six decimals, as a dry run reads them (the dropout's gap
        // in the fault episode is skipped: differences are taken only across uniform samples)
        Episode e = RecordingCsv.read(Path.of("..").resolve(BuildDemo.DEMO).resolve(BuildDemo.RECORDINGS)
                .resolve(name + ".csv"));
        double dt = DipCell.SAMPLE_PERIOD;
        for (int k = 0; k < DipCell.D; k++) {
            DipCell.Joint joint = DipCell.JOINTS.get(k);
            List<double[]> run = new ArrayList<>();
            double[] worst = new double[3];
            for (int i = 0; i < e.length(); i++) {
                if (i > 0 && Math.abs(e.time(i) - e.time(i - 1) - dt) > 1e-9) {
                    merge(worst, peaks(run, k, dt));
                    run.clear();
                }
                double[] a = new double[DipCell.D];
                for (int m = 0; m < DipCell.D; m++) {
                    a[m] = e.a(i, m);
                }
                run.add(a);
                assertThat(a[k]).as("%s position at %s s", joint.name(), e.time(i)).isBetween(joint.lower(), joint.upper());
            }
            merge(worst, peaks(run, k, dt));
            assertThat(worst[0]).as("%s velocity", joint.name()).isLessThanOrEqualTo(joint.velocity());
            assertThat(worst[1]).as("%s acceleration", joint.name()).isLessThanOrEqualTo(joint.acceleration());
            assertThat(worst[2]).as("%s jerk", joint.name()).isLessThanOrEqualTo(joint.jerk());
        }
    }

    @Test
    void theExpertUsesMostOfItsShareSoTheLimitCheckIsNotIdle() {
        // a script far below its bounds would pass the checks above trivially; the jerk bound
        // decides the short moves, so some joint comes close to its share of it
        double best = 0;
        for (String name : episodes()) {
            List<double[]> p = sampled(BuildDemo.script(name), DipCell.CONTROL_PERIOD);
            for (int k = 0; k < DipCell.D; k++) {
                best = Math.max(best, peaks(p, k, DipCell.CONTROL_PERIOD)[2] / (DipCell.EXPERT_SHARE * DipCell.JOINTS.get(k).jerk()));
            }
        }
        assertThat(best).isGreaterThan(0.9);
    }

    @Test
    void theSegmentPeaksAreTheMinimumJerkConstants() {
        // Minimum-jerk rest-to-rest move (Flash and Hogan 1985): peak speed 15/8·Δ/T, peak
        // acceleration 10/√3·Δ/T², peak jerk 60·Δ/T³ (from memory; recomputed here by finite
        // differences of the script at a fine step, 1e-4 s)
        double[] p0 = DipCell.HOME.clone();
        double[] p1 = DipCell.HOME.clone();
        double delta = 0.9;
        p1[0] += delta;
        ExpertScript s = ExpertScript.through(List.of(p0, p1), List.of(0.0, 0.0));
        double t = s.duration();
        double h = 1e-4;
        List<double[]> p = new ArrayList<>();
        for (int i = -3; i * h <= t + 3 * h; i++) {
            double[] q = new double[DipCell.D];
            s.command(i * h, q);
            p.add(q);
        }
        double[] peak = peaks(p, 0, h);
        assertThat(peak[0]).isCloseTo(15.0 / 8.0 * delta / t, within(1e-3 * delta / t));
        assertThat(peak[1]).isCloseTo(10.0 / Math.sqrt(3.0) * delta / (t * t), within(1e-2 * delta / (t * t)));
        assertThat(peak[2]).isCloseTo(60.0 * delta / (t * t * t), within(0.5 * delta / (t * t * t)));
        // and the move time is the shortest the expert's share of the slew's bounds admits, on the grid
        DipCell.Joint slew = DipCell.JOINTS.get(0);
        double shortest = Math.max(15.0 / 8.0 * delta / (DipCell.EXPERT_SHARE * slew.velocity()),
                Math.max(Math.sqrt(10.0 / Math.sqrt(3.0) * delta / (DipCell.EXPERT_SHARE * slew.acceleration())),
                        Math.cbrt(60.0 * delta / (DipCell.EXPERT_SHARE * slew.jerk()))));
        assertThat(t).isBetween(shortest, shortest + DipCell.SAMPLE_PERIOD);
    }

    private static void merge(double[] worst, double[] peak) {
        for (int i = 0; i < 3; i++) {
            worst[i] = Math.max(worst[i], peak[i]);
        }
    }
}
