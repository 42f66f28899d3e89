package dev.weft.filters;

import static org.assertj.core.api.Assertions.assertThat;

import java.lang.management.ManagementFactory;
import java.util.Random;
import org.junit.jupiter.api.Test;

/**
 * The per-tick paths (accept, actionAt, stateAt, previewMeans, ticksRemaining, smoother apply) allocate nothing, for every
 * blender and interpolation (the natural spline's Thomas solve included) and with the ensemble's taper: measured with
 * the JVM's per-thread allocation counter (com.sun.management.ThreadMXBean), not with timing.
 */
class AllocationTest {

    private static final com.sun.management.ThreadMXBean THREADS =
            (com.sun.management.ThreadMXBean) ManagementFactory.getThreadMXBean();

    private static long allocated() {
        return THREADS.getCurrentThreadAllocatedBytes();
    }

    @Test
    void steadyStateTicksAllocateNothing() {
        ChunkBlender[] blenders = {
            TemporalEnsembleBlender.oldestFirst(7, 16, 5.0, Interpolation.CUBIC_HERMITE, 0.1),
            TemporalEnsembleBlender.newestFirst(7, 16, 5.0, Interpolation.LINEAR, 0.1),
            TemporalEnsembleBlender.oldestFirst(7, 16, 5.0, Interpolation.CUBIC_SPLINE, 0.1, 4.0),
            TemporalEnsembleBlender.newestFirst(7, 16, 5.0, Interpolation.CUBIC_SPLINE, 0.1, 4.0),
            LatestChunkBlender.firstSteps(7, 16, 5.0, Interpolation.CUBIC_HERMITE, 8),
            LatestChunkBlender.of(7, 16, 5.0, Interpolation.CUBIC_SPLINE),
            CrossfadeBlender.of(7, 16, 5.0, Interpolation.LINEAR, 3),
            CrossfadeBlender.of(7, 16, 5.0, Interpolation.CUBIC_SPLINE, 3)};
        Smoother[] smoothers = {ButterworthLowPass.of(7, 500, 20), OneEuroFilter.of(7, 500, 1, 0.1, 1)};
        double[] chunk = new double[16 * 7];
        Random rnd = new Random(1);
        for (int i = 0; i < chunk.length; i++) {
            chunk[i] = rnd.nextGaussian();
        }
        double[] out = new double[7];
        double[] velocity = new double[7];
        double[] acceleration = new double[7];
        int[] runEnds = {1, 2, 4, 6, 9, 12, 16, 22, 29, 39, 52, 68, 89, 117, 153, 200};
        double[] preview = new double[7 * runEnds.length];
        assertThat(allocated()).isPositive();
        long overhead = -(allocated() - allocated());
        long tick = 0;
        long sink = 0;
        for (int round = 0; round < 8; round++) {
            long before = allocated();
            for (int n = 0; n < 20_000; n++, tick++) {
                for (ChunkBlender b : blenders) {
                    if (tick % 10 == 0) {
                        sink += b.accept(chunk, 16, tick - 3, tick);
                    }
                    if (b.stateAt(tick, out, velocity, acceleration) && b.actionAt(tick, out)
                            && b.previewMeans(tick, runEnds, preview) && b.previewMeans(tick, runEnds, 3, preview)) {
                        sink += b.ticksRemaining(tick);
                        for (Smoother s : smoothers) {
                            s.apply(out, out);
                        }
                    }
                }
            }
            long bytes = allocated() - before - overhead;
            // The first rounds include one-off costs of warming up (about two kilobytes, from
            // resolving and compiling code); the steady state that follows must be exactly zero.
            if (round >= 3) {
                assertThat(bytes).as("bytes allocated by 20,000 ticks of eight blenders, round %d", round).isLessThanOrEqualTo(0);
            }
        }
        assertThat(sink).isPositive();
    }
}
