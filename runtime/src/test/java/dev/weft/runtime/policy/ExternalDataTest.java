package dev.weft.runtime.policy;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import dev.weft.onnxkit.ModelEdits;
import dev.weft.onnxkit.OnnxGraph;
import dev.weft.onnxkit.OnnxGraph.Element;
import dev.weft.onnxkit.PolicyModels;
import dev.weft.runtime.BadInputException;
import java.io.RandomAccessFile;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Models whose weights are kept as ONNX external data, in a file beside the model. */
class ExternalDataTest {

    @TempDir
    Path dir;

    /**
     * {@code actions = reshape(obs · W + b, [1, 2, 2])} with {@code obs [1, 2]}, {@code W [2, 4]}
     * and {@code b [4]}; W and b go to {@code weights.bin}.
     */
    private Path affineModel(Path folder, String location, Map<String, ModelEdits.Placed> placed) throws Exception {
        OnnxGraph g = OnnxGraph.named("affine_external");
        String x = g.input("obs", Element.FLOAT, 1, 2);
        String w = g.floats("W", new float[] {1, 2, 3, 4, 0.5f, -1, 0, 2}, 2, 4);
        String b = g.floats("b", new float[] {0, 0, 0.25f, -1}, 4);
        g.reshapeNamed("actions", g.add(g.matMul(x, w), b), 1, 2, 2);
        g.output("actions", Element.FLOAT, 1, 2, 2);
        byte[] edited = ModelEdits.externalise(g.toBytes(), folder, location, placed, "W", "b");
        Files.createDirectories(folder);
        return Files.write(folder.resolve("affine.onnx"), edited);
    }

    private static PolicySpec spec(Path model) {
        return PolicySpec.singleInput(model, 2, "obs", new OutputSpec("actions", ChunkLayout.BATCH_STEPS_VALUES, 0, 0))
                .withSession(new SessionSettings(1, SessionSettings.Optimization.ALL, false, 1));
    }

    private static double[] infer(OnnxPolicy p, double... obs) {
        double[] chunk = new double[p.chunkLength() * p.actionSize()];
        p.infer(obs, 0, chunk);
        return chunk;
    }

    @Test
    void weightsBesideTheModelAreReadFromTheirFile() throws Exception {
        Map<String, ModelEdits.Placed> placed = new LinkedHashMap<>();
        Path model = affineModel(dir, "weights.bin", placed);
        // the values are no longer in the model: 8 + 4 floats would be 48 bytes of it
        assertThat(placed.get("W")).isEqualTo(new ModelEdits.Placed(0, 32));
        assertThat(placed.get("b")).isEqualTo(new ModelEdits.Placed(4096, 16));
        assertThat(ModelHeader.externalTensors(Files.readAllBytes(model), model.toString())).containsExactly(
                new ModelHeader.ExternalTensor("W", "weights.bin", 0, 32),
                new ModelHeader.ExternalTensor("b", "weights.bin", 4096, 16));
        try (OnnxPolicy p = OnnxPolicy.load(spec(model))) {
            assertThat(p.chunkLength()).isEqualTo(2);
            assertThat(p.actionSize()).isEqualTo(2);
            // by hand: obs (1, 2) · W = (1 + 1, 2 - 2, 3 + 0, 4 + 4), plus b (0, 0, 0.25, -1)
            assertThat(infer(p, 1, 2)).containsExactly(2, 0, 3.25, 7);
            // obs (-2, 4) · W = (-2 + 2, -4 - 4, -6 + 0, -8 + 8), plus b
            assertThat(infer(p, -2, 4)).containsExactly(0, -8, -5.75, -1);
        }
        // the file is what the session reads: W[0][0] = 10 gives y0 = 10 + 1 = 11 for obs (1, 2)
        try (RandomAccessFile f = new RandomAccessFile(dir.resolve("weights.bin").toFile(), "rw")) {
            f.write(ByteBuffer.allocate(4).order(ByteOrder.LITTLE_ENDIAN).putFloat(10f).array());
        }
        try (OnnxPolicy p = OnnxPolicy.load(spec(model))) {
            assertThat(infer(p, 1, 2)).containsExactly(11, 0, 3.25, 7);
        }
        assertThat(ModelSignature.read(model).outputs().get(0).shapeText()).isEqualTo("[1, 2, 2]");
    }

