package dev.weft.filters;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import java.util.Arrays;
import java.util.Random;
import java.util.stream.Stream;
import org.apache.commons.math3.analysis.polynomials.PolynomialFunction;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/** The taper of {@link TemporalEnsembleBlender}: weights, ramp lengths, and no step at entry or exit. */
class EnsembleTaperTest {

    private static double[] constant(int steps, double value) {
        double[] c = new double[steps];
        Arrays.fill(c, value);
        return c;
    }

    @Test
    void quinticSmoothStepAndItsDerivativesAreThoseOfThePolynomial() {
        // 6x⁵ − 15x⁴ + 10x³ (Perlin 2002, "Improving Noise"), differentiated by Apache Commons Math
        // (PolynomialFunction, a general-purpose reference library from Maven Central).
        PolynomialFunction step = new PolynomialFunction(new double[] {0, 0, 0, 10, -15, 6});
        PolynomialFunction first = step.polynomialDerivative();
        PolynomialFunction second = first.polynomialDerivative();
        for (int i = 0; i <= 64; i++) {
            double x = i / 64.0;
            assertThat(QuinticSmoothStep.value(x)).isCloseTo(step.value(x), within(1e-15));
            assertThat(QuinticSmoothStep.firstDerivative(x)).isCloseTo(first.value(x), within(1e-13));
            assertThat(QuinticSmoothStep.secondDerivative(x)).isCloseTo(second.value(x), within(1e-13));
        }
        assertThat(QuinticSmoothStep.value(-0.5)).isZero();
        assertThat(QuinticSmoothStep.value(1.5)).isEqualTo(1.0);
        assertThat(QuinticSmoothStep.firstDerivative(1.5)).isZero();
        assertThat(QuinticSmoothStep.secondDerivative(-0.5)).isZero();
    }

    @Test
    void aNewChunkRampsInAlongTheSmoothStepWorkedExample() {
        // Plain mean (m = 0), r = 1, taper 4 steps = 4 ticks. Chunk A (value 0, origin 0, 40 steps) is at
        // full weight from tick 3 on; chunk B (value 1) arrives at tick 10, so its weight is S((t − 9)/4):
        // by hand S(1/4) = 53/512, S(1/2) = 1/2, S(3/4) = 459/512, then 1. The plan is τ/(1 + τ):
        //   tick 10: (53/512)/(565/512) = 53/565, tick 11: 1/3, tick 12: 459/971, tick 13: 1/2.
        // At tick 11: τ' = S'(1/2)/4 = (30/16)/4 = 15/32, τ'' = S''(1/2)/16 = 0, so
        //   plan'  = τ'/(1 + τ)² = (15/32)/(9/4) = 5/24,
        //   plan'' = −2τ'²/(1 + τ)³ = −2·(225/1024)/(27/8) = −25/192.
        // A leaves over its last 4 ticks (it covers 0..39): at tick 38 its weight is S(2/4) = 1/2, so the
        // plan is 1/(1 + 1/2) = 2/3.
        for (TemporalEnsembleBlender b : new TemporalEnsembleBlender[] {
                TemporalEnsembleBlender.oldestFirst(1, 40, 1.0, Interpolation.CUBIC_SPLINE, 0.0, 4.0),
                TemporalEnsembleBlender.newestFirst(1, 40, 1.0, Interpolation.LINEAR, 0.0, 4.0)}) {
            assertThat(b.taperTicks()).isEqualTo(4);
            b.accept(constant(40, 0.0), 40, 0, 0);
            b.accept(constant(40, 1.0), 40, 10, 10);
            double[] p = new double[1];
            double[] v = new double[1];
            double[] a = new double[1];
            double[] expected = {53.0 / 565.0, 1.0 / 3.0, 459.0 / 971.0, 0.5, 0.5};
            for (int q = 0; q < expected.length; q++) {
                assertThat(b.stateAt(10 + q, p, v, a)).isTrue();
                assertThat(p[0]).as("tick %d", 10 + q).isCloseTo(expected[q], within(1e-15));
            }
            assertThat(b.stateAt(11, p, v, a)).isTrue();
            assertThat(v[0]).isCloseTo(5.0 / 24.0, within(1e-15));
            assertThat(a[0]).isCloseTo(-25.0 / 192.0, within(1e-15));
            assertThat(b.stateAt(14, p, v, a)).isTrue();
            assertThat(v[0]).as("both at full weight: no motion").isZero();
            assertThat(a[0]).isZero();
            assertThat(b.actionAt(38, p)).isTrue();
            assertThat(p[0]).isCloseTo(2.0 / 3.0, within(1e-15));
        }
    }

