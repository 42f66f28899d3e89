package dev.weft.filters;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import org.junit.jupiter.api.Test;

/**
 * One Euro filter (Casiez, Roussel and Vogel, CHI 2012). The paper's definitions: α = 1/(1 + τ/Te),
 * τ = 1/(2π·fc); the speed is low-passed at the derivative cutoff; fc = fc_min + β·|dx̂|.
 */
class OneEuroFilterTest {

    private static final double RATE = 100.0;

    @Test
    void cutoffRisesWithSpeedAsThePaperDefinesHandComputed() {
        // fc_min = 1 Hz, β = 0.5, derivative cutoff 1 Hz (the value the paper recommends), 100 Hz.
        // Te = 0.01 s. α(1 Hz) = 1/(1 + (1/(2π))/0.01) = 0.0628319/1.0628319 = 0.05911740.
        // Inputs 0, 1, 1.5, 1.5, 1.5, by hand:
        //  x=0: first sample passes, x̂ = 0, dx̂ = 0, fc = 1.
        //  x=1: dx = (1-0)/0.01 = 100; dx̂ = 0 + 0.0591174·100 = 5.911740; fc = 1 + 0.5·5.911740 = 3.955870;
        //       α(3.955870) = 0.2485552/1.2485552 = 0.1990739; x̂ = 0.1990739.
        //  x=1.5: dx = 50; dx̂ = 5.911740 + 0.0591174·(50 - 5.911740) = 8.518123; fc = 5.259061;
        //       α = 0.3304389/1.3304389 = 0.2483670; x̂ = 0.1990739 + 0.2483670·(1.5 - 0.1990739) = 0.5221810.
        //  x=1.5: dx = 0; dx̂ = 8.518123·(1 - 0.0591174) = 8.014554; fc = 5.007277; x̂ = 0.7561945.
        //  x=1.5: dx = 0; dx̂ = 7.540754; fc = 4.770377; x̂ = 0.9277238.
        OneEuroFilter f = OneEuroFilter.of(1, RATE, 1.0, 0.5, 1.0);
        double[] inputs = {0, 1, 1.5, 1.5, 1.5};
        double[] speed = {0, 5.911740, 8.518123, 8.014554, 7.540754};
        double[] cutoff = {1, 3.955870, 5.259061, 5.007277, 4.770377};
        double[] filtered = {0, 0.1990739, 0.5221810, 0.7561945, 0.9277238};
        double[] out = new double[1];
        for (int i = 0; i < inputs.length; i++) {
            assertThat(f.apply(new double[] {inputs[i]}, out)).isTrue();
            assertThat(f.speed(0)).as("dx̂ at sample %d", i).isCloseTo(speed[i], within(5e-6));
            assertThat(f.cutoffHz(0)).as("fc at sample %d", i).isCloseTo(cutoff[i], within(5e-6));
            assertThat(f.cutoffHz(0)).isCloseTo(1.0 + 0.5 * Math.abs(f.speed(0)), within(1e-12));
            assertThat(out[0]).as("x̂ at sample %d", i).isCloseTo(filtered[i], within(5e-7));
        }
    }

    @Test
    void withZeroBetaItIsTheFirstOrderLowPassAtTheMinimumCutoff() {
        // β = 0: exponential smoothing with constant α, whose step response is 1 - (1-α)^n (textbook).
        OneEuroFilter f = OneEuroFilter.of(1, RATE, 2.0, 0.0, 1.0);
        double alpha = 1.0 / (1.0 + (1.0 / (2 * Math.PI * 2.0)) * RATE);
        f.reset(new double[] {0});
        double[] x = new double[1];
        for (int n = 1; n <= 200; n++) {
            x[0] = 1.0;
            f.apply(x, x);
            assertThat(x[0]).isCloseTo(1 - Math.pow(1 - alpha, n), within(1e-12));
            assertThat(f.cutoffHz(0)).isEqualTo(2.0);
        }
    }

    @Test
    void lagsLessOnAFastRampByTheAmountTheCutoffFormulaPredictsAndRestsAtMinimumCutoff() {
        // On a ramp of speed v the raw speed is exactly v, so dx̂ → v and fc → fc_min + β·v. A first-order
        // smoother x̂ += α(x − x̂) with α = 1/(1 + τ/Te) trails a ramp by v·Te·(1−α)/α = v·τ = v/(2π·fc)
        // (worked out by hand from the recursion). v = 2/s, fc_min = 1 Hz: β = 0 trails by 2/(2π) = 0.3183099,
        // β = 1 raises fc to 3 Hz and trails by 2/(6π) = 0.1061033.
        OneEuroFilter adaptive = OneEuroFilter.of(1, RATE, 1.0, 1.0, 1.0);
        OneEuroFilter plain = OneEuroFilter.of(1, RATE, 1.0, 0.0, 1.0);
        double[] a = new double[1];
        double[] p = new double[1];
        double x = 0;
        for (int n = 0; n < 600; n++) {
            x = 2.0 * n / RATE;
            adaptive.apply(new double[] {x}, a);
            plain.apply(new double[] {x}, p);
        }
        assertThat(adaptive.cutoffHz(0)).isCloseTo(3.0, within(1e-9));
        assertThat(x - a[0]).isCloseTo(0.1061033, within(1e-6));
        assertThat(x - p[0]).isCloseTo(0.3183099, within(1e-6));
        for (int n = 0; n < 3000; n++) {
            adaptive.apply(new double[] {x}, a);
        }
        assertThat(a[0]).isCloseTo(x, within(1e-9));
        assertThat(adaptive.cutoffHz(0)).isCloseTo(1.0, within(1e-9));
    }

    @Test
    void validatesItsParameters() {
        assertThatThrownBy(() -> OneEuroFilter.of(1, RATE, 0.0, 0.1, 1.0)).isInstanceOf(IllegalArgumentException.class)
                .hasMessage("one euro filter: minCutoffHz must be finite and > 0, got 0.0");
        assertThatThrownBy(() -> OneEuroFilter.of(1, RATE, 1.0, -0.1, 1.0))
                .hasMessage("one euro filter: beta must be finite and >= 0, got -0.1");
        assertThatThrownBy(() -> OneEuroFilter.of(1, RATE, 1.0, 0.1, Double.NaN))
                .hasMessage("one euro filter: derivativeCutoffHz must be finite and > 0, got NaN");
        assertThatThrownBy(() -> OneEuroFilter.of(1, -5, 1.0, 0.1, 1.0))
                .hasMessage("one euro filter: sampleRateHz must be finite and > 0, got -5.0");
    }
}
