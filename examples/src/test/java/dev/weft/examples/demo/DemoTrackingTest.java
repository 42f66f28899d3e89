package dev.weft.examples.demo;

import static org.assertj.core.api.Assertions.assertThat;

import dev.weft.runtime.ConfiguredRun;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.dryrun.DryRun;
import dev.weft.runtime.dryrun.DryRunTrace;
import dev.weft.runtime.dryrun.GateThresholds;
import dev.weft.runtime.recording.Recording;
import dev.weft.runtime.recording.Recordings;
import dev.weft.safety.JerkLimiter;
import dev.weft.safety.SupervisorState;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * Motion quality on the shipped demo: how closely the limiter follows the blended plan on the clean
 * episodes, how often it is at its jerk bound, and that the blended plan itself does not step where a
 * chunk enters or leaves the ensemble.
 *
 * <p>Measured with the receding-horizon law (per episode, armed ticks): RMS of command minus
 * blended plan 0.56 to 12.0 mrad (slew 2.4 to 3.3, lift 4.0 to 7.2, twist 4.0 to 12.0, the other
 * three 0.56 to 1.91), and the jerk bound flagged on 7.1 to 8.6 % of armed joint-ticks. The law
 * before it, which saw the plan one tick at a time, reached 9 to 39 mrad (slew 24 to 26, lift 30 to
 * 39, twist 31 to 38) with the jerk bound on about 2 %; the first release 30 to 55 mrad and 78 %.
 * The jerk aim of 10 % is met; the RMS aim of 5 mrad is met on slew and on the three middle joints,
 * not on lift (three episodes) and twist (two): where the plan asks for more acceleration than the
 * joint has (twist on dip-03 starts a move at 19 rad/s^2 against a bound of 10) the command falls
 * behind, and only a plan known before its chunk arrives could start earlier. The RMS bound below
 * holds what was measured, so that a regression fails.
 */
class DemoTrackingTest {

    static final Path CONFIG = DemoDryRunTest.CONFIG;
    /** RMS(command - blended plan) over armed ticks, rad, every joint (measured up to 0.0120). */
    static final double RMS_MAX = 0.015;
    /** Share of armed joint-ticks with the jerk bound flagged: the aim, 10 % (measured up to 0.086). */
    static final double JERK_SHARE_MAX = 0.10;

    static WeftConfig config;

    @TempDir
    static Path reports;

    @BeforeAll
    static void load() throws Exception {
        config = WeftConfig.parse(Files.readString(CONFIG), CONFIG.getParent(), CONFIG.toString());
    }

    /** The clean episodes: the fault episode's plan carries its sensor glitch, which is not to be followed. */
    static Iterable<String> episodes() {
        return BuildDemo.names().stream().filter(n -> !n.equals(BuildDemo.FAULT)).toList();
    }

    static DryRunTrace trace(WeftConfig c, String name) throws Exception {
        return trace(c, name, reports);
    }

    /** Dry-runs one demo episode under {@code c}, writing its report below {@code folder}. */
    static DryRunTrace trace(WeftConfig c, String name, Path folder) throws Exception {
        Recording rec = Recordings.read(CONFIG.getParent().resolve(BuildDemo.RECORDINGS).resolve(name + ".csv"),
                c.recordingSpec().orElseThrow());
        GateThresholds gates = GateThresholds.of(c.gates());
        return DryRun.run(ConfiguredRun.of(c), rec, new DryRun.Options(folder.resolve(name + "-" + c.hashCode()), name,
                false, false, 1, name.equals(BuildDemo.FAULT) ? gates.withStops(1, -1) : gates, null)).trace();
    }

    @ParameterizedTest
    @MethodSource("episodes")
    void theCommandFollowsTheBlendedPlanCloselyAndRarelyAtTheJerkBound(String name) throws Exception {
        DryRunTrace t = trace(config, name);
        int armed = SupervisorState.ARMED.ordinal();
        long jointTicks = 0;
        long jerkFlagged = 0;
        java.util.Map<String, Double> rmsByJoint = new java.util.LinkedHashMap<>();
        for (DryRunTrace.JointTrace j : t.joints()) {
            double sum = 0;
            int n = 0;
            for (int k = 0; k < t.states().length; k++) {
                if (t.states()[k] != armed || Double.isNaN(j.target()[k])) {
                    continue;
                }
                double e = j.command()[k] - j.target()[k];
                sum += e * e;
                n++;
                jointTicks++;
                if ((j.limiterFlags()[k] & JerkLimiter.JERK) != 0) {
                    jerkFlagged++;
                }
            }
            assertThat(n).as("%s %s armed ticks", name, j.name()).isGreaterThan(500);
            double rms = Math.sqrt(sum / n);
            System.out.printf("demo tracking %s %s: RMS(command - plan) %.3f mrad over %d armed ticks%n",
                    name, j.name(), rms * 1e3, n);
            rmsByJoint.put(j.name(), rms);
        }
        double share = jerkFlagged / (double) jointTicks;
        System.out.printf("demo tracking %s: jerk bound flagged on %.1f %% of armed joint-ticks%n", name, 100 * share);
        assertThat(rmsByJoint).as("%s RMS(command - blended plan) per joint, rad", name)
                .allSatisfy((joint, rms) -> assertThat(rms).as(joint).isLessThanOrEqualTo(RMS_MAX));
        assertThat(share).as("%s share of armed joint-ticks at the jerk bound", name).isLessThanOrEqualTo(JERK_SHARE_MAX);
    }

    /** Largest |finite-difference velocity of the blended target| over the bound, over joints and planned ticks. */
    static double planSpeedShare(WeftConfig c, DryRunTrace t) {
        double dt = c.timing().controlPeriod();
        double worst = 0;
        for (int i = 0; i < t.joints().size(); i++) {
            double[] target = t.joints().get(i).target();
            double bound = c.robot().joints().get(i).velocity();
            for (int k = 1; k < target.length; k++) {
                if (Double.isNaN(target[k]) || Double.isNaN(target[k - 1])) {
                    continue;
                }
                worst = Math.max(worst, Math.abs(target[k] - target[k - 1]) / dt / bound);
            }
        }
        return worst;
    }

    @Test
    void theBlendedPlanDoesNotStepWhereAChunkEntersOrLeaves() throws Exception {
        // With the tapered weights (the default) the blended target's finite-difference velocity stays
        // inside every joint's velocity bound on the clean episodes: the chunks themselves move at the
        // expert's pace, inside the bounds.
        for (String name : BuildDemo.names()) {
            if (name.equals(BuildDemo.FAULT)) {
                continue;
            }
            double share = planSpeedShare(config, trace(config, name));
            System.out.printf("demo plan %s: largest plan speed %.2f of the bound (tapered weights)%n", name, share);
            assertThat(share).as(name).isLessThanOrEqualTo(1.0);
        }
        // The same run with the exact published weights steps where the oldest chunk ends: the
        // check above can fail, and does for those weights.
        String text = Files.readString(CONFIG).replace("ensemble: {weight_rate: 0.1, favour: oldest}",
                "ensemble: {weight_rate: 0.1, favour: oldest, weights: published}");
        assertThat(text).contains("weights: published");
        WeftConfig published = WeftConfig.parse(text, CONFIG.getParent(), CONFIG.toString());
        double share = planSpeedShare(published, trace(published, BuildDemo.names().get(0)));
        System.out.printf("demo plan %s: largest plan speed %.2f of the bound (published weights)%n",
                BuildDemo.names().get(0), share);
        assertThat(share).isGreaterThan(1.0);
    }
}
