package dev.weft.filters;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import org.ejml.data.Complex_F64;
import org.ejml.ops.ComplexMath_F64;
import org.junit.jupiter.api.Test;

class ButterworthLowPassTest {

    @Test
    void coefficientsMatchThePublishedSecondOrderDesign() {
        // butter(2, 0.2) (cutoff 0.2 × Nyquist, i.e. fc = fs/10), the example printed in many DSP texts and
        // the MATLAB / SciPy documentation: b = [0.0675 0.1349 0.0675], a = [1 -1.1430 0.4128] — from
        // memory; recomputed here to 8 digits with SciPy 1.17.1 scipy.signal.butter(2, 0.2).
        ButterworthLowPass f = ButterworthLowPass.of(1, 1000.0, 100.0);
        assertThat(f.b0()).isCloseTo(0.06745527, within(5e-9));
        assertThat(f.b1()).isCloseTo(0.13491055, within(5e-9));
        assertThat(f.b2()).isCloseTo(0.06745527, within(5e-9));
        assertThat(f.a1()).isCloseTo(-1.1429805, within(5e-8));
        assertThat(f.a2()).isCloseTo(0.4128016, within(5e-8));
        // A control-loop case: 10 Hz cutoff at 500 Hz, SciPy 1.17.1 scipy.signal.butter(2, 0.04):
        // b = [0.00362168 0.00724336 0.00362168], a = [1 -1.82269493 0.83718165].
        ButterworthLowPass g = ButterworthLowPass.of(1, 500.0, 10.0);
        assertThat(g.b0()).isCloseTo(0.00362168, within(5e-9));
        assertThat(g.b1()).isCloseTo(0.00724336, within(5e-9));
        assertThat(g.a1()).isCloseTo(-1.82269493, within(5e-9));
        assertThat(g.a2()).isCloseTo(0.83718165, within(5e-9));
    }

    /** H(e^{jω}) = (b0 + b1 z⁻¹ + b2 z⁻²) / (1 + a1 z⁻¹ + a2 z⁻²), evaluated with EJML's complex arithmetic. */
    private static double gainDb(ButterworthLowPass f, double hz) {
        double w = 2 * Math.PI * hz / f.sampleRateHz();
        Complex_F64 z1 = new Complex_F64(Math.cos(-w), Math.sin(-w));
        Complex_F64 z2 = new Complex_F64();
        ComplexMath_F64.multiply(z1, z1, z2);
        Complex_F64 num = new Complex_F64(f.b0() + f.b1() * z1.real + f.b2() * z2.real,
                f.b1() * z1.imaginary + f.b2() * z2.imaginary);
        Complex_F64 den = new Complex_F64(1 + f.a1() * z1.real + f.a2() * z2.real,
                f.a1() * z1.imaginary + f.a2() * z2.imaginary);
        Complex_F64 h = new Complex_F64();
        ComplexMath_F64.divide(num, den, h);
        return 20 * Math.log10(h.getMagnitude());
    }

    @Test
    void hasUnitDcGainAndMinusThreeDecibelsAtTheCutoff() {
        // Analytic properties of the Butterworth design: |H(1)| = 1 and, with the cutoff pre-warped,
        // |H(e^{j2πfc/fs})| = 1/√2 exactly, i.e. 10·log10(1/2) = -3.0103 dB.
        double halfPowerDb = 10 * Math.log10(0.5);
        assertThat(halfPowerDb).isCloseTo(-3.0103, within(1e-4));
        double[][] designs = {{500, 10}, {500, 200}, {1000, 100}, {100, 0.5}, {2000, 999}};
        for (double[] design : designs) {
            ButterworthLowPass f = ButterworthLowPass.of(1, design[0], design[1]);
            double dc = (f.b0() + f.b1() + f.b2()) / (1 + f.a1() + f.a2());
            assertThat(dc).as("DC gain at fs %s fc %s", design[0], design[1]).isCloseTo(1.0, within(1e-15));
            assertThat(gainDb(f, design[1])).as("gain at cutoff, fs %s fc %s", design[0], design[1])
                    .isCloseTo(halfPowerDb, within(1e-9));
            assertThat(gainDb(f, 0.0)).isCloseTo(0.0, within(1e-9));
        }
    }

    @Test
    void dcGainStaysOneForVeryLowCutoffs() {
        // fc/fs down to 2e-5: 1 + a1 + a2 is about 1.6e-8 there, so any rounding in b0 would show.
        for (double fc : new double[] {0.01, 0.05, 0.2, 1.0}) {
            ButterworthLowPass f = ButterworthLowPass.of(1, 500.0, fc);
            double dc = (f.b0() + f.b1() + f.b2()) / (1 + f.a1() + f.a2());
            assertThat(dc).as("DC gain at fc %s", fc).isCloseTo(1.0, within(1e-15));
            double[] x = {1.25};
            f.reset(x);
            for (int n = 0; n < 1000; n++) {
                x[0] = 1.25;
                f.apply(x, x);
            }
            assertThat(x[0]).isEqualTo(1.25);
        }
    }