    @Test
    void rampsOfAShortChunkAreShortenedToMeetAtFullWeight() {
        // Taper 5 ticks, plain mean, against a long chunk of value 0 at full weight. A chunk of value 1
        // covering T ticks gets ramps of ℓ = min(5, ⌊(T + 1)/2⌋) ticks, so its weight w gives the plan
        // w/(1 + w): T = 3 → ℓ = 2, weights 1/2, 1, 1/2; T = 8 → ℓ = 4, weights S(1/4), S(1/2), S(3/4),
        // 1, 1, S(3/4), S(1/2), S(1/4); T = 9 = 2·5 − 1 → ℓ = 5, the two full ramps meet at the middle tick.
        double[][] weights = {
            {0.5, 1, 0.5},
            {53.0 / 512, 0.5, 459.0 / 512, 1, 1, 459.0 / 512, 0.5, 53.0 / 512},
            {s(1, 5), s(2, 5), s(3, 5), s(4, 5), 1, s(4, 5), s(3, 5), s(2, 5), s(1, 5)}};
        for (double[] w : weights) {
            int steps = w.length;
            TemporalEnsembleBlender b = TemporalEnsembleBlender.oldestFirst(1, 40, 1.0, Interpolation.LINEAR, 0.0, 5.0);
            b.accept(constant(40, 0.0), 40, 0, 0);
            assertThat(b.accept(constant(steps, 1.0), steps, 20, 20)).isEqualTo(steps);
            double[] p = new double[1];
            for (int q = 0; q < steps; q++) {
                assertThat(b.actionAt(20 + q, p)).isTrue();
                assertThat(p[0]).as("T = %d, tick %d", steps, 20 + q).isCloseTo(w[q] / (1 + w[q]), within(1e-15));
            }
            assertThat(b.actionAt(20 + steps, p)).isTrue();
            assertThat(p[0]).isZero();
        }
    }

    /** S(k/n) by hand: (6k⁵ − 15k⁴n + 10k³n²)/n⁵, exact in doubles for these small integers. */
    private static double s(int k, int n) {
        double k3 = (double) k * k * k;
        return (6.0 * k3 * k * k - 15.0 * k3 * k * n + 10.0 * k3 * n * n) / Math.pow(n, 5);
    }

    @Test
    void aChunkAloneOnATickGivesExactlyItsOwnValue() {
        // The weight is never 0 on a covered tick: a chunk alone reads back its own curve, bit for bit,
        // also on its ramps (compared with the latest-chunk blender, which executes the curve as it is).
        Random rnd = new Random(17);
        for (Interpolation kind : Interpolation.values()) {
            for (int trial = 0; trial < 20; trial++) {
                int k = 1 + rnd.nextInt(16);
                double r = 0.5 + 6 * rnd.nextDouble();
                double[] chunk = new double[k * 3];
                for (int i = 0; i < chunk.length; i++) {
                    chunk[i] = 100 * rnd.nextGaussian();
                }
                TemporalEnsembleBlender alone = TemporalEnsembleBlender.newestFirst(3, 16, r, kind, 0.3, 1 + 5 * rnd.nextDouble());
                LatestChunkBlender plain = LatestChunkBlender.of(3, 16, r, kind);
                int ticks = alone.accept(chunk, k, 7, 8);
                assertThat(plain.accept(chunk, k, 7, 8)).isEqualTo(ticks);
                double[] got = new double[3];
                double[] want = new double[3];
                double[] gotV = new double[3];
                double[] wantV = new double[3];
                double[] gotA = new double[3];
                double[] wantA = new double[3];
                for (long t = 8; t < 8 + ticks; t++) {
                    assertThat(alone.stateAt(t, got, gotV, gotA)).isTrue();
                    assertThat(plain.stateAt(t, want, wantV, wantA)).isTrue();
                    assertThat(got).as("%s trial %d tick %d", kind, trial, t).containsExactly(want);
                    for (int d = 0; d < 3; d++) {
                        assertThat(gotV[d]).isCloseTo(wantV[d], within(Tolerances.reference(100 * wantV[d])));
                        assertThat(gotA[d]).isCloseTo(wantA[d], within(Tolerances.reference(100 * wantA[d])));
                    }
                }
            }
        }
    }

