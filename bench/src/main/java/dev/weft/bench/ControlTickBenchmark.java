package dev.weft.bench;

import java.util.concurrent.TimeUnit;
import org.openjdk.jmh.annotations.Benchmark;
import org.openjdk.jmh.annotations.BenchmarkMode;
import org.openjdk.jmh.annotations.Fork;
import org.openjdk.jmh.annotations.Level;
import org.openjdk.jmh.annotations.Measurement;
import org.openjdk.jmh.annotations.Mode;
import org.openjdk.jmh.annotations.OutputTimeUnit;
import org.openjdk.jmh.annotations.Param;
import org.openjdk.jmh.annotations.Scope;
import org.openjdk.jmh.annotations.Setup;
import org.openjdk.jmh.annotations.State;
import org.openjdk.jmh.annotations.Warmup;

/**
 * The per-tick work of the control loop: blend read-out, jerk-limited limiter, emit to a
 * discarding port (see {@link TickWorkload}), for D joints and chunk length K. The read-out is
 * O(D) whatever K is, so {@link #tick} should cost the same for every K at a given D.
 *
 * <p>Baselines beside it: {@link #readOut} (the blender's part alone) and {@link #emitOnly} (the
 * frame and the port call alone). Run with {@code -prof gc}: {@code gc.alloc.rate.norm} must read
 * 0 B/op for all three.
 */
@State(Scope.Thread)
@BenchmarkMode(Mode.SampleTime)
@OutputTimeUnit(TimeUnit.NANOSECONDS)
@Warmup(iterations = 3, time = 1)
@Measurement(iterations = 5, time = 1)
@Fork(value = 1, jvmArgsAppend = {"-Xms256m", "-Xmx256m", "-XX:+AlwaysPreTouch"})
public class ControlTickBenchmark {

    /** D, values per action. */
    @Param({"6", "14", "28"})
    public int joints;

    /** K, actions per chunk. */
    @Param({"16", "100", "400"})
    public int chunkLength;

    /** The plan: OSCILLATING (the limiter's dearest path) or HOLDING (its cheapest). */
    @Param({"OSCILLATING", "HOLDING"})
    public TickWorkload.Motion motion;

    private TickWorkload workload;
    private long tick;

    @Setup(Level.Trial)
    public void setUp() {
        workload = new TickWorkload(joints, chunkLength, 1_000_000L, motion);
        // one window of ticks, so the limiter is on its periodic path before any measurement
        for (int i = 0; i < TickWorkload.WINDOW; i++) {
            workload.tick(tick++);
        }
    }

    /** Read-out, limiter, frame and emit: the tick. */
    @Benchmark
    public int tick() {
        return workload.tick(tick++);
    }

    /** Baseline: the blender's read-out alone. */
    @Benchmark
    public long readOut() {
        return workload.readOut(tick++);
    }

    /** Baseline: the frame and the port call alone. */
    @Benchmark
    public int emitOnly() {
        return workload.emitOnly(tick++);
    }
}
