package dev.weft.bench;

import ai.onnxruntime.OnnxTensor;
import ai.onnxruntime.OrtEnvironment;
import ai.onnxruntime.OrtException;
import ai.onnxruntime.OrtSession;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.policy.OnnxPolicy;
import dev.weft.runtime.policy.OutputSpec;
import dev.weft.runtime.policy.PolicySpec;
import dev.weft.runtime.policy.SessionSettings;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.FloatBuffer;
import java.util.Map;
import java.util.SplittableRandom;
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
import org.openjdk.jmh.annotations.TearDown;
import org.openjdk.jmh.annotations.Warmup;

/**
 * One inference: weft's {@link OnnxPolicy#infer} (observation {@code double[]} in, chunk
 * {@code double[]} out) against bare ONNX Runtime on the same model file, the same session
 * options and the same observation: the observation written as floats into a preallocated
 * direct input tensor, {@code OrtSession.run}, the output's floats read out. The ratio
 * {@code weft / bareOrt} is weft's wrapper overhead.
 *
 * <p>{@code model} is {@code example}, {@code mlp1m} or a path to an ONNX file (see
 * {@link BenchModels}); {@code threads} is ONNX Runtime's intra-op thread count, for both sides.
 */
@State(Scope.Thread)
@BenchmarkMode(Mode.AverageTime)
@OutputTimeUnit(TimeUnit.MICROSECONDS)
@Warmup(iterations = 3, time = 1)
@Measurement(iterations = 5, time = 1)
@Fork(value = 1, jvmArgsAppend = {"-Xms256m", "-Xmx256m", "-XX:+AlwaysPreTouch"})
public class InferenceBenchmark {

    @Param({"example", "mlp1m"})
    public String model;

    @Param({"1", "2"})
    public int threads;

    private OnnxPolicy policy;
    private double[] observation;
    private double[] chunk;

    private OrtSession.SessionOptions bareOptions;
    private OrtSession bare;
    private OnnxTensor bareInput;
    private FloatBuffer bareInputFloats;
    private Map<String, OnnxTensor> bareInputs;
    private float[] bareChunk;

    @Setup(Level.Trial)
    public void setUp() throws BadInputException, OrtException {
        BenchModels.Model m = BenchModels.resolve(model);
        SessionSettings settings = SessionSettings.DEFAULTS.withIntraOpThreads(threads);
        policy = OnnxPolicy.load(PolicySpec.singleInput(m.file(), m.observationSize(), m.input(),
                new OutputSpec(null, m.layout(), 0, 0)).withSession(settings));
        observation = new double[m.observationSize()];
        SplittableRandom r = new SplittableRandom(11);
        for (int i = 0; i < observation.length; i++) {
            observation[i] = r.nextDouble(-1, 1);
        }
        chunk = new double[policy.chunkLength() * policy.actionSize()];

        // the same options weft sets (OnnxPolicy.sessionOptions), written out with the public API
        OrtEnvironment env = OrtEnvironment.getEnvironment();
        bareOptions = new OrtSession.SessionOptions();
        bareOptions.setIntraOpNumThreads(threads);
        bareOptions.setInterOpNumThreads(1);
        bareOptions.setExecutionMode(OrtSession.SessionOptions.ExecutionMode.SEQUENTIAL);
        bareOptions.setOptimizationLevel(OrtSession.SessionOptions.OptLevel.ALL_OPT);
        bareOptions.addConfigEntry("session.intra_op.allow_spinning", "0");
        bareOptions.addConfigEntry("session.inter_op.allow_spinning", "0");
        bare = env.createSession(m.file().toString(), bareOptions);
        bareInputFloats = ByteBuffer.allocateDirect(observation.length * Float.BYTES).order(ByteOrder.nativeOrder())
                .asFloatBuffer();
        bareInput = OnnxTensor.createTensor(env, bareInputFloats, m.inputShape());
        bareInputs = Map.of(m.input(), bareInput);
        bareChunk = new float[chunk.length];

        // both sides give the same chunk (float32 model: weft widens the same floats)
        policy.infer(observation, 0, chunk);
        bareOrt();
        for (int i = 0; i < chunk.length; i++) {
            if (chunk[i] != bareChunk[i]) {
                throw new IllegalStateException("weft and bare ONNX Runtime differ at value " + i + ": " + chunk[i]
                        + " vs " + bareChunk[i]);
            }
        }
    }

    @TearDown(Level.Trial)
    public void tearDown() throws OrtException {
        policy.close();
        bareInput.close();
        bare.close();
        bareOptions.close();
    }

    /** weft: {@code OnnxPolicy.infer}. */
    @Benchmark
    public double[] weft() {
        policy.infer(observation, 0, chunk);
        return chunk;
    }

    /** Baseline: bare {@code OrtSession.run} with the input written and the output read. */
    @Benchmark
    public float[] bareOrt() throws OrtException {
        for (int i = 0; i < observation.length; i++) {
            bareInputFloats.put(i, (float) observation[i]);
        }
        try (OrtSession.Result result = bare.run(bareInputs)) {
            FloatBuffer out = ((OnnxTensor) result.get(0)).getFloatBuffer();
            out.get(bareChunk, 0, bareChunk.length);
        }
        return bareChunk;
    }
}
