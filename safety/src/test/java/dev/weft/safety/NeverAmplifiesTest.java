package dev.weft.safety;

import static org.assertj.core.api.Assertions.assertThat;

import org.junit.jupiter.api.Test;

/**
 * Invariant 8, second half: a target disturbance never produces a larger command disturbance.
 * Holding a pose while the plan carries a wiggle of 0.1, 2 and 10 mrad at 1 to 100 Hz (its velocity
 * and acceleration given exactly, as the blender gives them), at 500 Hz and 1 kHz, the command's
 * peak-to-peak deviation from the hold pose is never larger than the target's; and at 5, 20 and
 * 50 Hz the command has no oscillation at a frequency the wiggle does not have (the DFT of the
 * command over a whole number of the wiggle's periods has less than 5 % of the wiggle's amplitude
 * at any frequency other than the wiggle's and its multiples).
 */
class NeverAmplifiesTest {

    /** The gain plot's frequencies, 1 to 100 Hz, 5, 20 and 50 Hz among them. */
    static final double[] FREQ = GainPlot.FREQUENCIES;

    @Test
    void aWiggleOnTheHoldPoseIsNeverAmplifiedAndAddsNoOtherFrequency() {
        double[] amplitudes = {1e-4, 2e-3, 1e-2};
        double[] frequencies = FREQ;
        java.util.List<Double> gains = new java.util.ArrayList<>();
        java.util.List<Double> others = new java.util.ArrayList<>();
        for (double dt : new double[] {0.002, 0.001}) {
            for (double amplitude : amplitudes) {
                for (double hertz : frequencies) {
                    WiggleResponse r = WiggleResponse.measure(WiggleResponse.liftJoint(), dt, amplitude, hertz);
                    System.out.printf("wiggle %.1f mrad at %.0f Hz, dt %s: gain %.4f, other frequencies %.2e, harmonics %.2e, jerk flagged %.2f%n",
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

    @Test
    void aFeasibleWigglePassesUnchanged() {
        // 0.1 mrad at 5 Hz needs 3.1 rad/s^3 of jerk, well inside 50: the limiter must be transparent (gain 1)
        WiggleResponse r = WiggleResponse.measure(WiggleResponse.liftJoint(), 0.002, 1e-4, 5);
        assertThat(r.largestError).isLessThanOrEqualTo(1e-6);
        assertThat(r.gain).isCloseTo(1.0, org.assertj.core.api.Assertions.within(1e-3));
        assertThat(r.jerkFlagged).isZero();
    }
}
