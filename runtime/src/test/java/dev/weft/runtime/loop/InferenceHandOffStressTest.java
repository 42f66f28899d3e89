package dev.weft.runtime.loop;

import static org.assertj.core.api.Assertions.assertThat;

import dev.weft.runtime.policy.Policy;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * A seeded stress harness for the inference hand-off (the request triple buffer and the result
 * ring of {@link InferenceWorker}): the loop side requests and drains as fast as it can with
 * seeded pauses, the policy takes a seeded time per inference, and every delivered chunk is
 * checked against the request it claims to answer.
 *
 * <p>The request for tick {@code t} carries {@code 4t + j} in value {@code j}, and the policy
 * answers {@code obs[j] + k} at step {@code k}; so a chunk whose values do not match its origin
 * tick mixed two requests (or two results). Across the run, origins must increase strictly (the
 * newest request wins, nothing older comes after something newer), and the counts must balance
 * exactly: every request was either replaced before the worker took it or computed, and every
 * computed result was either delivered or dropped at a full ring.
 */
class InferenceHandOffStressTest {

    static final int OBS = 3;
    static final int STEPS = 8;
    static final int REQUESTS = 50_000;

    @ParameterizedTest(name = "seed {0}")
    @ValueSource(longs = {7, 11, 0xbeef, 99991, 123456789})
    @Timeout(120)
    void everyChunkAnswersItsOwnRequestAndTheCountsBalance(long seed) throws Exception {
        Policy policy = new Policy() {
            final SplittableRandom r = new SplittableRandom(seed ^ 0x9e3779b97f4a7c15L);

            @Override
            public int observationSize() {
                return OBS;
            }

            @Override
            public int chunkLength() {
                return STEPS;
            }

            @Override
            public int actionSize() {
                return OBS;
            }

            @Override
            public void infer(double[] observation, long tick, double[] chunk) {
                // the policy's own check: the tick and the observation came from one request
                if (observation[0] != 4.0 * tick) {
                    throw new IllegalStateException("request mixed: tick " + tick + ", observation " + observation[0]);
                }
                for (int k = 0; k < STEPS; k++) {
                    for (int j = 0; j < OBS; j++) {
                        chunk[k * OBS + j] = observation[j] + k;
                    }
                }
                int x = r.nextInt(100);
                for (int i = x < 80 ? r.nextInt(200) : r.nextInt(5000); i > 0; i--) {
                    Thread.onSpinWait();
                }
            }

            @Override
            public void close() {
            }
        };
        // a small ring, so that results are also dropped at a full ring in some seeds
        InferenceWorker w = new InferenceWorker(policy, LoopClock.system(), 8, "stress-inference");
        w.start();
        SplittableRandom r = new SplittableRandom(seed);
        long[] lastOrigin = {-1};
        long[] delivered = {0};
        String[] failure = {null};
        ChunkSink sink = (chunk, steps, origin, latency, status) -> {
            delivered[0]++;
            if (status != ChunkSink.OK && failure[0] == null) {
                failure[0] = "status " + status + " at origin " + origin + ": " + w.lastFailure();
            }
            for (int k = 0; k < steps; k++) {
                for (int j = 0; j < OBS; j++) {
                    if (chunk[k * OBS + j] != 4.0 * origin + j + k && failure[0] == null) {
                        failure[0] = "chunk of origin " + origin + " holds " + chunk[k * OBS + j] + " at step " + k;
                    }
                }
            }
            if (origin <= lastOrigin[0] && failure[0] == null) {
                failure[0] = "origin " + origin + " after " + lastOrigin[0];
            }
            lastOrigin[0] = origin;
        };
        dev.weft.runtime.policy.PolicyInput input = dev.weft.runtime.policy.PolicyInput.forPolicy(policy);
        double[] obs = input.observation();
        try {
            for (long t = 0; t < REQUESTS; t++) {
                for (int j = 0; j < OBS; j++) {
                    obs[j] = 4.0 * t + j;
                }
                input.stamp(t, t);
                w.request(input, t);
                // drain on most ticks, let results pile up on some; always over the last ticks, so
                // the ring has room for the last result
                if (r.nextInt(100) < 90 || t >= REQUESTS - 2 * 8) {
                    w.drain(t, sink);
                }
                for (int i = r.nextInt(300); i > 0; i--) {
                    Thread.onSpinWait();
                }
            }
            long until = System.nanoTime() + TimeUnit.SECONDS.toNanos(30);
            while (!w.idle() && System.nanoTime() < until) {
                Thread.sleep(1);
            }
            w.drain(REQUESTS, sink);
        } finally {
            w.close();
        }
        assertThat(failure[0]).as("seed " + seed).isNull();
        assertThat(w.requests()).isEqualTo(REQUESTS);
        long computed = w.completed() + w.failed() + w.nonFinite();
        assertThat(w.replacedRequests() + computed).as("replaced + computed = requests").isEqualTo(REQUESTS);
        assertThat(delivered[0] + w.droppedResults()).as("delivered + dropped = computed").isEqualTo(computed);
        // the last request is always computed and delivered once the worker is idle (the ring had room)
        assertThat(lastOrigin[0]).isEqualTo(REQUESTS - 1);
        // both paths were exercised: some requests were replaced, many were computed
        assertThat(w.replacedRequests()).isPositive();
        assertThat(computed).isGreaterThan(100);
    }
}
