package dev.weft.runtime.loop;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.weft.runtime.policy.InputBinding;
import org.junit.jupiter.api.Test;

class SampleHistoryTest {

    private static final long MS = 1_000_000L;

    /** Two values per sample: the time in ms and ten times it, so a sample names itself. */
    private static double[] sample(long ms) {
        return new double[] {ms, 10.0 * ms};
    }

    private static SampleHistory keptEvery(long fromMs, long toMs, long stepMs, int capacity) {
        SampleHistory h = new SampleHistory(2, capacity);
        for (long t = fromMs; t <= toMs; t += stepMs) {
            h.keep(t * MS, sample(t));
        }
        return h;
    }

    @Test
    void eachGridPointTakesTheLatestSampleAtOrBeforeItOldestFirst() {
        // samples every 4 ms, grid 10 ms apart: points at 100, 90, 80 ms take 100, 88, 80
        SampleHistory h = keptEvery(0, 100, 4, 64);
        double[] out = new double[6];
        assertThat(h.gather(new InputBinding.History(3, 10 * MS, true, false), 100 * MS, 0, out)).isTrue();
        assertThat(out).containsExactly(80, 800, 88, 880, 100, 1000);
        // without the current sample: points at 90, 80, 70 ms
        h.gather(new InputBinding.History(3, 10 * MS, false, false), 100 * MS, 0, out);
        assertThat(out).containsExactly(68, 680, 80, 800, 88, 880);
    }

    @Test
    void linearInterpolationIsTheStraightLineBetweenTheSamplesAroundAPoint() {
        SampleHistory h = keptEvery(0, 96, 4, 64);
        double[] out = new double[6];
        h.gather(new InputBinding.History(3, 10 * MS, true, true), 99 * MS, 0, out);
        // the observation time 99 ms is after the newest sample (96): it takes the newest;
        // 89 ms lies a quarter of the way from 88 to 92, 79 ms three quarters from 76 to 80
        assertThat(out[0]).isCloseTo(79, within(1e-12));
        assertThat(out[1]).isCloseTo(790, within(1e-12));
        assertThat(out[2]).isCloseTo(89, within(1e-12));
        assertThat(out[3]).isCloseTo(890, within(1e-12));
        assertThat(out[4]).isEqualTo(96);
    }

    @Test
    void aPointBeforeTheFirstSampleTakesTheFirstSample() {
        SampleHistory h = keptEvery(50, 60, 5, 64);
        double[] out = new double[8];
        h.gather(new InputBinding.History(4, 5 * MS, true, false), 55 * MS, 0, out);
        // points at 40, 45, 50, 55 ms
        assertThat(out).containsExactly(50, 500, 50, 500, 50, 500, 55, 550);
    }

    @Test
    void aSampleStampedALittleAfterItsGridPointStillStandsForIt() {
        // a 50 Hz stream whose stamps jitter by up to 0.3 ms around 20 ms steps; the grid's spacing
        // is the stream's period. Sample n names itself n (value n, 10 n).
        SampleHistory h = new SampleHistory(2, 64);
        long[] jitter = {0, 300_000, -200_000, 250_000, -300_000, 100_000, 0};
        for (int n = 0; n < jitter.length; n++) {
            h.keep(n * 20 * MS + jitter[n], new double[] {n, 10 * n});
        }
        long t = 6 * 20 * MS; // the newest sample's stamp (no jitter)
        double[] out = new double[8];
        InputBinding.History grid = new InputBinding.History(4, 20 * MS, false, false);
        // strictly at or before: the points at 100, 80, 60, 40 ms miss samples 5 and 3, stamped late
        h.gather(grid, t, 0, out);
        assertThat(out).containsExactly(2, 20, 2, 20, 4, 40, 4, 40);
        // allowing 2 ms of lateness (the loop allows min(spacing / 2, control period)): samples 2 .. 5
        h.gather(grid, t, 2 * MS, out);
        assertThat(out).containsExactly(2, 20, 3, 30, 4, 40, 5, 50);
    }

    @Test
    void onlyNewerSamplesAreKeptSoAStreamSeenTwiceIsKeptOnce() {
        SampleHistory h = new SampleHistory(2, 8);
        assertThat(h.keep(10 * MS, sample(10))).isTrue();
        assertThat(h.keep(10 * MS, sample(10))).isFalse();
        assertThat(h.keep(9 * MS, sample(9))).isFalse();
        assertThat(h.keep(11 * MS, sample(11))).isTrue();
        assertThat(h.count()).isEqualTo(2);
    }

    @Test
    void theRingKeepsTheNewestSamplesAndStillAnswersInTimeOrder() {
        // 40 samples through a ring of 16: the 16 newest (96 .. 156 ms) remain
        SampleHistory h = keptEvery(0, 156, 4, 16);
        assertThat(h.count()).isEqualTo(16);
        double[] out = new double[6];
        h.gather(new InputBinding.History(3, 20 * MS, true, false), 156 * MS, 0, out);
        assertThat(out).containsExactly(116, 1160, 136, 1360, 156, 1560);
        // a point older than everything kept takes the oldest kept
        h.gather(new InputBinding.History(3, 50 * MS, true, false), 156 * MS, 0, out);
        assertThat(out).containsExactly(96, 960, 104, 1040, 156, 1560);
    }

    @Test
    void theCapacityCoversTheSpanTheLatenessAndAMargin() {
        // 3 points 100 ms apart without the current one span 300 ms; at 2 ms a tick, with 1 s of
        // lateness: 650 ticks, and 4 more
        assertThat(SampleHistory.capacityFor(300 * MS, 1000 * MS, 2 * MS)).isEqualTo(654);
        assertThat(new InputBinding.History(3, 100 * MS, false, false).spanNanos()).isEqualTo(300 * MS);
        assertThat(new InputBinding.History(3, 100 * MS, true, false).spanNanos()).isEqualTo(200 * MS);
    }
}
