package dev.weft.bench;

import dev.weft.filters.Interpolation;
import dev.weft.filters.TemporalEnsembleBlender;
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
 * A K × D chunk accepted into the temporal-ensembling blender as the runtime configures it by
 * default (oldest first, natural cubic spline, tapered with half a chunk; see
 * {@link TickWorkload}), in steady state: each call is a chunk from the observation of the
 * current tick, one tick after the previous one, so it overlaps K − 1 ticks of the plan already
 * there and extends it by one (the case of a policy queried every tick). The cost is O(K·D):
 * validation, the spline's tridiagonal solve, resampling with derivatives, the taper, and
 * merging of every value.
 *
 * <p>Baseline beside it: {@link #copyOnly}, one pass over the same K·D values
 * ({@code System.arraycopy} into a buffer), the least any acceptance must do.
 */
@State(Scope.Thread)
@BenchmarkMode(Mode.AverageTime)
@OutputTimeUnit(TimeUnit.NANOSECONDS)
@Warmup(iterations = 3, time = 1)
@Measurement(iterations = 5, time = 1)
@Fork(value = 1, jvmArgsAppend = {"-Xms256m", "-Xmx256m", "-XX:+AlwaysPreTouch"})
public class ChunkAcceptBenchmark {

    /** D, values per action. */
    @Param({"6", "14", "28"})
    public int joints;

    /** K, actions per chunk. */
    @Param({"16", "100", "400"})
    public int chunkLength;

    private TemporalEnsembleBlender blender;
    private double[] chunk;
    private double[] copy;
    private long tick;

    @Setup(Level.Trial)
    public void setUp() {
        blender = TemporalEnsembleBlender.oldestFirst(joints, chunkLength, 1.0, Interpolation.CUBIC_SPLINE,
                TickWorkload.WEIGHT_RATE, TickWorkload.taperSteps(chunkLength));
        chunk = TickWorkload.chunk(joints, chunkLength, 0, TickWorkload.Motion.OSCILLATING);
        copy = new double[chunk.length];
    }

    /** One chunk into the blender at the next tick. */
    @Benchmark
    public int accept() {
        long now = tick++;
        int r = blender.accept(chunk, chunkLength, now, now);
        if (r != chunkLength) {
            throw new IllegalStateException("blender took " + r + " ticks, expected " + chunkLength);
        }
        return r;
    }

    /** Baseline: one copy of the chunk's values. */
    @Benchmark
    public double[] copyOnly() {
        System.arraycopy(chunk, 0, copy, 0, chunk.length);
        return copy;
    }
}
