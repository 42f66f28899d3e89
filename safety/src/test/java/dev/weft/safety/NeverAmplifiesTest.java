package dev.weft.safety;

import static org.assertj.core.api.Assertions.assertThat;

import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * Invariant 8, second half: a target disturbance never produces a larger command disturbance.
 * Holding a pose while the plan carries a wiggle of 0.1, 2 and 10 mrad at 1 to 100 Hz (its velocity
 * and acceleration given exactly, as the blender gives them), at 500 Hz and 1 kHz, the command's
 * peak-to-peak deviation from the hold pose is never larger than the target's; and at 5, 20 and
 * 50 Hz the command has no oscillation at a frequency the wiggle does not have (the DFT of the
 * command over a whole number of the wiggle's periods has less than 5 % of the wiggle's amplitude
 * at any frequency other than the wiggle's and its multiples). Each test runs twice: with the plan's
 * state alone (the soft start, or a loop with a smoother), and with the plan's preview as well (the
 * receding-horizon law an armed loop uses), where the stricter bounds hold everywhere.
 */
class NeverAmplifiesTest {

    /** The gain plot's frequencies, 1 to 100 Hz, 5, 20 and 50 Hz among them. */
    static final double[] FREQ = GainPlot.FREQUENCIES;

    @ParameterizedTest(name = "preview {0}")
    @ValueSource(booleans = {false, true})
    void aWiggleOnTheHoldPoseIsNeverAmplifiedAndAddsNoOtherFrequency(boolean preview) {
        double[] amplitudes = {1e-4, 2e-3, 1e-2};
        double[] frequencies = FREQ;
        java.util.List<Double> gains = new java.util.ArrayList<>();
        java.util.List<Double> others = new java.util.ArrayList<>();
        for (double dt : new double[] {0.002, 0.001}) {
            for (double amplitude : amplitudes) {
                for (double hertz : frequencies) {
                    WiggleResponse r = WiggleResponse.measure(WiggleResponse.liftJoint(), dt, amplitude, hertz, preview);
                    System.out.printf("wiggle" + (preview ? " (preview)" : "") + " %.1f mrad at %.0f Hz, dt %s: gain %.4f, other frequencies %.2e, harmonics %.2e, jerk flagged %.2f%n",
                            amplitude * 1e3, hertz, dt, r.gain, r.otherFrequencies, r.harmonics, r.jerkFlagged);
                    gains.add(r.gain);
                    if (hertz == 5 || hertz == 20 || hertz == 50) {
                        others.add(r.otherFrequencies);
                    }
                }
            }
        }
        // equal is allowed: a feasible wiggle passes unchanged, to within a few 1e-10 rad of its
        // 0.2 mrad peak-to-peak (a relative 2e-6 at 1 Hz), which is tracking, not a gain
        assertThat(gains).allSatisfy(g -> assertThat(g).isLessThanOrEqualTo(1 + 1e-5));
        // at 5, 20 and 50 Hz the largest seen is 2.4 % of the wiggle's amplitude (0.1 mrad at 20 Hz): no
        // oscillation of the limiter's own, the residue of the feed-forward share settling. (Between
        // those frequencies the plot's sweep finds up to 20 %, at 2 mrad and 7 Hz and at 0.1 mrad and
        // 30 Hz, with the gain itself at 0.5 and 0.2: docs/safety.md says so.)
        assertThat(others).hasSize(18).allSatisfy(o -> assertThat(o).isLessThan(0.05));
    }