    @Test
    void theFiveArgumentFactoriesHaveNoTaperAndEqualATaperOfZero() {
        TemporalEnsembleBlender published = TemporalEnsembleBlender.oldestFirst(2, 8, 2.5, Interpolation.CUBIC_SPLINE, 0.2);
        TemporalEnsembleBlender zero = TemporalEnsembleBlender.oldestFirst(2, 8, 2.5, Interpolation.CUBIC_SPLINE, 0.2, 0.0);
        TemporalEnsembleBlender newest = TemporalEnsembleBlender.newestFirst(2, 8, 2.5, Interpolation.CUBIC_SPLINE, 0.2);
        TemporalEnsembleBlender newestZero = TemporalEnsembleBlender.newestFirst(2, 8, 2.5, Interpolation.CUBIC_SPLINE, 0.2, 0.0);
        for (TemporalEnsembleBlender b : new TemporalEnsembleBlender[] {published, zero, newest, newestZero}) {
            assertThat(b.taperSteps()).isZero();
            assertThat(b.taperTicks()).isZero();
        }
        Random rnd = new Random(4);
        double[] chunk = new double[16];
        double[] a = new double[2];
        double[] b = new double[2];
        for (long now = 0; now < 200; now++) {
            if (rnd.nextInt(3) == 0) {
                for (int i = 0; i < chunk.length; i++) {
                    chunk[i] = rnd.nextGaussian();
                }
                long origin = now - rnd.nextInt(4);
                published.accept(chunk, 8, Math.max(0, origin), now);
                zero.accept(chunk, 8, Math.max(0, origin), now);
                newest.accept(chunk, 8, Math.max(0, origin), now);
                newestZero.accept(chunk, 8, Math.max(0, origin), now);
            }
            assertThat(published.actionAt(now, a)).isEqualTo(zero.actionAt(now, b));
            assertThat(a).containsExactly(b);
            assertThat(newest.actionAt(now, a)).isEqualTo(newestZero.actionAt(now, b));
            assertThat(a).containsExactly(b);
        }
    }

    @Test
    void taperLengthIsGivenInPolicyStepsAndValidated() {
        assertThat(TemporalEnsembleBlender.oldestFirst(1, 10, 2.5, Interpolation.LINEAR, 0.1, 2.0).taperTicks()).isEqualTo(5);
        assertThat(TemporalEnsembleBlender.oldestFirst(1, 10, 50.0, Interpolation.LINEAR, 0.1, 2.5).taperTicks()).isEqualTo(125);
        assertThat(TemporalEnsembleBlender.newestFirst(1, 10, 1.0 / 3.0, Interpolation.LINEAR, 0.1, 2.0).taperTicks()).isEqualTo(1);
        TemporalEnsembleBlender b = TemporalEnsembleBlender.newestFirst(1, 10, 1.0, Interpolation.LINEAR, 0.1, 2.5);
        assertThat(b.taperSteps()).isEqualTo(2.5);
        assertThat(b.taperTicks()).isEqualTo(3);
        assertThatThrownBy(() -> TemporalEnsembleBlender.oldestFirst(1, 10, 1.0, Interpolation.LINEAR, 0.1, -1.0))
                .isInstanceOf(IllegalArgumentException.class)
                .hasMessage("temporal ensemble (oldest first): taperSteps must be finite and >= 0, got -1.0");
        assertThatThrownBy(() -> TemporalEnsembleBlender.newestFirst(1, 10, 1.0, Interpolation.LINEAR, 0.1, Double.NaN))
                .hasMessage("temporal ensemble (newest first): taperSteps must be finite and >= 0, got NaN");
        assertThatThrownBy(() -> TemporalEnsembleBlender.oldestFirst(1, 10, 1.0, Interpolation.LINEAR, 0.1,
                Double.POSITIVE_INFINITY)).hasMessage("temporal ensemble (oldest first): taperSteps must be finite and >= 0, got Infinity");
    }

    static Stream<Arguments> interpolationsAndDirections() {
        return Stream.of(Interpolation.values())
                .flatMap(kind -> Stream.of(Arguments.of(kind, false), Arguments.of(kind, true)));
    }

