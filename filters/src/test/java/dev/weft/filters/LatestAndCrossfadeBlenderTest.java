package dev.weft.filters;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.assertj.core.api.Assertions.within;

import java.util.Arrays;
import org.junit.jupiter.api.Test;

class LatestAndCrossfadeBlenderTest {

    private static double[] constant(int steps, double value) {
        double[] c = new double[steps];
        Arrays.fill(c, value);
        return c;
    }

    @Test
    void latestChunkReplacesThePlanAheadIncludingBeyondItsEnd() {
        LatestChunkBlender b = LatestChunkBlender.of(1, 10, 1.0, Interpolation.LINEAR);
        b.accept(constant(10, 1.0), 10, 0, 0);
        assertThat(b.ticksRemaining(2)).isEqualTo(8);
        assertThat(b.accept(constant(4, 2.0), 4, 2, 2)).isEqualTo(4);
        double[] out = new double[1];
        assertThat(b.actionAt(2, out)).isTrue();
        assertThat(out[0]).isEqualTo(2.0);
        assertThat(b.ticksRemaining(2)).isEqualTo(4);
        assertThat(b.actionAt(6, out)).as("the old plan beyond the new chunk is gone").isFalse();
    }

    @Test
    void latestChunkDropsAChunkFromAnOlderObservation() {
        LatestChunkBlender b = LatestChunkBlender.of(1, 10, 1.0, Interpolation.LINEAR);
        b.accept(constant(10, 1.0), 10, 5, 6);
        assertThat(b.accept(constant(10, 9.0), 10, 4, 7)).isEqualTo(ChunkBlender.SUPERSEDED);
        assertThat(b.supersededChunks()).isEqualTo(1);
        double[] out = new double[1];
        assertThat(b.actionAt(7, out)).isTrue();
        assertThat(out[0]).isEqualTo(1.0);
        // Same observation again (a retry) is accepted.
        assertThat(b.accept(constant(10, 3.0), 10, 5, 8)).isEqualTo(7);
    }

    @Test
    void latestChunkWithFirstStepsStarvesWhenTheNextChunkIsLate() {
        // Executes steps 0..3 only, counted from the observation: at r = 2 the plan ends at origin + 6.
        LatestChunkBlender b = LatestChunkBlender.firstSteps(1, 10, 2.0, Interpolation.LINEAR, 4);
        assertThat(b.accept(new double[] {0, 1, 2, 3, 4, 5, 6, 7, 8, 9}, 10, 20, 21)).isEqualTo(6);
        assertThat(b.ticksRemaining(21)).isEqualTo(6);
        double[] out = new double[1];
        assertThat(b.actionAt(26, out)).isTrue();
        assertThat(out[0]).isEqualTo(3.0);
        assertThat(b.actionAt(27, out)).isFalse();
        assertThat(b.ticksRemaining(27)).isZero();
        assertThatThrownBy(() -> LatestChunkBlender.firstSteps(1, 10, 1.0, Interpolation.LINEAR, 11))
                .isInstanceOf(IllegalArgumentException.class)
                .hasMessage("latest chunk: executedSteps must be in [1, maxSteps = 10], got 11");
    }

    @Test
    void latestChunkWithFirstStepsCountsOnlyExecutableStepsAsStale() {
        // Executes steps 0..3 of a 10-step chunk. Arriving 5 ticks late at r = 1, steps 0..4 are past, but
        // step 4 would never have been executed: 4 stale steps, not 5; and of a chunk that arrives after
        // all of its executable steps, only those 4 count, not all 10.
        LatestChunkBlender b = LatestChunkBlender.firstSteps(1, 10, 1.0, Interpolation.LINEAR, 4);
        double[] chunk = {0, 1, 2, 3, 4, 5, 6, 7, 8, 9};
        assertThat(b.accept(chunk, 10, 0, 2)).isEqualTo(2);
        assertThat(b.staleSteps()).isEqualTo(2);
        assertThat(b.accept(chunk, 10, 1, 6)).as("steps 0..3 of origin 1 end at tick 4").isZero();
        assertThat(b.staleSteps()).isEqualTo(2 + 4);
        assertThat(b.expiredChunks()).isEqualTo(1);
        // At r = 2 the executable steps 0..3 lie at offsets 0, 2, 4, 6: arriving 5 late, 3 of them are past.
        LatestChunkBlender slow = LatestChunkBlender.firstSteps(1, 10, 2.0, Interpolation.LINEAR, 4);
        assertThat(slow.accept(chunk, 10, 0, 5)).isEqualTo(2);
        assertThat(slow.staleSteps()).isEqualTo(3);
        // Executing every step, all past steps are stale as before.
        LatestChunkBlender all = LatestChunkBlender.of(1, 10, 1.0, Interpolation.LINEAR);
        assertThat(all.accept(chunk, 10, 0, 5)).isEqualTo(5);
        assertThat(all.staleSteps()).isEqualTo(5);
    }

    /** The quintic smooth step 6x⁵ − 15x⁴ + 10x³ at x = k/n, by hand as exact fractions (see each test). */
    private static final double S_QUARTER = 53.0 / 512.0;

