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
import org.openjdk.jmh.infra.BenchmarkParams;

/**
 * The per-tick work of the control loop: the plan's state from the blender, the jerk-limited
 * limiter following it, emit to a discarding port (see {@link TickWorkload}), for D joints and
 * chunk length K. The read-out is O(D) whatever K is, so {@link #tick} should cost about the same
 * for every K at a given D.
 *
 * <p>Beside it: {@link #readOut} (the blender's part alone), {@link #emitOnly} (the frame and the
 * port call alone), and {@link #setPoint}, the same tick with the plan's position handed to the
 * limiter as a target at rest ({@code JerkLimiter.apply(target, command)}), for comparison with
 * the law that follows the plan. Run with {@code -prof gc} in average-time mode:
 * {@code gc.alloc.rate.norm} must read 0 B/op for all four.
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

    /**
     * The plan: OSCILLATING (the limiter at its bounds, mostly on its minimum-time law) or HOLDING
     * (its hold path, the cheapest). Also accepted with {@code -p motion=}: HOLDING_ANY_POSE and
     * CATCHING_UP (see {@link TickWorkload.Motion}).
     */
    @Param({"OSCILLATING", "HOLDING"})
    public TickWorkload.Motion motion;

    private TickWorkload workload;
    private long tick;

    @Setup(Level.Trial)
    public void setUp(BenchmarkParams params) {
        workload = new TickWorkload(joints, chunkLength, 1_000_000L, motion);
        boolean setPointLaw = params.getBenchmark().endsWith(".setPoint");
        boolean previewLaw = params.getBenchmark().endsWith(".previewTick");
        // one window of ticks under the law measured, so the limiter is past its start first
        for (int i = 0; i < TickWorkload.WINDOW; i++) {
            if (setPointLaw) {
                workload.setPointTick(tick++);
            } else if (previewLaw) {
                workload.previewTick(tick++);
            } else {
                workload.tick(tick++);
            }
        }
    }

    /** Plan state, limiter following it, frame and emit: the tick. */
    @Benchmark
    public int tick() {
        return workload.tick(tick++);
    }

    /** The tick of an armed loop: plan state and preview, the limiter following both, frame and emit. */
    @Benchmark
    public int previewTick() {
        return workload.previewTick(tick++);
    }

    /** For comparison: the same tick with the set-point law (the plan's position as a target at rest). */
    @Benchmark
    public int setPoint() {
        return workload.setPointTick(tick++);
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
