package dev.weft.filters;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import java.util.ArrayList;
import java.util.List;
import java.util.Random;
import java.util.stream.Stream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/** The {@link ChunkBlender} contract, run over every implementation. */
class ChunkBlenderContractTest {

    private static final int D = 3;
    private static final int K = 8;

    /** Builds a blender from (dimensions, maxSteps, stepRatio, interpolation). */
    interface Factory {
        ChunkBlender create(int dims, int maxSteps, double stepRatio, Interpolation interpolation);
    }

    /** name, factory, executable steps of an 8-step chunk. */
    static Stream<Arguments> blenders() {
        return Stream.of(
                Arguments.of("ensemble oldest first", (Factory) (d, k, r, i) -> TemporalEnsembleBlender.oldestFirst(d, k, r, i, 0.1), K),
                Arguments.of("ensemble newest first", (Factory) (d, k, r, i) -> TemporalEnsembleBlender.newestFirst(d, k, r, i, 0.1), K),
                Arguments.of("ensemble plain mean", (Factory) (d, k, r, i) -> TemporalEnsembleBlender.oldestFirst(d, k, r, i, 0.0), K),
                Arguments.of("ensemble oldest first, taper 2 steps",
                        (Factory) (d, k, r, i) -> TemporalEnsembleBlender.oldestFirst(d, k, r, i, 0.1, 2.0), K),
                Arguments.of("ensemble newest first, taper 2 steps",
                        (Factory) (d, k, r, i) -> TemporalEnsembleBlender.newestFirst(d, k, r, i, 0.1, 2.0), K),
                Arguments.of("latest chunk", (Factory) LatestChunkBlender::of, K),
                Arguments.of("latest chunk, first 6 steps", (Factory) (d, k, r, i) -> LatestChunkBlender.firstSteps(d, k, r, i, 6), 6),
                Arguments.of("crossfade over 2 steps", (Factory) (d, k, r, i) -> CrossfadeBlender.of(d, k, r, i, 2), K));
    }

