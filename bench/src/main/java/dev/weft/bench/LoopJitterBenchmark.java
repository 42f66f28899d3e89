package dev.weft.bench;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.loop.ChunkSink;
import dev.weft.runtime.loop.InferenceWorker;
import dev.weft.runtime.loop.LoopClock;
import dev.weft.runtime.loop.WaitStrategy;
import dev.weft.runtime.policy.OnnxPolicy;
import dev.weft.runtime.policy.OutputSpec;
import dev.weft.runtime.policy.PolicySpec;
import java.io.IOException;
import java.io.PrintStream;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.concurrent.TimeUnit;
import org.HdrHistogram.Histogram;
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
import org.openjdk.jmh.annotations.TearDown;
import org.openjdk.jmh.annotations.Warmup;
import org.openjdk.jmh.infra.IterationParams;
import org.openjdk.jmh.runner.IterationType;

/**
 * The fixed-rate wait of the control loop: {@link WaitStrategy#parkThenSpin} on
 * {@link LoopClock#system()} toward absolute deadlines {@code t0 + n·Δc}, as the loop keeps them.
 * Each call waits for the next deadline; a deadline already more than a period past is skipped, as
 * the loop does.
 *
 * <p>Two measures come out:
 * <ul>
 *   <li>JMH's sample times: the time of each call, which is the period from one wake-up to the
 *   next; its distance from Δc is the <b>period error</b>.</li>
 *   <li>The <b>wake-up latency</b>, how late each wake-up is against its absolute deadline,
 *   recorded (measurement iterations only) into an HdrHistogram and printed at the end of the
 *   trial. It is the quantity {@code cyclictest} reports, so the two compare directly. When the
 *   system property {@code weft.bench.jitter.dir} names a directory, the histogram is also written
 *   there as {@code jitter-<rateHz>-<load>-<spinMicros>.txt}: one line per microsecond,
 *   {@code <µs> <count>}.</li>
 * </ul>
 *
 * <p>{@code load = inference}: an {@link InferenceWorker} runs the {@code mlp1m} policy on its own
 * thread, requested whenever it is idle and drained every tick, exactly as the loop drives it, so
 * the other core is busy with ONNX Runtime while the loop waits.
 */
@State(Scope.Thread)
@BenchmarkMode(Mode.SampleTime)
@OutputTimeUnit(TimeUnit.MICROSECONDS)
@Warmup(iterations = 1, time = 2)
@Measurement(iterations = 5, time = 2)
@Fork(value = 1, jvmArgsAppend = {"-Xms256m", "-Xmx256m", "-XX:+AlwaysPreTouch"})
public class LoopJitterBenchmark {

    @Param({"500", "1000"})
    public int rateHz;

    /** {@code idle} or {@code inference}. */
    @Param({"idle", "inference"})
    public String load;

    /** The spin window before each deadline, µs (0: park only; 200: the runtime's default). */
    @Param({"0", "200"})
    public int spinMicros;

    /** The model of the inference load ({@code mlp1m}, {@code example} or a path). */
    @Param({"mlp1m"})
    public String loadModel;

    private final LoopClock clock = LoopClock.system();
    private WaitStrategy wait;
    private long period;
    private long t0;
    private long n;
    private long skipped;
    private boolean measuring;
    private final Histogram latency = new Histogram(TimeUnit.SECONDS.toNanos(1), 3);

    private OnnxPolicy policy;
    private InferenceWorker worker;
    private dev.weft.runtime.policy.PolicyInput observation;
    private long chunksSeen;
    private final ChunkSink sink = (chunk, steps, originTick, latencyNanos, status) -> chunksSeen++;

