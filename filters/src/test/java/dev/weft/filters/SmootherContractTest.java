package dev.weft.filters;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import java.util.Random;
import java.util.function.IntFunction;
import java.util.stream.Stream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/** The {@link Smoother} contract, run over every implementation. */
class SmootherContractTest {

    static Stream<Arguments> smoothers() {
        return Stream.of(
                Arguments.of("butterworth", (IntFunction<Smoother>) d -> ButterworthLowPass.of(d, 500.0, 20.0)),
                Arguments.of("one euro", (IntFunction<Smoother>) d -> OneEuroFilter.of(d, 500.0, 1.0, 0.3, 1.0)));
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("smoothers")
    void inPlaceGivesTheSameResultAsSeparateArrays(String name, IntFunction<Smoother> factory) {
        Smoother a = factory.apply(3);
        Smoother b = factory.apply(3);
        Random rnd = new Random(7);
        double[] out = new double[3];
        for (int n = 0; n < 500; n++) {
            double[] in = {rnd.nextGaussian(), rnd.nextGaussian(), 5 + rnd.nextGaussian()};
            double[] same = in.clone();
            a.apply(in, out);
            b.apply(same, same);
            assertThat(same).containsExactly(out);
        }
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("smoothers")
    void aFreshCompanionBehavesAsANewSmootherOfTheSameKind(String name, IntFunction<Smoother> factory) {
        Smoother used = factory.apply(2);
        Random rnd = new Random(11);
        double[] out = new double[2];
        for (int n = 0; n < 100; n++) {
            used.apply(new double[] {rnd.nextGaussian(), rnd.nextGaussian()}, out);
        }
        Smoother companion = used.fresh();
        Smoother fresh = factory.apply(2);
        assertThat(companion).isNotSameAs(used).hasSameClassAs(used);
        assertThat(companion.dimensions()).isEqualTo(2);
        double[] a = new double[2];
        double[] b = new double[2];
        for (int n = 0; n < 300; n++) {
            double[] in = {rnd.nextGaussian(), 3 + rnd.nextGaussian()};
            companion.apply(in, a);
            fresh.apply(in, b);
            assertThat(a).containsExactly(b);
        }
    }

    @org.junit.jupiter.api.Test
    void aButterworthCompanionGivesTheDerivativeOfTheSmoothedSignal() {
        // A linear time-invariant filter commutes with differentiation: filtering the plan's velocity
        // gives the velocity of the filtered plan. Checked on the finite differences of a sampled
        // cubic, where the difference of the filtered samples equals the filtered differences exactly
        // up to rounding.
        ButterworthLowPass position = ButterworthLowPass.of(1, 500.0, 20.0);
        Smoother velocity = position.fresh();
        double dt = 1.0 / 500.0;
        double[] p = new double[1];
        double[] v = new double[1];
        double previous = Double.NaN;
        double worst = 0;
        for (int n = 0; n < 2000; n++) {
            double t = n * dt;
            double x = 0.2 + 0.5 * t - 0.3 * t * t + 0.1 * t * t * t;
            double xPrevious = n == 0 ? x : 0.2 + 0.5 * (t - dt) - 0.3 * (t - dt) * (t - dt) + 0.1 * Math.pow(t - dt, 3);
            p[0] = x;
            v[0] = (x - xPrevious) / dt;
            position.apply(p, p);
            velocity.apply(v, v);
            if (n > 0) {
                worst = Math.max(worst, Math.abs((p[0] - previous) / dt - v[0]));
            }
            previous = p[0];
        }
        assertThat(worst).isLessThan(1e-9);
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("smoothers")
    void jointsAreFilteredIndependently(String name, IntFunction<Smoother> factory) {
        Smoother both = factory.apply(2);
        Smoother only = factory.apply(1);
        Random rnd = new Random(3);
        double[] out2 = new double[2];
        double[] out1 = new double[1];
        for (int n = 0; n < 300; n++) {
            double x = rnd.nextGaussian();
            both.apply(new double[] {x, 1000 * rnd.nextGaussian()}, out2);
            only.apply(new double[] {x}, out1);
            assertThat(out2[0]).isEqualTo(out1[0]);
        }
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("smoothers")
    void resetToAValueHoldsThatValueAndResetForgets(String name, IntFunction<Smoother> factory) {
        Smoother s = factory.apply(2);
        double[] out = new double[2];
        s.apply(new double[] {10, 10}, out);
        s.apply(new double[] {-10, 30}, out);
        s.reset(new double[] {1.5, -4});
        s.apply(new double[] {1.5, -4}, out);
        assertThat(out[0]).isCloseTo(1.5, within(1e-12));
        assertThat(out[1]).isCloseTo(-4, within(1e-12));
        s.reset();
        s.apply(new double[] {8, 9}, out);
        assertThat(out[0]).isCloseTo(8, within(1e-12));
        assertThat(out[1]).isCloseTo(9, within(1e-12));
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("smoothers")
    void nonFiniteInputIsRefusedAndDoesNotPoisonTheState(String name, IntFunction<Smoother> factory) {
        Smoother s = factory.apply(2);
        s.reset(new double[] {2, 2});
        double[] out = {-1, -1};
        assertThat(s.apply(new double[] {Double.NaN, 2}, out)).isFalse();
        assertThat(s.apply(new double[] {2, Double.NEGATIVE_INFINITY}, out)).isFalse();
        assertThat(out).containsExactly(-1, -1);
        assertThat(s.apply(new double[] {2, 2}, out)).isTrue();
        assertThat(out[0]).isCloseTo(2, within(1e-12));
        assertThat(out[1]).isCloseTo(2, within(1e-12));
        assertThat(s.dimensions()).isEqualTo(2);
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("smoothers")
    void shortArraysAreProgrammingErrorsWithPreciseMessages(String name, IntFunction<Smoother> factory) {
        Smoother s = factory.apply(2);
        assertThatThrownBy(() -> s.apply(new double[1], new double[2])).isInstanceOf(IllegalArgumentException.class)
                .hasMessageEndingWith(": in must hold at least 2 values, got 1 values");
        assertThatThrownBy(() -> s.apply(new double[2], null)).hasMessageEndingWith(": out must hold at least 2 values, got null");
        assertThatThrownBy(() -> s.reset(new double[] {0, Double.NaN}))
                .hasMessageEndingWith(": reset value for joint 1 must be finite, got NaN");
    }
}