    @Test
    void crossfadeMovesAlongTheQuinticSmoothStepFromTheOldPlanToTheNewOne() {
        // Old plan 0, new plan 1 arriving at tick 2, F = 3 ticks: α_q = S((q + 1)/4). By hand,
        // S(1/4) = 6/1024 − 15/256 + 10/64 = (6 − 60 + 160)/1024 = 53/512, S(1/2) = (6 − 30 + 40)/32 = 1/2,
        // S(3/4) = (6·243 − 15·324 + 10·432)/1024 = 918/1024 = 459/512 (= 1 − S(1/4)); then 1.
        CrossfadeBlender b = CrossfadeBlender.of(1, 10, 1.0, Interpolation.LINEAR, 3);
        assertThat(b.fadeTicks()).isEqualTo(3);
        b.accept(constant(10, 0.0), 10, 0, 0);
        b.accept(constant(10, 1.0), 10, 2, 2);
        double[] out = new double[1];
        double[] expected = {S_QUARTER, 0.5, 459.0 / 512.0, 1.0, 1.0};
        for (int q = 0; q < expected.length; q++) {
            assertThat(b.actionAt(2 + q, out)).isTrue();
            assertThat(out[0]).as("tick %d", 2 + q).isCloseTo(expected[q], within(1e-15));
        }
        assertThat(b.ticksRemaining(2)).isEqualTo(10);
    }

    @Test
    void crossfadeRemovesTheJumpAtTheSeamWithoutAVelocityStep() {
        // Without a fade the seam jumps by 1.0. With F = 4 the largest tick-to-tick change is
        // S(3/5) − S(2/5) = 0.68256 − 0.31744 = 0.36512 (by hand: S(2/5) = (6·32 − 15·80 + 10·200)/3125
        // = 992/3125 = 0.31744, and S(3/5) = 1 − S(2/5)); the plan's velocity follows α's own rate,
        // 15/8 · 1/(F + 1) = 0.375 per tick at most, and is exactly 0 before the fade and from q = F on.
        CrossfadeBlender faded = CrossfadeBlender.of(1, 16, 1.0, Interpolation.CUBIC_HERMITE, 4);
        LatestChunkBlender hard = LatestChunkBlender.of(1, 16, 1.0, Interpolation.CUBIC_HERMITE);
        for (ChunkBlender b : new ChunkBlender[] {faded, hard}) {
            b.accept(constant(16, 0.0), 16, 0, 0);
        }
        double[] out = new double[1];
        double[] velocity = new double[1];
        double[] acceleration = new double[1];
        double previousFaded = 0;
        double previousHard = 0;
        double worstFaded = 0;
        double worstHard = 0;
        double fastest = 0;
        for (long t = 1; t < 16; t++) {
            if (t == 5) {
                faded.accept(constant(16, 1.0), 16, 5, 5);
                hard.accept(constant(16, 1.0), 16, 5, 5);
            }
            assertThat(faded.stateAt(t, out, velocity, acceleration)).isTrue();
            worstFaded = Math.max(worstFaded, Math.abs(out[0] - previousFaded));
            previousFaded = out[0];
            fastest = Math.max(fastest, velocity[0]);
            if (t < 5 || t >= 9) {
                assertThat(velocity[0]).as("velocity at tick %d", t).isZero();
                assertThat(acceleration[0]).as("acceleration at tick %d", t).isZero();
            } else {
                assertThat(velocity[0]).as("velocity at tick %d", t).isPositive();
            }
            hard.actionAt(t, out);
            worstHard = Math.max(worstHard, Math.abs(out[0] - previousHard));
            previousHard = out[0];
        }
        assertThat(worstHard).isEqualTo(1.0);
        assertThat(worstFaded).isCloseTo(0.36512, within(1e-15));
        assertThat(fastest).isLessThanOrEqualTo(15.0 / 8.0 / 5.0).isGreaterThan(0.3);
    }

    @Test
    void crossfadeUsesTheNewPlanWhereTheOldOneHasEnded() {
        // F = 5: α_0 = S(1/6) = (6 − 90 + 360)/7776 = 276/7776, α_1 = S(1/3) = (6 − 45 + 90)/243 = 51/243,
        // by hand; from tick 3 on the old plan has ended and the new one is used as it is.
        CrossfadeBlender b = CrossfadeBlender.of(1, 10, 1.0, Interpolation.LINEAR, 5);
        b.accept(constant(3, 0.0), 3, 0, 0); // old plan covers ticks 0..2
        b.accept(constant(10, 1.0), 10, 1, 1);
        double[] out = new double[1];
        b.actionAt(1, out);
        assertThat(out[0]).isCloseTo(276.0 / 7776.0, within(1e-15));
        b.actionAt(2, out);
        assertThat(out[0]).isCloseTo(51.0 / 243.0, within(1e-15));
        b.actionAt(3, out);
        assertThat(out[0]).as("old plan ended at tick 2").isEqualTo(1.0);
    }

    @Test
    void crossfadeLengthIsGivenInPolicyStepsAndSpansStepsTimesRatioTicks() {
        assertThat(CrossfadeBlender.of(1, 10, 2.5, Interpolation.LINEAR, 2).fadeTicks()).isEqualTo(5);
        assertThat(CrossfadeBlender.of(1, 10, 50.0, Interpolation.LINEAR, 1).fadeTicks()).isEqualTo(50);
        assertThat(CrossfadeBlender.of(1, 10, 1.0 / 3.0, Interpolation.LINEAR, 2).fadeTicks()).isEqualTo(1);
        assertThat(CrossfadeBlender.of(1, 10, 1.0, Interpolation.LINEAR, 0).fadeTicks()).isZero();
        assertThatThrownBy(() -> CrossfadeBlender.of(1, 10, 1.0, Interpolation.LINEAR, -1))
                .isInstanceOf(IllegalArgumentException.class).hasMessage("crossfade: fadeSteps must be >= 0, got -1");
    }
}
