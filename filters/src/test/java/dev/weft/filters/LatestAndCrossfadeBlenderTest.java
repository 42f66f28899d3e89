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
    void crossfadeMovesLinearlyFromTheOldPlanToTheNewOne() {
        // Old plan 0, new plan 1 arriving at tick 2, F = 3 ticks: α = 1/4, 2/4, 3/4, then 1.
        CrossfadeBlender b = CrossfadeBlender.of(1, 10, 1.0, Interpolation.LINEAR, 3);
        assertThat(b.fadeTicks()).isEqualTo(3);
        b.accept(constant(10, 0.0), 10, 0, 0);
        b.accept(constant(10, 1.0), 10, 2, 2);
        double[] out = new double[1];
        double[] expected = {0.25, 0.5, 0.75, 1.0, 1.0};
        for (int q = 0; q < expected.length; q++) {
            assertThat(b.actionAt(2 + q, out)).isTrue();
            assertThat(out[0]).as("tick %d", 2 + q).isCloseTo(expected[q], within(1e-15));
        }
        assertThat(b.ticksRemaining(2)).isEqualTo(10);
    }

    @Test
    void crossfadeRemovesTheJumpAtTheSeam() {
        // Without a fade the seam jumps by 1.0; with F = 4 no tick-to-tick change exceeds 1/5.
        CrossfadeBlender faded = CrossfadeBlender.of(1, 16, 1.0, Interpolation.CUBIC_HERMITE, 4);
        LatestChunkBlender hard = LatestChunkBlender.of(1, 16, 1.0, Interpolation.CUBIC_HERMITE);
        for (ChunkBlender b : new ChunkBlender[] {faded, hard}) {
            b.accept(constant(16, 0.0), 16, 0, 0);
        }
        double[] out = new double[1];
        double previousFaded = 0;
        double previousHard = 0;
        double worstFaded = 0;
        double worstHard = 0;
        for (long t = 1; t < 16; t++) {
            if (t == 5) {
                faded.accept(constant(16, 1.0), 16, 5, 5);
                hard.accept(constant(16, 1.0), 16, 5, 5);
            }
            faded.actionAt(t, out);
            worstFaded = Math.max(worstFaded, Math.abs(out[0] - previousFaded));
            previousFaded = out[0];
            hard.actionAt(t, out);
            worstHard = Math.max(worstHard, Math.abs(out[0] - previousHard));
            previousHard = out[0];
        }
        assertThat(worstHard).isEqualTo(1.0);
        assertThat(worstFaded).isCloseTo(0.2, within(1e-15));
    }

    @Test
    void crossfadeUsesTheNewPlanWhereTheOldOneHasEnded() {
        CrossfadeBlender b = CrossfadeBlender.of(1, 10, 1.0, Interpolation.LINEAR, 5);
        b.accept(constant(3, 0.0), 3, 0, 0); // old plan covers ticks 0..2
        b.accept(constant(10, 1.0), 10, 1, 1);
        double[] out = new double[1];
        b.actionAt(1, out);
        assertThat(out[0]).isCloseTo(1.0 / 6.0, within(1e-15));
        b.actionAt(2, out);
        assertThat(out[0]).isCloseTo(2.0 / 6.0, within(1e-15));
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