    @Test
    void aChunkPolicyWithExternalWeightsMatchesEjml() throws Exception {
        PolicyModels.Built b = PolicyModels.chunkPolicy(6, 16, 8, 3, 11);
        Map<String, ModelEdits.Placed> placed = new LinkedHashMap<>();
        byte[] edited = ModelEdits.externalise(b.bytes(), dir, "mlp.weights", placed, "w1", "w2");
        Path model = Files.write(dir.resolve("mlp.onnx"), edited);
        PolicySpec spec = PolicySpec.singleInput(model, 6, "obs",
                new OutputSpec("actions", ChunkLayout.BATCH_STEPS_VALUES, 0, 0));
        try (OnnxPolicy p = OnnxPolicy.load(spec)) {
            SplittableRandom r = new SplittableRandom(3);
            double[] obs = new double[6];
            for (int i = 0; i < obs.length; i++) {
                obs[i] = r.nextDouble() * 2 - 1;
            }
            double[] chunk = new double[8 * 3];
            p.infer(obs, 0, chunk);
            // checked against EJML (reference library): the same forward pass in float64
            double[] expected = EjmlReference.forward(b.mlp(), obs);
            for (int i = 0; i < expected.length; i++) {
                assertThat(chunk[i]).as("value %d", i)
                        .isCloseTo(expected[i], org.assertj.core.data.Offset.offset(OnnxPolicyTest.FLOAT32_TOLERANCE));
            }
        }
    }

    @Test
    void aMissingDataFileNamesTheModelTheTensorAndTheFile() throws Exception {
        Path model = affineModel(dir, "weights.bin", new LinkedHashMap<>());
        Path data = dir.resolve("weights.bin");
        Files.delete(data);
        String expected = model + " initializer 'W': external data file " + data.toAbsolutePath().normalize()
                + " (\"weights.bin\") does not exist; keep it beside the model";
        assertThatThrownBy(() -> OnnxPolicy.load(spec(model)))
                .isInstanceOf(BadInputException.class).hasMessage(expected);
        assertThatThrownBy(() -> ModelSignature.read(model))
                .isInstanceOf(BadInputException.class).hasMessage(expected);
    }

    @Test
    void aDataFileTooShortForItsTensorIsRefused() throws Exception {
        Path model = affineModel(dir, "weights.bin", new LinkedHashMap<>());
        Path data = dir.resolve("weights.bin");
        try (RandomAccessFile f = new RandomAccessFile(data.toFile(), "rw")) {
            f.setLength(4100);
        }
        assertThatThrownBy(() -> OnnxPolicy.load(spec(model)))
                .isInstanceOf(BadInputException.class)
                .hasMessage(model + " initializer 'b': external data file " + data.toAbsolutePath().normalize()
                        + " holds 4100 bytes; the tensor asks for 16 bytes from offset 4096");
    }

    @Test
    void anOffsetThatIsNotAWholeNumberIsRefusedBeforeAnythingIsOpened() throws Exception {
        Path model = affineModel(dir, "weights.bin", new LinkedHashMap<>());
        // rewrite W's "offset" entry with the ONNX standard's own protobuf classes
        ai.onnx.proto.OnnxMl.ModelProto.Builder m = ai.onnx.proto.OnnxMl.ModelProto.parseFrom(Files.readAllBytes(model))
                .toBuilder();
        ai.onnx.proto.OnnxMl.TensorProto.Builder w = m.getGraphBuilder().getInitializerBuilder(0);
        assertThat(w.getName()).isEqualTo("W");
        w.setExternalData(1, w.getExternalData(1).toBuilder().setValue("4k"));
        Files.write(model, m.build().toByteArray());
        assertThatThrownBy(() -> OnnxPolicy.load(spec(model)))
                .isInstanceOf(BadInputException.class)
                .hasMessage(model + " initializer 'W': external_data \"offset\" must be a whole number >= 0, got \"4k\"");
    }

    @Test
    void aDataFileOutsideTheModelsFolderIsRefused() throws Exception {
        Path models = dir.resolve("models");
        Files.createDirectories(models);
        Path model = affineModel(models, "../weights.bin", new LinkedHashMap<>());
        assertThat(dir.resolve("weights.bin")).exists();
        assertThatThrownBy(() -> OnnxPolicy.load(spec(model)))
                .isInstanceOf(BadInputException.class)
                .hasMessage(model + " initializer 'W': external data file \"../weights.bin\" is not a file inside"
                        + " the model's folder " + models.toAbsolutePath().normalize());
    }
}
