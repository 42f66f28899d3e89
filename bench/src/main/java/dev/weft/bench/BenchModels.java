package dev.weft.bench;

import ai.onnxruntime.NodeInfo;
import ai.onnxruntime.OrtEnvironment;
import ai.onnxruntime.OrtException;
import ai.onnxruntime.OrtSession;
import ai.onnxruntime.TensorInfo;
import dev.weft.onnxkit.PolicyModels;
import dev.weft.runtime.policy.ChunkLayout;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;

/**
 * The models the inference benchmarks load, by name:
 * <ul>
 *   <li>{@code example}: the example chunk policy, 12 observations → {@code [1, 16, 6]}, a
 *   12-32-96 perceptron; built in process with the same generator call as
 *   {@code examples/models/example-chunk-policy.onnx}.</li>
 *   <li>{@code mlp1m}: a larger generated perceptron of about one million parameters,
 *   64 observations → 3456 hidden → {@code [1, 16, 14]} (999,008 weights and biases).</li>
 *   <li>any path to an {@code .onnx} file with one input {@code [1, O]} (or {@code [O]}) and a
 *   first output {@code [1, K, D]} or {@code [K, D]}: the demo policy plugs in here, e.g.
 *   {@code -p model=examples/models/demo-policy.onnx}.</li>
 * </ul>
 * Built models are written once per JVM to a temporary file.
 */
public final class BenchModels {

    /** The seed of the example model's weights (as in {@code dev.weft.examples.ExampleModels}). */
    public static final long EXAMPLE_SEED = 20261201L;

    private BenchModels() {
    }

    /** What a benchmark needs to know about a model file. */
    public record Model(Path file, String input, long[] inputShape, int observationSize, ChunkLayout layout) {
    }

    /** Resolves {@code name} to a model file and reads its interface. */
    public static Model resolve(String name) {
        Path file = switch (name) {
            case "example" -> write("example", PolicyModels.chunkPolicy(12, 32, 16, 6, EXAMPLE_SEED).bytes());
            case "mlp1m" -> write("mlp1m", PolicyModels.chunkPolicy(64, 3456, 16, 14, 7L).bytes());
            default -> {
                Path p = Path.of(name);
                if (!Files.isRegularFile(p)) {
                    throw new IllegalArgumentException("model '" + name + "' is neither 'example', 'mlp1m' nor a file");
                }
                yield p;
            }
        };
        return describe(file);
    }

    private static Path write(String stem, byte[] bytes) {
        try {
            Path p = Files.createTempFile("weft-bench-" + stem + "-", ".onnx");
            p.toFile().deleteOnExit();
            Files.write(p, bytes);
            return p;
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    private static Model describe(Path file) {
        OrtEnvironment env = OrtEnvironment.getEnvironment();
        try (OrtSession.SessionOptions o = new OrtSession.SessionOptions();
             OrtSession s = env.createSession(file.toString(), o)) {
            Map<String, NodeInfo> in = s.getInputInfo();
            if (in.size() != 1) {
                throw new IllegalArgumentException(file + ": the benchmark needs a model with one input, found "
                        + in.keySet());
            }
            NodeInfo input = in.values().iterator().next();
            long[] shape = ((TensorInfo) input.getInfo()).getShape();
            long[] fixed = shape.clone();
            long size = 1;
            for (int i = 0; i < fixed.length; i++) {
                if (fixed[i] < 0) {
                    fixed[i] = 1;
                }
                size *= fixed[i];
            }
            NodeInfo out = s.getOutputInfo().values().iterator().next();
            int rank = ((TensorInfo) out.getInfo()).getShape().length;
            ChunkLayout layout = switch (rank) {
                case 3 -> ChunkLayout.BATCH_STEPS_VALUES;
                case 2 -> ChunkLayout.STEPS_VALUES;
                default -> throw new IllegalArgumentException(file + ": output '" + out.getName() + "' has rank " + rank
                        + "; the benchmark reads [1, K, D] or [K, D]");
            };
            return new Model(file, input.getName(), fixed, (int) size, layout);
        } catch (OrtException e) {
            throw new IllegalArgumentException(file + ": ONNX Runtime could not open it: " + e.getMessage(), e);
        }
    }
}