    /** Step j, joint d holds 10·j + d. */
    private static double[] ramp(int steps) {
        double[] c = new double[steps * D];
        for (int j = 0; j < steps; j++) {
            for (int d = 0; d < D; d++) {
                c[j * D + d] = 10.0 * j + d;
            }
        }
        return c;
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void hasNoPlanBeforeTheFirstChunk(String name, Factory factory, int executable) {
        ChunkBlender b = factory.create(D, K, 1.0, Interpolation.LINEAR);
        double[] out = {7, 7, 7};
        assertThat(b.actionAt(0, out)).isFalse();
        assertThat(out).containsExactly(7, 7, 7);
        assertThat(b.ticksRemaining(0)).isZero();
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void executesEachStepAtItsOwnTimeAndDropsTheStalePrefix(String name, Factory factory, int executable) {
        ChunkBlender b = factory.create(D, K, 1.0, Interpolation.CUBIC_HERMITE);
        // Observation at tick 100, chunk arrives at tick 103: steps 0..2 are stale.
        int covered = b.accept(ramp(K), K, 100, 103);
        assertThat(covered).isEqualTo(executable - 3);
        assertThat(b.staleSteps()).isEqualTo(3);
        assertThat(b.acceptedChunks()).isEqualTo(1);
        double[] out = new double[D];
        assertThat(b.actionAt(103, out)).isTrue();
        // Latency does not shift the plan: tick 103 gets step 3, not step 0.
        assertThat(out).containsExactly(30, 31, 32);
        assertThat(b.ticksRemaining(103)).isEqualTo(executable - 3);
        long last = 100 + executable - 1;
        assertThat(b.actionAt(last, out)).isTrue();
        assertThat(out).containsExactly(10.0 * (executable - 1), 10.0 * (executable - 1) + 1, 10.0 * (executable - 1) + 2);
        assertThat(b.ticksRemaining(last)).isEqualTo(1);
        assertThat(b.actionAt(last + 1, out)).isFalse();
        assertThat(b.ticksRemaining(last + 1)).isZero();
        assertThat(b.actionAt(102, out)).as("ticks before the arrival are history").isFalse();
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void copiesTheChunkInsteadOfRetainingIt(String name, Factory factory, int executable) {
        ChunkBlender b = factory.create(D, K, 1.0, Interpolation.LINEAR);
        double[] chunk = ramp(K);
        b.accept(chunk, K, 0, 0);
        java.util.Arrays.fill(chunk, -1.0);
        double[] out = new double[D];
        assertThat(b.actionAt(2, out)).isTrue();
        assertThat(out).containsExactly(20, 21, 22);
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void interpolatesBetweenPlanPointsForAFractionalStepRatio(String name, Factory factory, int executable) {
        ChunkBlender b = factory.create(1, K, 2.5, Interpolation.LINEAR);
        // Points at ticks 0, 2.5, 5 (relative to the origin 40) with values 0, 5, 10: the line v = 2·tick.
        double[] chunk = {0, 5, 10};
        // Arrival at 43: steps at 0 and 2.5 are stale, ticks 43..45 remain.
        assertThat(b.accept(chunk, 3, 40, 43)).isEqualTo(3);
        assertThat(b.staleSteps()).isEqualTo(2);
        double[] out = new double[1];
        for (long t = 43; t <= 45; t++) {
            assertThat(b.actionAt(t, out)).isTrue();
            assertThat(out[0]).isCloseTo(2.0 * (t - 40), within(1e-12));
        }
        assertThat(b.ticksRemaining(43)).isEqualTo(3);
        assertThat(b.actionAt(46, out)).isFalse();
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void rejectsNonFiniteValuesNamingStepAndJointAndKeepsThePlan(String name, Factory factory, int executable) {
        ChunkBlender b = factory.create(D, K, 1.0, Interpolation.LINEAR);
        b.accept(ramp(K), K, 100, 100);
        double[] bad = ramp(K);
        bad[2 * D + 1] = Double.NaN;
        assertThat(b.accept(bad, K, 101, 101)).isEqualTo(ChunkBlender.REJECTED_NON_FINITE);
        assertThat(b.rejectedChunks()).isEqualTo(1);
        assertThat(b.lastRejection()).isEqualTo(ChunkBlender.REJECTED_NON_FINITE);
        assertThat(b.lastRejectedStep()).isEqualTo(2);
        assertThat(b.lastRejectedJoint()).isEqualTo(1);
        assertThat(b.describeLastRejection())
                .isEqualTo("chunk rejected: non-finite value NaN at step 2, joint 1 (origin tick 101, now tick 101)");
        double[] out = new double[D];
        assertThat(b.actionAt(101, out)).isTrue();
        assertThat(out).containsExactly(10, 11, 12);
        bad[2 * D + 1] = 0;
        bad[7 * D + 2] = Double.POSITIVE_INFINITY;
        assertThat(b.accept(bad, K, 101, 101)).isEqualTo(ChunkBlender.REJECTED_NON_FINITE);
        assertThat(b.describeLastRejection()).contains("Infinity at step 7, joint 2");
        assertThat(b.acceptedChunks()).isEqualTo(1);
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void rejectsMalformedChunksWithAPreciseMessage(String name, Factory factory, int executable) {
        ChunkBlender b = factory.create(D, K, 1.0, Interpolation.LINEAR);
        assertThat(b.describeLastRejection()).isEqualTo("no chunk rejected");
        assertThat(b.accept(null, K, 0, 0)).isEqualTo(ChunkBlender.REJECTED_SHAPE);
        assertThat(b.describeLastRejection()).isEqualTo("chunk rejected: chunk array is null (origin tick 0, now tick 0)");
        assertThat(b.accept(ramp(K), 0, 0, 0)).isEqualTo(ChunkBlender.REJECTED_SHAPE);
        assertThat(b.describeLastRejection()).isEqualTo("chunk rejected: steps 0 outside [1, 8] (origin tick 0, now tick 0)");
        assertThat(b.accept(new double[9 * D], 9, 0, 0)).isEqualTo(ChunkBlender.REJECTED_SHAPE);
        assertThat(b.describeLastRejection()).isEqualTo("chunk rejected: steps 9 outside [1, 8] (origin tick 0, now tick 0)");
        assertThat(b.accept(new double[10], 4, 0, 0)).isEqualTo(ChunkBlender.REJECTED_SHAPE);
        assertThat(b.describeLastRejection())
                .isEqualTo("chunk rejected: array holds 10 values, but 4 steps x 3 joints need 12 (origin tick 0, now tick 0)");
        assertThat(b.rejectedChunks()).isEqualTo(4);
        assertThat(b.ticksRemaining(0)).isZero();
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void rejectsInconsistentTicks(String name, Factory factory, int executable) {
        ChunkBlender b = factory.create(D, K, 1.0, Interpolation.LINEAR);
        assertThat(b.accept(ramp(K), K, 12, 10)).isEqualTo(ChunkBlender.REJECTED_TICKS);
        assertThat(b.describeLastRejection())
                .isEqualTo("chunk rejected: origin tick is after now tick (origin tick 12, now tick 10)");
        assertThat(b.accept(ramp(K), K, -1, 10)).isEqualTo(ChunkBlender.REJECTED_TICKS);
        assertThat(b.describeLastRejection()).isEqualTo("chunk rejected: ticks must be >= 0 (origin tick -1, now tick 10)");
        assertThat(b.accept(ramp(K), K, 15, 20)).isGreaterThan(0);
        assertThat(b.accept(ramp(K), K, 15, 19)).isEqualTo(ChunkBlender.REJECTED_TICKS);
        assertThat(b.describeLastRejection())
                .isEqualTo("chunk rejected: now tick went backwards, previous now tick 20 (origin tick 15, now tick 19)");
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void countsAChunkThatArrivesEntirelyStale(String name, Factory factory, int executable) {
        ChunkBlender b = factory.create(D, K, 1.0, Interpolation.LINEAR);
        assertThat(b.accept(ramp(K), K, 0, 1000)).isZero();
        assertThat(b.expiredChunks()).isEqualTo(1);
        // Only steps that would have been executed count as stale (latest chunk, first 6: 6 of the 8).
        assertThat(b.staleSteps()).isEqualTo(executable);
        assertThat(b.acceptedChunks()).isZero();
        assertThat(b.ticksRemaining(1000)).isZero();
        assertThat(b.actionAt(1000, new double[D])).isFalse();
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void resetForgetsThePlanAndTheTickHistory(String name, Factory factory, int executable) {
        ChunkBlender b = factory.create(D, K, 1.0, Interpolation.LINEAR);
        b.accept(ramp(K), K, 50, 50);
        b.reset();
        assertThat(b.ticksRemaining(50)).isZero();
        assertThat(b.actionAt(51, new double[D])).isFalse();
        // An earlier now tick is fine after a reset, and the new plan stands alone.
        double[] ones = new double[K * D];
        java.util.Arrays.fill(ones, 1.0);
        assertThat(b.accept(ones, K, 10, 10)).isEqualTo(executable);
        double[] out = new double[D];
        assertThat(b.actionAt(10, out)).isTrue();
        assertThat(out).containsExactly(1, 1, 1);
        assertThat(b.acceptedChunks()).as("counters survive a reset").isEqualTo(2);
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void refusesAnOutputArrayThatIsTooShort(String name, Factory factory, int executable) {
        ChunkBlender b = factory.create(D, K, 1.0, Interpolation.LINEAR);
        assertThatThrownBy(() -> b.actionAt(0, new double[2])).isInstanceOf(IllegalArgumentException.class)
                .hasMessage("actionAt: out must hold at least 3 values, got 2 values");
        assertThatThrownBy(() -> b.actionAt(0, null)).hasMessage("actionAt: out must hold at least 3 values, got null");
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void stateAtHasTheCoverageOfActionAtAndItsPositionIsTheAction(String name, Factory factory, int executable) {
        ChunkBlender b = factory.create(D, K, 2.5, Interpolation.CUBIC_SPLINE);
        double[] p = {7, 7, 7};
        double[] v = {8, 8, 8};
        double[] a = {9, 9, 9};
        assertThat(b.stateAt(0, p, v, a)).isFalse();
        assertThat(p).containsExactly(7, 7, 7);
        assertThat(v).containsExactly(8, 8, 8);
        assertThat(a).containsExactly(9, 9, 9);
        Random rnd = new Random(3);
        double[] chunk = new double[K * D];
        double[] action = new double[D];
        for (long now = 10; now < 80; now++) {
            if (now % 6 == 0) {
                for (int i = 0; i < chunk.length; i++) {
                    chunk[i] = rnd.nextGaussian();
                }
                b.accept(chunk, K, now - rnd.nextInt(4), now);
            }
            for (long tick = now - 1; tick < now + 25; tick++) {
                boolean planned = b.actionAt(tick, action);
                assertThat(b.stateAt(tick, p, v, a)).as("tick %d", tick).isEqualTo(planned);
                if (planned) {
                    assertThat(p).as("position at tick %d", tick).containsExactly(action);
                }
            }
        }
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void stateAtRefusesArraysThatAreTooShortOrShared(String name, Factory factory, int executable) {
        ChunkBlender b = factory.create(D, K, 1.0, Interpolation.LINEAR);
        double[] ok = new double[D];
        double[] ok2 = new double[D];
        assertThatThrownBy(() -> b.stateAt(0, new double[2], ok, ok2)).isInstanceOf(IllegalArgumentException.class)
                .hasMessage("stateAt: position must hold at least 3 values, got 2 values");
        assertThatThrownBy(() -> b.stateAt(0, ok, null, ok2))
                .hasMessage("stateAt: velocity must hold at least 3 values, got null");
        assertThatThrownBy(() -> b.stateAt(0, ok, ok2, new double[1]))
                .hasMessage("stateAt: acceleration must hold at least 3 values, got 1 values");
        assertThatThrownBy(() -> b.stateAt(0, ok, ok2, ok))
                .hasMessage("stateAt: position, velocity and acceleration must be three different arrays");
    }

    static Stream<Arguments> blendersAndInterpolations() {
        List<Arguments> all = new ArrayList<>();
        blenders().forEach(blender -> {
            for (Interpolation kind : Interpolation.values()) {
                Object[] args = blender.get();
                all.add(Arguments.of(args[0] + ", " + kind, args[1], kind));
            }
        });
        return all.stream();
    }

    /**
     * The plan's velocity and acceleration from {@code stateAt} are the derivatives of its positions: at
     * every tick whose seven-tick stencil holds no point where the plan is not smooth (a knot of a chunk's
     * curve, an arrival or an end, the corners of a taper or a fade), they match the sixth-order central
     * differences of the positions, {@code (−f₋₃ + 9f₋₂ − 45f₋₁ + 45f₁ − 9f₂ + f₃)/60} and
     * {@code (2f₋₃ − 27f₋₂ + 270f₋₁ − 490f₀ + 270f₁ − 27f₂ + 2f₃)/180} (the standard central-difference
     * weights, e.g. Fornberg 1988, "Generation of finite difference formulas on arbitrarily spaced grids").
     * Chunks disagree with one another (independent random values), so the blends' weight rates matter.
     */
    @ParameterizedTest(name = "{0}")
    @MethodSource("blendersAndInterpolations")
    void velocityAndAccelerationAreTheDerivativesOfThePlannedPositions(String name, Factory factory, Interpolation kind) {
        // r = 24: a chunk every 2 steps, 10 ticks late; taper and fade of 2 steps are 48 ticks.
        double r = 24.0;
        int period = 48;
        int latency = 10;
        int ticks = 640;
        ChunkBlender b = factory.create(D, K, r, kind);
        Random rnd = new Random(11);
        double[] chunk = new double[K * D];
        double[][] position = new double[ticks][D];
        double[][] velocity = new double[ticks][D];
        double[][] acceleration = new double[ticks][D];
        boolean[] planned = new boolean[ticks];
        List<Double> corners = new ArrayList<>();
        long taper = b instanceof TemporalEnsembleBlender ? ((TemporalEnsembleBlender) b).taperTicks() : 0;
        long fade = b instanceof CrossfadeBlender ? ((CrossfadeBlender) b).fadeTicks() : 0;
        for (int now = 0; now < ticks; now++) {
            if (now % period == latency) {
                long origin = now - latency;
                for (int i = 0; i < chunk.length; i++) {
                    chunk[i] = 2.0 * rnd.nextDouble() - 1.0;
                }
                int covered = b.accept(chunk, K, origin, now);
                assertThat(covered).isPositive();
                long last = now + covered - 1;
                for (int j = 0; j < K; j++) {
                    corners.add(origin + j * r);
                }
                long ramp = Math.min(taper, (covered + 1) / 2);
                for (double corner : new double[] {now - 1, now - 0.5, now - 1 + ramp, now + fade, last + 1 - ramp,
                        last + 0.5, last + 1}) {
                    corners.add(corner);
                }
            }
            planned[now] = b.stateAt(now, position[now], velocity[now], acceleration[now]);
        }
        int checked = 0;
        double worst = 0;
        for (int c = 3; c < ticks - 3; c++) {
            if (!smoothAround(c, 3, corners, planned)) {
                continue;
            }
            for (int d = 0; d < D; d++) {
                double[] f = new double[7];
                for (int k = 0; k < 7; k++) {
                    f[k] = position[c - 3 + k][d];
                }
                double first = (-f[0] + 9 * f[1] - 45 * f[2] + 45 * f[4] - 9 * f[5] + f[6]) / 60.0;
                double second = (2 * f[0] - 27 * f[1] + 270 * f[2] - 490 * f[3] + 270 * f[4] - 27 * f[5] + 2 * f[6]) / 180.0;
                assertThat(velocity[c][d]).as("velocity, tick %d joint %d", c, d)
                        .isCloseTo(first, within(Tolerances.FINITE_DIFFERENCE));
                assertThat(acceleration[c][d]).as("acceleration, tick %d joint %d", c, d)
                        .isCloseTo(second, within(Tolerances.FINITE_DIFFERENCE));
                worst = Math.max(worst, Math.abs(velocity[c][d]) + Math.abs(acceleration[c][d]));
            }
            checked++;
        }
        assertThat(checked).as("ticks checked").isGreaterThan(200);
        assertThat(worst).as("the plan moves, so the check is not of zeros").isGreaterThan(0.01);
    }

    /** Whether every tick of [c − h, c + h] has plan and no corner lies strictly inside that interval. */
    private static boolean smoothAround(int c, int h, List<Double> corners, boolean[] planned) {
        for (int t = c - h; t <= c + h; t++) {
            if (!planned[t]) {
                return false;
            }
        }
        for (double corner : corners) {
            if (corner > c - h && corner < c + h) {
                return false;
            }
        }
        return true;
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void validatesItsConfigurationWithPreciseMessages(String name, Factory factory, int executable) {
        assertThatThrownBy(() -> factory.create(0, K, 1.0, Interpolation.LINEAR))
                .isInstanceOf(IllegalArgumentException.class).hasMessageEndingWith(": dimensions must be >= 1, got 0");
        assertThatThrownBy(() -> factory.create(D, 0, 1.0, Interpolation.LINEAR))
                .hasMessageEndingWith(": maxSteps must be >= 1, got 0");
        for (double r : new double[] {0.0, -1.0, Double.NaN, Double.POSITIVE_INFINITY}) {
            assertThatThrownBy(() -> factory.create(D, K, r, Interpolation.LINEAR))
                    .hasMessageEndingWith(": stepRatio (policy step / control period) must be finite and > 0, got " + r);
        }
        assertThatThrownBy(() -> factory.create(D, K, 1.0, null)).hasMessageEndingWith(": interpolation must not be null");
        assertThatThrownBy(() -> factory.create(D, 100_000, 1000.0, Interpolation.LINEAR))
                .hasMessageEndingWith(": maxSteps 100000 at stepRatio 1000.0 with 3 dimensions needs a ring of 99999001"
                        + " ticks x 3 values, more than the limit of 16777216 values");
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void coversMaxStepsTimesTheRatioWithoutAliasingInTheRing(String name, Factory factory, int executable) {
        // Ratio 50 (a 10 Hz policy driving a 500 Hz loop), K = 8: 351 ticks of plan in one chunk.
        ChunkBlender b = factory.create(1, K, 50.0, Interpolation.LINEAR);
        double[] chunk = {0, 1, 2, 3, 4, 5, 6, 7};
        int ticks = b.accept(chunk, K, 0, 0);
        assertThat(ticks).isEqualTo((executable - 1) * 50 + 1);
        double[] out = new double[1];
        for (long t = 0; t < ticks; t++) {
            assertThat(b.actionAt(t, out)).isTrue();
            assertThat(out[0]).isCloseTo(t / 50.0, within(1e-12));
            assertThat(b.ticksRemaining(t)).isEqualTo(ticks - t);
        }
    }

    /**
     * The preview's run means equal means summed afresh from {@code actionAt}, tick by tick, with
     * the plan's last position held past its end, over chunks arriving late and overlapping; a tick
     * without a plan leaves the output untouched.
     */
    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void previewMeansAreTheMeansOfThePlanAheadWithItsLastPositionHeld(String name, Factory factory, int executable) {
        ChunkBlender b = factory.create(D, K, 3.0, Interpolation.CUBIC_SPLINE);
        Random rng = new Random(7);
        int[] ends = {1, 2, 4, 7, 12, 20, 33, 60};
        double[] out = new double[ends.length * D];
        double[] here = new double[D];
        double[] last = new double[D];
        double[] chunk = new double[K * D];
        assertThat(b.previewMeans(0, ends, out)).isFalse();
        int checked = 0;
        for (long now = 0; now < 120; now++) {
            if (now % 5 == 0) {
                for (int i = 0; i < chunk.length; i++) {
                    chunk[i] = 0.3 * Math.sin(0.05 * now + i) + 0.01 * rng.nextGaussian();
                }
                b.accept(chunk, K, Math.max(0, now - 2), now);
            }
            java.util.Arrays.fill(out, 42.0);
            boolean planned = b.previewMeans(now, ends, out);
            assertThat(planned).isEqualTo(b.ticksRemaining(now) > 0);
            if (!planned) {
                assertThat(out).containsOnly(42.0);
                continue;
            }
            long end = now + b.ticksRemaining(now) - 1;
            assertThat(b.actionAt(end, last)).isTrue();
            double[] one = new double[ends.length];
            for (int d = 0; d < D; d++) {
                // one dimension alone: the same doubles as the all-dimensions form
                assertThat(b.previewMeans(now, ends, d, one)).isTrue();
                assertThat(one).containsExactly(java.util.Arrays.copyOfRange(out, d * ends.length, (d + 1) * ends.length));
            }
            for (int d = 0; d < D; d++) {
                for (int r = 0, from = 0; r < ends.length; from = ends[r], r++) {
                    double sum = 0;
                    for (int t = from; t < ends[r]; t++) {
                        if (now + t <= end) {
                            assertThat(b.actionAt(now + t, here)).isTrue();
                            sum += here[d];
                        } else {
                            sum += last[d];
                        }
                    }
                    // running sums over a plan of at most a few dozen ticks of values below 1
                    assertThat(out[d * ends.length + r]).as("%s tick %d joint %d run %d", name, now, d, r)
                            .isCloseTo(sum / (ends[r] - from), within(1e-13));
                    checked++;
                }
            }
        }
        assertThat(checked).isGreaterThan(1000);
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("blenders")
    void previewMeansRefusesMalformedRuns(String name, Factory factory, int executable) {
        ChunkBlender b = factory.create(D, K, 1.0, Interpolation.LINEAR);
        assertThatThrownBy(() -> b.previewMeans(0, new int[0], new double[D])).isInstanceOf(IllegalArgumentException.class)
                .hasMessageContaining("runEnds");
        assertThatThrownBy(() -> b.previewMeans(0, new int[] {2, 2}, new double[2 * D]))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("at run 1");
        assertThatThrownBy(() -> b.previewMeans(0, new int[] {0}, new double[D]))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("at run 0");
        assertThatThrownBy(() -> b.previewMeans(0, new int[] {1, 3}, new double[D]))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("at least " + 2 * D);
        assertThatThrownBy(() -> b.previewMeans(0, new int[] {1, 3}, D, new double[2]))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("dimension must be in [0, " + D + ")");
        assertThatThrownBy(() -> b.previewMeans(0, new int[] {1, 3}, 0, new double[1]))
                .isInstanceOf(IllegalArgumentException.class).hasMessageContaining("at least 2");
    }
}
