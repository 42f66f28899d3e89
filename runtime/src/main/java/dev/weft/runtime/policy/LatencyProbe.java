package dev.weft.runtime.policy;

import java.util.SplittableRandom;
import org.HdrHistogram.Histogram;

/** Measures a policy's inference latency on the calling thread, before a run. */
public final class LatencyProbe {

    private LatencyProbe() {
    }

    /**
     * Times {@code runs} inference calls on seeded observations (uniform in [−1, 1]).
     *
     * @return the latencies in nanoseconds
     */
    public static Histogram measure(Policy policy, int runs) {
        Histogram h = new Histogram(60_000_000_000L, 3);
        for (long v : samples(policy, runs)) {
            h.recordValue(Math.min(v, h.getHighestTrackableValue()));
        }
        return h;
    }

    /** The latency of each of {@code runs} calls, nanoseconds, in call order. */
    public static long[] samples(Policy policy, int runs) {
        long[] out = new long[runs];
        double[] obs = new double[policy.observationSize()];
        double[] chunk = new double[policy.chunkLength() * policy.actionSize()];
        SplittableRandom r = new SplittableRandom(1);
        for (int i = 0; i < runs; i++) {
            for (int j = 0; j < obs.length; j++) {
                obs[j] = r.nextDouble() * 2 - 1;
            }
            long t0 = System.nanoTime();
            policy.infer(obs, i, chunk);
            out[i] = System.nanoTime() - t0;
        }
        return out;
    }
}