    @Setup(Level.Trial)
    public void setUp() throws BadInputException {
        period = 1_000_000_000L / rateHz;
        wait = WaitStrategy.parkThenSpin(TimeUnit.MICROSECONDS.toNanos(spinMicros));
        if (load.equals("inference")) {
            BenchModels.Model m = BenchModels.resolve(loadModel);
            policy = OnnxPolicy.load(PolicySpec.singleInput(m.file(), m.observationSize(), m.input(),
                    new OutputSpec(null, m.layout(), 0, 0)));
            observation = dev.weft.runtime.policy.PolicyInput.forPolicy(policy);
            worker = new InferenceWorker(policy, clock, 64, "bench-inference");
            worker.start();
        } else if (!load.equals("idle")) {
            throw new IllegalArgumentException("load must be 'idle' or 'inference', got '" + load + "'");
        }
        // record the histogram's whole range once so no first-time branch is met while measuring
        for (long v = 1; v < TimeUnit.SECONDS.toNanos(1); v = v * 3 + 1) {
            latency.recordValue(v);
        }
        latency.reset();
    }

    /** A new schedule at the start of each iteration: the pause between iterations is not a late wake-up. */
    @Setup(Level.Iteration)
    public void beginIteration(IterationParams params) {
        measuring = params.getType() == IterationType.MEASUREMENT;
        t0 = clock.nanoTime() + period;
        n = 0;
    }

    @TearDown(Level.Trial)
    public void tearDown() {
        if (worker != null) {
            worker.close();
            policy.close();
        }
        PrintStream out = System.out;
        out.printf("%nwake-up latency, %d Hz, %s, spin %d us: %d samples, %d deadlines skipped%n", rateHz, load,
                spinMicros, latency.getTotalCount(), skipped);
        out.printf("  p50 %.1f us  p90 %.1f us  p99 %.1f us  p99.9 %.1f us  p99.99 %.1f us  max %.1f us%n",
                us(latency.getValueAtPercentile(50)), us(latency.getValueAtPercentile(90)),
                us(latency.getValueAtPercentile(99)), us(latency.getValueAtPercentile(99.9)),
                us(latency.getValueAtPercentile(99.99)), us(latency.getMaxValue()));
        if (worker != null) {
            out.printf("  inference load: %d chunks computed, %d drained%n", worker.completed(), chunksSeen);
        }
        String dir = System.getProperty("weft.bench.jitter.dir");
        if (dir != null) {
            writeHistogram(Path.of(dir).resolve("jitter-" + rateHz + "-" + load + "-" + spinMicros + ".txt"));
        }
    }

    private static double us(long nanos) {
        return nanos / 1000.0;
    }

    private void writeHistogram(Path file) {
        long maxUs = latency.getMaxValue() / 1000;
        long[] counts = new long[(int) maxUs + 1];
        for (var v : latency.recordedValues()) {
            long us = v.getValueIteratedTo() / 1000;
            counts[(int) Math.min(us, maxUs)] += v.getCountAtValueIteratedTo();
        }
        try {
            Files.createDirectories(file.getParent());
            StringBuilder b = new StringBuilder();
            b.append("# weft wake-up latency, ").append(rateHz).append(" Hz, ").append(load).append(", spin ")
                    .append(spinMicros).append(" us; columns: microseconds late, samples\n");
            for (int i = 0; i < counts.length; i++) {
                if (counts[i] != 0) {
                    b.append(i).append(' ').append(counts[i]).append('\n');
                }
            }
            Files.writeString(file, b);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    /** Waits for the next deadline; returns how late the wake-up was, ns. */
    @Benchmark
    public long waitForDeadline() {
        long deadline = t0 + n * period;
        wait.awaitDeadline(clock, deadline);
        long now = clock.nanoTime();
        long late = now - deadline;
        if (measuring) {
            latency.recordValue(Math.min(late, latency.getHighestTrackableValue()));
        }
        if (worker != null) {
            if (worker.idle()) {
                observation.stamp(n, 0);
                worker.request(observation, n);
            }
            worker.drain(n, sink);
        }
        long next = n + 1;
        long behind = (clock.nanoTime() - t0) / period;
        if (behind > next) {
            skipped += behind - next;
            next = behind;
        }
        n = next;
        return late;
    }
}
