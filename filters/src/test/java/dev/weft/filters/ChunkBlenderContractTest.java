package dev.weft.filters;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

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
        assertThat(b.staleSteps()).isEqualTo(K);
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
}
