package dev.weft.runtime.loop;

import static org.assertj.core.api.Assertions.assertThat;

import dev.weft.runtime.dryrun.RecordingSource;
import dev.weft.runtime.policy.InputBinding;
import dev.weft.runtime.policy.Policy;
import dev.weft.runtime.policy.PolicyInput;
import dev.weft.runtime.recording.Recording;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import org.junit.jupiter.api.Test;

/**
 * The history a query sees, and the origin its chunk gets, come from the observation stream and the
 * observation's time alone: not from when queries happen or how long inference takes.
 */
class HistoryGridTest {

    /** Recording: 250 Hz, 3 values per sample; the loop runs at 500 Hz (two ticks per sample). */
    private static final double SAMPLE = 0.004;
    private static final int SAMPLES = 500;
    private static final long MS = 1_000_000L;
    /** Three previous observations, 20 ms (five samples) apart, without the current one. */
    private static final InputBinding.History GRID = new InputBinding.History(3, 20 * MS, false, false);

    private static Recording recording() {
        double[] times = new double[SAMPLES];
        double[] obs = new double[SAMPLES * 3];
        for (int i = 0; i < SAMPLES; i++) {
            times[i] = i * SAMPLE;
            for (int j = 0; j < 3; j++) {
                obs[i * 3 + j] = 0.3 * Math.sin(0.7 * i * SAMPLE * (j + 1)) + 0.01 * j;
            }
        }
        return new Recording("sines", times, obs, new double[SAMPLES * 3], List.of("a", "b", "c"),
                List.of("j0", "j1", "j2"));
    }

    /** Holds the observed pose; keeps what every call was given, by observation time. */
    static final class Witness implements Policy {
        final Map<Long, double[]> historyAt = new TreeMap<>();
        final Map<Long, Long> originAt = new TreeMap<>();
        int calls;

        @Override
        public int observationSize() {
            return 3;
        }

        @Override
        public int chunkLength() {
            return 10;
        }

        @Override
        public int actionSize() {
            return 3;
        }

        @Override
        public List<InputBinding.History> histories() {
            return List.of(GRID);
        }

        @Override
        public void infer(PolicyInput input, double[] chunk) {
            calls++;
            historyAt.put(input.timeNanos(), input.history(0).clone());
            originAt.put(input.timeNanos(), input.tick());
            infer(input.observation(), input.tick(), chunk);
        }

        @Override
        public void infer(double[] observation, long tick, double[] chunk) {
            for (int k = 0; k < 10; k++) {
                System.arraycopy(observation, 0, chunk, k * 3, 3);
            }
        }

        @Override
        public void close() {
        }
    }

    private static Witness replay(long latencyTicks) throws Exception {
        LoopFixture f = new LoopFixture();
        f.latencyTicks = latencyTicks;
        Recording r = recording();
        f.source = new RecordingSource(r, f.clock);
        f.port = new ControlLoopTest.RecordingPort();
        Witness w = new Witness();
        ControlLoop loop = f.build(w);
        loop.prepare();
        // 1.9 s of the 2 s recording, queried whenever the policy is free
        for (int n = 0; n < 950; n++) {
            loop.runTick();
        }
        return w;
    }

    @Test
    void theSameRecordingFeedsIdenticalHistoriesAtZeroTwoAndFiveTicksOfLatency() throws Exception {
        Witness w0 = replay(0);
        Witness w2 = replay(2);
        Witness w5 = replay(5);
        Recording r = recording();
        double[] sample = new double[3];
        long t0 = 1_000_000_000L;
        for (Witness w : List.of(w0, w2, w5)) {
            assertThat(w.historyAt).hasSizeGreaterThan(30);
            // queried whenever the policy is free, but each observation once: the 250 Hz stream is
            // slower than the 500 Hz loop, and a second query of the same sample would weigh it twice
            assertThat(w.calls).isEqualTo(w.historyAt.size());
            for (Map.Entry<Long, double[]> e : w.historyAt.entrySet()) {
                // the observation's time is a sample's time; the grid 60, 40, 20 ms before it lands on
                // samples i-15, i-10, i-5 (clamped to the first sample): worked out here by hand, not
                // by the loop's sample ring
                int i = Math.toIntExact((e.getKey() - t0) / (4 * MS));
                assertThat(e.getKey() - t0).isEqualTo(i * 4 * MS);
                double[] want = new double[9];
                for (int slot = 0; slot < 3; slot++) {
                    r.observation(Math.max(0, i - 15 + 5 * slot), sample);
                    System.arraycopy(sample, 0, want, slot * 3, 3);
                }
                assertThat(e.getValue()).as("history at sample %d", i).containsExactly(want);
                // the chunk's origin is the observation's tick (2 control ticks per sample), not the
                // tick the query was made at (with 5 ticks of latency the policy is free again at odd
                // ticks, when the newest sample is a tick old)
                assertThat(w.originAt.get(e.getKey())).as("origin of sample %d", i).isEqualTo(2L * i);
            }
        }
        // the queries happened at different times (the samples queried differ), yet wherever two runs
        // queried the same observation they fed the same history, bit for bit
        assertThat(w0.historyAt.keySet()).isNotEqualTo(w5.historyAt.keySet());
        int common = 0;
        for (Witness other : List.of(w2, w5)) {
            for (Map.Entry<Long, double[]> e : other.historyAt.entrySet()) {
                double[] base = w0.historyAt.get(e.getKey());
                if (base != null) {
                    common++;
                    assertThat(Arrays.equals(base, e.getValue())).isTrue();
                }
            }
        }
        assertThat(common).isGreaterThan(20);
    }

    @Test
    void aDueQueryTheBusyPolicyCannotTakeIsDeferredAndTheScheduleStaysOnItsGrid() throws Exception {
        LoopFixture f = new LoopFixture();
        f.latencyTicks = 2;
        f.queryEvery = 1;
        // a source with a new stamp every tick, so that only the busy policy holds a query back
        f.source = new FixedSource(new double[3], f.clock);
        f.port = new ControlLoopTest.RecordingPort();
        Witness w = new Witness();
        ControlLoop loop = f.build(w);
        loop.prepare();
        for (int n = 0; n < 30; n++) {
            loop.runTick();
        }
        // a query is due every tick; each takes two ticks and its result is drained before the
        // tick's request, so the policy takes a query at ticks 0, 2, 4, ... 28 and misses the due
        // ticks between them, which are counted; the result of tick 28's query is due at tick 30
        assertThat(w.calls).isEqualTo(15);
        assertThat(loop.status().deferredQueries()).isEqualTo(15);
        assertThat(loop.status().inferences()).isEqualTo(14);
    }
}
