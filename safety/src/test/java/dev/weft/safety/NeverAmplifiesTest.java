package dev.weft.safety;

import static org.assertj.core.api.Assertions.assertThat;

import org.junit.jupiter.api.Test;

/**
 * Invariant 8, second half: a target disturbance never produces a larger command disturbance.
 * Holding a pose while the plan carries a wiggle of 0.1, 2 and 10 mrad at 5, 20 and 50 Hz (its
 * velocity and acceleration given exactly, as the blender gives them), the command's
 * peak-to-peak deviation from the hold pose is never larger than the target's, and the command
 * has no oscillation at a frequency the wiggle does not have.
 */
class NeverAmplifiesTest {

    @Test
    void aWiggleOnTheHoldPoseIsNeverAmplifiedAndAddsNoOtherFrequency() {
        double[] amplitudes = {1e-4, 2e-3, 1e-2};
        double[] frequencies = {5, 20, 50};
        for (double dt : new double[] {0.002, 0.001}) {
            for (double amplitude : amplitudes) {
                for (double hertz : frequencies) {
                    WiggleResponse r = WiggleResponse.measure(WiggleResponse.liftJoint(), dt, amplitude, hertz);
                    System.out.printf("wiggle %.1f mrad at %.0f Hz, dt %s: gain %.4f, other frequencies %.2e, jerk flagged %.2f%n",
                            amplitude * 1e3, hertz, dt, r.gain, r.otherFrequencies, r.jerkFlagged);
                    String at = String.format("%.1f mrad at %.0f Hz, dt %s", amplitude * 1e3, hertz, dt);
                    // equal is allowed (a feasible wiggle passes unchanged); the rounding of doubles is not a gain
                    assertThat(r.gain).as("gain, %s", at).isLessThanOrEqualTo(1 + 1e-9);
                    assertThat(r.otherFrequencies).as("other frequencies, %s", at).isLessThan(0.01);
                }
            }
        }
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