    @Test
    void realisationAgreesWithThePlainDifferenceEquation() {
        // Plain reference: y[n] = b0·x[n] + b1·x[n−1] + b2·x[n−2] − a1·y[n−1] − a2·y[n−2], at rest at x0.
        for (double fc : new double[] {2.0, 20.0, 150.0}) {
            ButterworthLowPass f = ButterworthLowPass.of(1, 500.0, fc);
            java.util.Random rnd = new java.util.Random(11);
            double x0 = 0.3;
            double x1 = x0;
            double x2 = x0;
            double y1 = x0;
            double y2 = x0;
            f.reset(new double[] {x0});
            double[] v = new double[1];
            for (int n = 0; n < 5000; n++) {
                double x = x0 + rnd.nextGaussian() + Math.sin(n * 0.01);
                double y = f.b0() * x + f.b1() * x1 + f.b2() * x2 - f.a1() * y1 - f.a2() * y2;
                x2 = x1;
                x1 = x;
                y2 = y1;
                y1 = y;
                v[0] = x;
                f.apply(v, v);
                assertThat(v[0]).as("fc %s sample %d", fc, n).isCloseTo(y, within(Tolerances.REFERENCE));
            }
        }
    }

    @Test
    void aSineAtTheCutoffComesOutAtOneOverRootTwo() {
        ButterworthLowPass f = ButterworthLowPass.of(1, 500.0, 10.0);
        double[] x = new double[1];
        double peak = 0;
        for (int n = 0; n < 5000; n++) {
            x[0] = Math.sin(2 * Math.PI * 10.0 * n / 500.0);
            f.apply(x, x);
            if (n >= 4000) {
                peak = Math.max(peak, Math.abs(x[0]));
            }
        }
        // Sampling the peak of a 50-samples-per-period sine misses the true crest by at most 1 - cos(π/50).
        assertThat(peak).isCloseTo(1 / Math.sqrt(2), within(2e-3));
    }

    @Test
    void resetToAValueStartsWithoutATransient() {
        ButterworthLowPass f = ButterworthLowPass.of(2, 500.0, 10.0);
        double[] rest = {0.75, -2.5};
        f.reset(rest);
        double[] out = new double[2];
        for (int n = 0; n < 10_000; n++) {
            assertThat(f.apply(rest, out)).isTrue();
            assertThat(out).containsExactly(0.75, -2.5);
        }
        // A fresh filter (or reset()) rests at its first input.
        ButterworthLowPass g = ButterworthLowPass.of(1, 500.0, 10.0);
        double[] v = {3.0};
        g.apply(v, v);
        assertThat(v[0]).isEqualTo(3.0);
    }

    @Test
    void stepResponseSettlesAtTheStepWithTheButterworthOvershoot() {
        // A second-order Butterworth (damping 1/√2) overshoots a step by exp(-ζπ/√(1 - ζ²)) = exp(-π) = 4.32 %
        // (common practice: standard second-order step-response table); the digital version at fc << fs is close.
        ButterworthLowPass f = ButterworthLowPass.of(1, 10_000.0, 10.0);
        f.reset(new double[] {0});
        double[] x = new double[1];
        double max = 0;
        for (int n = 0; n < 20_000; n++) {
            x[0] = 1.0;
            f.apply(x, x);
            max = Math.max(max, x[0]);
        }
        assertThat(x[0]).isEqualTo(1.0);
        assertThat(max - 1).isCloseTo(Math.exp(-Math.PI), within(1e-3));
    }

    @Test
    void refusesNonFiniteInputWithoutTouchingStateOrOutput() {
        ButterworthLowPass f = ButterworthLowPass.of(2, 500.0, 10.0);
        f.reset(new double[] {1, 1});
        double[] out = {9, 9};
        assertThat(f.apply(new double[] {1, Double.NaN}, out)).isFalse();
        assertThat(out).containsExactly(9, 9);
        assertThat(f.apply(new double[] {1, 1}, out)).isTrue();
        assertThat(out[0]).isCloseTo(1.0, within(1e-12));
        assertThat(out[1]).isCloseTo(1.0, within(1e-12));
    }

    @Test
    void validatesItsConfigurationAndArguments() {
        assertThatThrownBy(() -> ButterworthLowPass.of(1, 500.0, 250.0)).isInstanceOf(IllegalArgumentException.class)
                .hasMessage("butterworth low-pass: cutoffHz must be below the Nyquist frequency 250.0 Hz, got 250.0");
        assertThatThrownBy(() -> ButterworthLowPass.of(1, 500.0, 0.0))
                .hasMessage("butterworth low-pass: cutoffHz must be finite and > 0, got 0.0");
        assertThatThrownBy(() -> ButterworthLowPass.of(1, Double.NaN, 1.0))
                .hasMessage("butterworth low-pass: sampleRateHz must be finite and > 0, got NaN");
        assertThatThrownBy(() -> ButterworthLowPass.of(0, 500.0, 1.0))
                .hasMessage("butterworth low-pass: dimensions must be >= 1, got 0");
        ButterworthLowPass f = ButterworthLowPass.of(3, 500.0, 10.0);
        assertThatThrownBy(() -> f.reset(new double[] {0, Double.POSITIVE_INFINITY, 0}))
                .hasMessage("butterworth low-pass: reset value for joint 1 must be finite, got Infinity");
        assertThatThrownBy(() -> f.apply(new double[3], new double[2]))
                .hasMessage("butterworth low-pass: out must hold at least 3 values, got 2 values");
    }
}
