package dev.weft.examples;

import dev.weft.onnxkit.PolicyModels;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;

/**
 * Writes the example model that ships in {@code examples/models}: a small chunking MLP
 * (observation of 12 values → 16 actions of 6 joints), seeded, so the file regenerates byte for
 * byte. Run from the repository root:
 *
 * <pre>mvn -q -pl examples -am package exec:java -Dexec.mainClass=dev.weft.examples.ExampleModels</pre>
 */
public final class ExampleModels {

    /** Where the shipped model lives, relative to the repository root. */
    public static final Path CHUNK_POLICY = Path.of("examples", "models", "example-chunk-policy.onnx");

    /** Observation size, hidden width, K and D of the example model. */
    public static final int OBSERVATION = 12;
    public static final int HIDDEN = 32;
    public static final int CHUNK = 16;
    public static final int JOINTS = 6;
    public static final long SEED = 20261201L;

    private ExampleModels() {
    }

    /** The example model's bytes. */
    public static byte[] chunkPolicy() {
        return PolicyModels.chunkPolicy(OBSERVATION, HIDDEN, CHUNK, JOINTS, SEED).bytes();
    }

    public static void main(String[] args) throws IOException {
        Path root = args.length > 0 ? Path.of(args[0]) : Path.of(".");
        Path file = root.resolve(CHUNK_POLICY);
        Files.createDirectories(file.getParent());
        Files.write(file, chunkPolicy());
        System.out.println("wrote " + file);
    }
}