    /**
     * Overlapping chunks that disagree: chunk k follows the same slow motion sin(2πt/200) but is offset
     * by k·0.05 from it, so every new chunk sits above the ones it joins. r = 5 (a 100 Hz policy driving a
     * 500 Hz loop), 16 steps, a chunk every 3 steps, 4 ticks late; taper 4 steps (a quarter of the chunk,
     * L = 20 ticks), m = 0.1.
     *
     * <p>The first, second and third backward differences of the plan are compared on the stencils that
     * contain an entry (the tick before a chunk's arrival and its arrival) or an exit (a chunk's last tick
     * and the next), and on all others ("interior", which includes the taper ramps: the smooth weights'
     * own rates are what bounds the differences there). With the taper the entry and exit stencils are no
     * larger than the interior: a chunk's weight and its first two derivatives are 0 where it enters and
     * leaves. With the exact published weights the same sequence steps by a share of the disagreement at
     * every entry and exit, many times the interior differences — which shows that the comparison can fail.
     */
    @ParameterizedTest(name = "{0}, newest first {1}")
    @MethodSource("interpolationsAndDirections")
    void theTaperRemovesTheStepAtEntryAndExitThatThePublishedWeightsMake(Interpolation kind, boolean newestFirst) {
        double[][] tapered = differences(kind, newestFirst, 4.0);
        double[][] published = differences(kind, newestFirst, 0.0);
        for (int order = 1; order <= 3; order++) {
            assertThat(tapered[0][order]).as("tapered, difference %d at entries and exits vs interior", order)
                    .isLessThanOrEqualTo(tapered[1][order]);
        }
        assertThat(published[0][1]).as("published weights, first difference").isGreaterThan(1.5 * published[1][1]);
        assertThat(published[0][2]).as("published weights, second difference").isGreaterThan(4 * published[1][2]);
        assertThat(published[0][3]).as("published weights, third difference").isGreaterThan(10 * published[1][3]);
        // The step itself: about a fifth of the 0.05 disagreement, on top of the motion's own change.
        assertThat(published[0][2]).isGreaterThan(0.01);
        assertThat(tapered[0][3]).as("tapered third difference at entries and exits").isLessThan(published[0][3] / 10);
    }

    /** {max |Δ^k| over entry and exit stencils, max |Δ^k| over the other stencils}, k = 1..3 (index k). */
    private static double[][] differences(Interpolation kind, boolean newestFirst, double taperSteps) {
        int steps = 16;
        double r = 5.0;
        int period = 15;
        int latency = 4;
        int ticks = 700;
        TemporalEnsembleBlender b = newestFirst
                ? TemporalEnsembleBlender.newestFirst(1, steps, r, kind, 0.1, taperSteps)
                : TemporalEnsembleBlender.oldestFirst(1, steps, r, kind, 0.1, taperSteps);
        double[] plan = new double[ticks];
        boolean[][] edge = new boolean[4][ticks + steps * 6];
        double[] chunk = new double[steps];
        double[] out = new double[1];
        int k = 0;
        for (int now = 0; now < ticks; now++) {
            if (now % period == latency) {
                long origin = now - latency;
                for (int j = 0; j < steps; j++) {
                    chunk[j] = Math.sin(2 * Math.PI * (origin + j * r) / 200.0) + 0.05 * k;
                }
                k++;
                int covered = b.accept(chunk, steps, origin, now);
                long last = now + covered - 1;
                for (int order = 1; order <= 3; order++) {
                    for (int q = 0; q < order; q++) {
                        edge[order][now + q] = true;
                        edge[order][(int) last + 1 + q] = true;
                    }
                }
            }
            assertThat(b.actionAt(now, out)).as("tick %d", now).isEqualTo(now >= latency);
            plan[now] = out[0];
        }
        double[][] worst = new double[2][4];
        // From tick 100 the ensemble is in its steady state (every tick covered by about five chunks).
        for (int n = 100; n < ticks; n++) {
            double[] diff = {0, plan[n] - plan[n - 1], plan[n] - 2 * plan[n - 1] + plan[n - 2],
                plan[n] - 3 * plan[n - 1] + 3 * plan[n - 2] - plan[n - 3]};
            for (int order = 1; order <= 3; order++) {
                int where = edge[order][n] ? 0 : 1;
                worst[where][order] = Math.max(worst[where][order], Math.abs(diff[order]));
            }
        }
        return worst;
    }
}