    /**
     * A dense sweep between the plot's frequencies: 0.1 to 50 mrad, 1 to 60 Hz in steps of about
     * 6 % (rounded to whole half-hertz, so the window holds whole periods), at 500 Hz and 1 kHz: no
     * wiggle comes out larger. Not met yet: between the plot's frequencies the command carries up
     * to 0.86 of the wiggle's amplitude at another frequency (0.1 mrad at 18.5 Hz, a 0.5 Hz beat
     * of the sampled wiggle with the tick), while its peak-to-peak stays below the target's; that
     * bound and the count of such cases hold what was measured, so that a regression fails.
     * Before the feed-forward shares were held (SHARE_HOLD), 0.1 mrad at 18.5 Hz came out 1.57
     * times larger; before the plan's jerk counted against the share, 0.1 mrad at 55.5 Hz came out
     * 65 times larger (its acceleration, fed forward through the rate limit, rectified into a
     * 6.5 mrad drift at the beat).
     */
    @ParameterizedTest(name = "preview {0}")
    @ValueSource(booleans = {false, true})
    void aDenseSweepBetweenThePlotsFrequenciesIsNeverAmplified(boolean preview) {
        double[] amplitudes = {1e-4, 5e-4, 1e-3, 2e-3, 5e-3, 1e-2, 2e-2, 5e-2};
        double worstGain = 0;
        double worstOther = 0;
        int otherAbove = 0;
        int runs = 0;
        for (double dt : new double[] {0.002, 0.001}) {
            for (double amplitude : amplitudes) {
                double last = 0;
                for (double f = 1.0; f <= 60.0; f *= 1.06) {
                    double hertz = Math.round(f * 2) / 2.0;
                    if (hertz == last) {
                        continue;
                    }
                    last = hertz;
                    WiggleResponse r = WiggleResponse.measure(WiggleResponse.liftJoint(), dt, amplitude, hertz, preview);
                    runs++;
                    worstGain = Math.max(worstGain, r.gain);
                    worstOther = Math.max(worstOther, r.otherFrequencies);
                    if (r.gain > 1 + 1e-5 || r.otherFrequencies > 0.05) {
                        otherAbove += r.otherFrequencies > 0.05 ? 1 : 0;
                        System.out.printf("dense sweep: %.1f mrad at %.1f Hz, dt %s: gain %.3f, other frequencies %.3f%n",
                                amplitude * 1e3, hertz, dt, r.gain, r.otherFrequencies);
                    }
                }
            }
        }
        System.out.printf("dense sweep%s: %d runs, worst gain %.6f, worst other-frequency content %.4f, %d runs above 5 %%%n",
                preview ? " (preview)" : "", runs, worstGain, worstOther, otherAbove);
        assertThat(runs).isEqualTo(784);
        // equal is allowed, as above: a feasible wiggle passes unchanged to within tracking error
        assertThat(worstGain).isLessThanOrEqualTo(1 + 1e-5);
        if (preview) {
            // with the preview the command has no frequency of its own anywhere in the sweep
            assertThat(worstOther).isLessThan(0.05);
        } else {
            assertThat(worstOther).isLessThanOrEqualTo(0.9);
            assertThat(otherAbove).isLessThanOrEqualTo(OTHER_ABOVE_MAX);
        }
    }

    /**
     * Runs of the dense sweep whose other-frequency content is above 5 % of the wiggle: measured 9,
     * all at 0.1 and 0.5 mrad between 11 and 30 Hz, with gains of 0.13 to 0.2 except at 18.5 Hz.
     */
    static final int OTHER_ABOVE_MAX = 9;

    @ParameterizedTest(name = "preview {0}")
    @ValueSource(booleans = {false, true})
    void aFeasibleWigglePassesUnchanged(boolean preview) {
        // 0.1 mrad at 5 Hz needs 3.1 rad/s^3 of jerk, well inside 50: the limiter must be transparent (gain 1)
        WiggleResponse r = WiggleResponse.measure(WiggleResponse.liftJoint(), 0.002, 1e-4, 5, preview);
        assertThat(r.largestError).isLessThanOrEqualTo(1e-6);
        assertThat(r.gain).isCloseTo(1.0, org.assertj.core.api.Assertions.within(1e-3));
        assertThat(r.jerkFlagged).isZero();
    }
}
