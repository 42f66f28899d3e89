package dev.weft.runtime.policy;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import dev.weft.onnxkit.OnnxGraph;
import dev.weft.onnxkit.OnnxGraph.Element;
import dev.weft.onnxkit.PolicyModels;
import dev.weft.onnxkit.PolicyModels.Built;
import dev.weft.runtime.BadInputException;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class OnnxPolicyTest {

    /** float32 arithmetic against EJML's float64: a few ulps of float32 on values of order 1. */
    static final double FLOAT32_TOLERANCE = 2e-5;

    @TempDir
    Path dir;

    private Path write(String name, Built b) throws IOException {
        Path p = dir.resolve(name);
        Files.write(p, b.bytes());
        return p;
    }

    private static double[] randomObservation(SplittableRandom r, int n) {
        double[] x = new double[n];
        for (int i = 0; i < n; i++) {
            x[i] = r.nextDouble() * 2 - 1;
        }
        return x;
    }

    /** Checked against EJML (reference library): the same MLP forward pass in float64. */
    private static void assertMatchesEjml(Policy p, PolicyModels.Mlp mlp, double[] modelInput, double[] obs, long tick) {
        double[] chunk = new double[p.chunkLength() * p.actionSize()];
        p.infer(obs, tick, chunk);
        double[] expected = EjmlReference.forward(mlp, modelInput);
        assertThat(chunk).hasSize(expected.length);
        for (int i = 0; i < expected.length; i++) {
            assertThat(chunk[i]).as("value %d", i).isCloseTo(expected[i], org.assertj.core.data.Offset.offset(FLOAT32_TOLERANCE));
        }
    }

    @Test
    void chunkPolicyMatchesEjmlForwardPassOnEveryCall() throws Exception {
        Built b = PolicyModels.chunkPolicy(12, 32, 16, 6, 1);
        PolicySpec spec = PolicySpec.singleInput(write("chunk.onnx", b), 12, "obs",
                new OutputSpec("actions", ChunkLayout.BATCH_STEPS_VALUES, 0, 0));
        try (OnnxPolicy p = OnnxPolicy.load(spec)) {
            assertThat(p.chunkLength()).isEqualTo(16);
            assertThat(p.actionSize()).isEqualTo(6);
            SplittableRandom r = new SplittableRandom(7);
            // several calls: the input buffer is refilled in place and the pinned output rewritten
            for (int call = 0; call < 5; call++) {
                double[] obs = randomObservation(r, 12);
                assertMatchesEjml(p, b.mlp(), obs, obs, call);
            }
        }
    }

    @Test
    void flatChunkIsSplitWithTheConfiguredK() throws Exception {
        Built b = PolicyModels.flatChunkPolicy(5, 16, 8, 3, 2);
        PolicySpec spec = PolicySpec.singleInput(write("flat.onnx", b), 5, "obs",
                new OutputSpec(null, ChunkLayout.BATCH_FLAT, 8, 0));
        try (OnnxPolicy p = OnnxPolicy.load(spec)) {
            assertThat(p.chunkLength()).isEqualTo(8);
            assertThat(p.actionSize()).isEqualTo(3);
            double[] obs = randomObservation(new SplittableRandom(3), 5);
            assertMatchesEjml(p, b.mlp(), obs, obs, 0);
        }
    }

    @Test
    void stepsByValuesLayoutWithARankOneInput() throws Exception {
        Built b = PolicyModels.stepsByValuesPolicy(4, 8, 10, 2, 3);
        PolicySpec spec = PolicySpec.singleInput(write("kd.onnx", b), 4, "obs",
                new OutputSpec("actions", ChunkLayout.STEPS_VALUES, 10, 2));
        try (OnnxPolicy p = OnnxPolicy.load(spec)) {
            assertThat(p.boundShapes().get("obs")).containsExactly(4);
            double[] obs = randomObservation(new SplittableRandom(4), 4);
            assertMatchesEjml(p, b.mlp(), obs, obs, 0);
        }
    }

    @Test
    void singleActionActorIsOneActionHeld() throws Exception {
        Built b = PolicyModels.singleActionPolicy(6, 16, 4, 4);
        PolicySpec spec = PolicySpec.singleInput(write("actor.onnx", b), 6, "obs",
                new OutputSpec("action", ChunkLayout.SINGLE_ACTION, 0, 4));
        try (OnnxPolicy p = OnnxPolicy.load(spec)) {
            // one action, held for two policy steps: the same action three times
            assertThat(p.chunkLength()).isEqualTo(3);
            assertThat(p.actionSize()).isEqualTo(4);
            double[] obs = randomObservation(new SplittableRandom(5), 6);
            double[] chunk = new double[12];
            p.infer(obs, 0, chunk);
            double[] expected = EjmlReference.forward(b.mlp(), obs);
            for (int j = 0; j < 3; j++) {
                for (int i = 0; i < 4; i++) {
                    assertThat(chunk[j * 4 + i]).as("step %d value %d", j, i)
                            .isCloseTo(expected[i], org.assertj.core.data.Offset.offset(FLOAT32_TOLERANCE));
                }
            }
        }
    }

    @Test
    void dynamicBatchAxisIsResolvedToOne() throws Exception {
        Built b = PolicyModels.dynamicBatchPolicy(7, 16, 5, 3, 5);
        PolicySpec spec = PolicySpec.singleInput(write("batch.onnx", b), 7, "obs",
                new OutputSpec("actions", ChunkLayout.BATCH_STEPS_VALUES, 5, 3));
        try (OnnxPolicy p = OnnxPolicy.load(spec)) {
            assertThat(p.signature().inputs().get(0).shapeText()).isEqualTo("[batch, 7]");
            assertThat(p.signature().outputs().get(0).shapeText()).isEqualTo("[batch, 5, 3]");
            assertThat(p.boundShapes().get("obs")).containsExactly(1, 7);
            assertThat(p.outputShape()).containsExactly(1, 5, 3);
            double[] obs = randomObservation(new SplittableRandom(6), 7);
            assertMatchesEjml(p, b.mlp(), obs, obs, 0);
        }
    }

    @Test
    void historyInputCarriesTheRequestsGridSamplesOldestFirst() throws Exception {
        int s = 3;
        int depth = 4;
        Built b = PolicyModels.stateAndHistoryPolicy(s, depth, 16, 6, 2, 6);
        Map<String, InputBinding> inputs = new LinkedHashMap<>();
        inputs.put("state", new InputBinding.Observation());
        inputs.put("history", new InputBinding.History(depth, 10_000_000L, false, false));
        PolicySpec spec = new PolicySpec(write("hist.onnx", b), s, inputs,
                new OutputSpec("actions", ChunkLayout.BATCH_STEPS_VALUES, 0, 0), SessionSettings.DEFAULTS);
        SplittableRandom r = new SplittableRandom(8);
        try (OnnxPolicy p = OnnxPolicy.load(spec)) {
            assertThat(p.histories()).containsExactly(new InputBinding.History(depth, 10_000_000L, false, false));
            PolicyInput in = PolicyInput.forPolicy(p);
            for (int call = 0; call < 4; call++) {
                double[] obs = randomObservation(r, s);
                System.arraycopy(obs, 0, in.observation(), 0, s);
                double[] past = randomObservation(r, s * depth);
                System.arraycopy(past, 0, in.history(0), 0, past.length);
                in.stamp(call, call);
                // the model's input: the state, then the history exactly as the request holds it
                double[] x = new double[s * (depth + 1)];
                System.arraycopy(obs, 0, x, 0, s);
                System.arraycopy(past, 0, x, s, past.length);
                double[] chunk = new double[p.chunkLength() * p.actionSize()];
                p.infer(in, chunk);
                double[] expected = EjmlReference.forward(b.mlp(), x);
                for (int i = 0; i < expected.length; i++) {
                    assertThat(chunk[i]).as("value %d", i).isCloseTo(expected[i],
                            org.assertj.core.data.Offset.offset(FLOAT32_TOLERANCE));
                }
            }
            // called with an observation alone (no stream behind it), every grid point is that observation
            double[] obs = randomObservation(r, s);
            double[] x = new double[s * (depth + 1)];
            for (int slot = 0; slot <= depth; slot++) {
                System.arraycopy(obs, 0, x, slot * s, s);
            }
            assertMatchesEjml(p, b.mlp(), x, obs, 9);
        }
    }

    @Test
    void float64ModelRunsInDoublePrecision() throws Exception {
        Built b = PolicyModels.float64ChunkPolicy(5, 8, 4, 3, 9);
        PolicySpec spec = PolicySpec.singleInput(write("f64.onnx", b), 5, "obs",
                new OutputSpec("actions", ChunkLayout.BATCH_STEPS_VALUES, 0, 0));
        try (OnnxPolicy p = OnnxPolicy.load(spec)) {
            double[] obs = randomObservation(new SplittableRandom(10), 5);
            double[] chunk = new double[12];
            p.infer(obs, 0, chunk);
            double[] expected = EjmlReference.forward(b.mlp(), obs);
            for (int i = 0; i < 12; i++) {
                assertThat(chunk[i]).isCloseTo(expected[i], org.assertj.core.data.Offset.offset(1e-12));
            }
        }
    }

    @Test
    void stepAndSeededNoiseInputs() throws Exception {
        Built b = PolicyModels.noiseAndStepPolicy(4, 8, 3, 2, 0.5f, 0.001f, 11);
        Path model = write("noise.onnx", b);
        Map<String, InputBinding> inputs = new LinkedHashMap<>();
        inputs.put("obs", new InputBinding.Observation());
        inputs.put("noise", new InputBinding.Noise(42, 1.0, 0));
        inputs.put("step", new InputBinding.Step());
        PolicySpec spec = new PolicySpec(model, 4, inputs, new OutputSpec("actions", ChunkLayout.BATCH_STEPS_VALUES, 0, 0),
                SessionSettings.DEFAULTS);
        double[] obs = randomObservation(new SplittableRandom(12), 4);
        double[] first = new double[6];
        double[] second = new double[6];
        double[] again = new double[6];
        try (OnnxPolicy p = OnnxPolicy.load(spec)) {
            p.infer(obs, 0, first);
            p.infer(obs, 0, second);
        }
        try (OnnxPolicy p = OnnxPolicy.load(spec)) {
            p.infer(obs, 0, again);
        }
        assertThat(again).as("same seed, same first draw, warm-up notwithstanding").containsExactly(first);
        assertThat(second).as("fresh noise on every call").isNotEqualTo(first);

        // with the noise at zero the output is the MLP plus step·0.001, step = the observation's tick
        inputs.put("noise", new InputBinding.Noise(42, 0.0, 0));
        PolicySpec quiet = new PolicySpec(model, 4, inputs, spec.output(), SessionSettings.DEFAULTS);
        double[] mean = EjmlReference.forward(b.mlp(), obs);
        double[] out = new double[6];
        try (OnnxPolicy p = OnnxPolicy.load(quiet)) {
            p.infer(obs, 1000, out);
        }
        for (int i = 0; i < 6; i++) {
            assertThat(out[i]).isCloseTo(mean[i] + 1.0, org.assertj.core.data.Offset.offset(FLOAT32_TOLERANCE));
        }
    }

    @Test
    void constantInputIsWrittenOnce() throws Exception {
        OnnxGraph g = OnnxGraph.named("offset");
        String x = g.input("obs", Element.FLOAT, 1, 3);
        String c = g.input("offset", Element.INT64, 1, 3);
        g.opNamed("Add", "actions", x, g.cast(c, Element.FLOAT));
        g.output("actions", Element.FLOAT, 1, 3);
        Path model = g.write(dir.resolve("const.onnx"));
        Map<String, InputBinding> inputs = new LinkedHashMap<>();
        inputs.put("obs", new InputBinding.Observation());
        inputs.put("offset", new InputBinding.Constant(new double[] {10, 20, 30}));
        PolicySpec spec = new PolicySpec(model, 3, inputs, new OutputSpec("actions", ChunkLayout.SINGLE_ACTION, 0, 0),
                SessionSettings.DEFAULTS);
        try (OnnxPolicy p = OnnxPolicy.load(spec)) {
            double[] out = new double[p.chunkLength() * 3];
            // one action, held: the same action for each of the held steps
            p.infer(new double[] {1, 2, 3}, 0, out);
            assertThat(out).containsExactly(11, 22, 33, 11, 22, 33, 11, 22, 33);
            p.infer(new double[] {-1, -2, -3}, 1, out);
            assertThat(out).containsExactly(9, 18, 27, 9, 18, 27, 9, 18, 27);
        }
    }

    // --------------------------------------------------------------------------- bad input

    private String messageOf(PolicySpec spec) {
        try {
            OnnxPolicy.load(spec).close();
        } catch (BadInputException e) {
            return e.getMessage();
        }
        throw new AssertionError("expected the model to be refused");
    }

    @Test
    void actionSizeDisagreeingWithTheModelIsRefused() throws Exception {
        Path m = write("chunk.onnx", PolicyModels.chunkPolicy(4, 8, 16, 3, 1));
        String msg = messageOf(PolicySpec.singleInput(m, 4, "obs",
                new OutputSpec("actions", ChunkLayout.BATCH_STEPS_VALUES, 16, 4)));
        assertThat(msg).isEqualTo(m + " output 'actions': the model fixes D = 3 (axis 2 of [1, 16, 3]),"
                + " the configuration says D = 4");
    }

    @Test
    void everyProblemIsReportedAtOnce() throws Exception {
        Path m = write("chunk.onnx", PolicyModels.chunkPolicy(4, 8, 16, 3, 1));
        Map<String, InputBinding> inputs = new LinkedHashMap<>();
        inputs.put("observation", new InputBinding.Observation());
        PolicySpec spec = new PolicySpec(m, 4, inputs, new OutputSpec("acts", ChunkLayout.BATCH_STEPS_VALUES, 0, 0),
                SessionSettings.DEFAULTS);
        BadInputException e = org.junit.jupiter.api.Assertions.assertThrows(BadInputException.class, () -> OnnxPolicy.load(spec));
        assertThat(e.problems()).extracting(Object::toString).containsExactly(
                m + " input 'observation': the model has no such input; its inputs are 'obs' float32 [1, 4]",
                m + " input 'obs': not bound to a source (float32 [1, 4]); bind it to observation, history, constant,"
                        + " noise, step or camera",
                m + " output 'acts': the model has no such output; its outputs are 'actions' float32 [1, 16, 3]");
        assertThat(e.getMessage()).startsWith("3 problems:");
    }

    @Test
    void observationSizeNotFittingTheInputIsRefused() throws Exception {
        Path m = write("chunk.onnx", PolicyModels.chunkPolicy(4, 8, 16, 3, 1));
        assertThat(messageOf(PolicySpec.singleInput(m, 5, "obs", new OutputSpec(null, ChunkLayout.BATCH_STEPS_VALUES, 0, 0))))
                .isEqualTo(m + " input 'obs': shape [1, 4] cannot hold the 5 values that observation gives");
    }

    @Test
    void historyDepthNotFittingIsRefusedWithTheArithmetic() throws Exception {
        Path m = write("hist.onnx", PolicyModels.stateAndHistoryPolicy(3, 4, 8, 2, 2, 1));
        Map<String, InputBinding> inputs = new LinkedHashMap<>();
        inputs.put("state", new InputBinding.Observation());
        inputs.put("history", new InputBinding.History(5, 10_000_000L, true, false));
        assertThat(messageOf(new PolicySpec(m, 3, inputs, new OutputSpec(null, ChunkLayout.BATCH_STEPS_VALUES, 0, 0),
                SessionSettings.DEFAULTS)))
                .isEqualTo(m + " input 'history': shape [1, 4, 3] cannot hold the 15 values that history gives"
                        + " (5 observations of 3)");
    }

    @Test
    void unsupportedInputTypeIsRefused() throws Exception {
        OnnxGraph clean = OnnxGraph.named("ints");
        String y = clean.input("obs", Element.INT32, 1, 3);
        clean.identityNamed("actions", clean.cast(y, Element.FLOAT));
        clean.output("actions", Element.FLOAT, 1, 3);
        Path m = clean.write(dir.resolve("int32.onnx"));
        assertThat(messageOf(PolicySpec.singleInput(m, 3, "obs", new OutputSpec(null, ChunkLayout.SINGLE_ACTION, 0, 0))))
                .isEqualTo(m + " input 'obs': bound to observation, which needs float32 or float64, but the model"
                        + " wants int32");
    }

    @Test
    void layoutRankMismatchIsRefused() throws Exception {
        Path m = write("chunk.onnx", PolicyModels.chunkPolicy(4, 8, 16, 3, 1));
        assertThat(messageOf(PolicySpec.singleInput(m, 4, "obs", new OutputSpec(null, ChunkLayout.SINGLE_ACTION, 0, 0))))
                .isEqualTo(m + " output 'actions': layout 1xD needs rank 2, the model's shape [1, 16, 3] has rank 3");
    }

    @Test
    void fixedBatchLargerThanOneIsRefused() throws Exception {
        OnnxGraph g = OnnxGraph.named("batch2");
        String x = g.input("obs", Element.FLOAT, 2, 3);
        g.identityNamed("actions", x);
        g.output("actions", Element.FLOAT, 2, 3);
        Path m = g.write(dir.resolve("batch2.onnx"));
        Map<String, InputBinding> in = Map.of("obs", new InputBinding.Constant(new double[6]));
        assertThat(messageOf(new PolicySpec(m, 3, in, new OutputSpec(null, ChunkLayout.SINGLE_ACTION, 0, 0),
                SessionSettings.DEFAULTS)))
                .isEqualTo(m + " output 'actions': axis 0 of [2, 3] is a batch of 2; weft runs one observation at a"
                        + " time and needs 1 or a dynamic axis");
    }

    @Test
    void dynamicChunkAxisNeedsConfiguration() throws Exception {
        OnnxGraph g = OnnxGraph.named("dyn");
        String x = g.input("obs", Element.FLOAT, 1, "steps", 2);
        g.identityNamed("actions", x);
        g.output("actions", Element.FLOAT, 1, "steps", 2);
        Path m = g.write(dir.resolve("dyn.onnx"));
        Map<String, InputBinding> in = Map.of("obs", new InputBinding.Constant(new double[8]));
        assertThat(messageOf(new PolicySpec(m, 3, in, new OutputSpec(null, ChunkLayout.BATCH_STEPS_VALUES, 0, 0),
                SessionSettings.DEFAULTS)))
                .isEqualTo(m + " output 'actions': axis 1 of [1, steps, 2] is dynamic; configure K");
    }

    @Test
    void flatChunkThatDoesNotSplitIsRefused() throws Exception {
        Path m = write("flat.onnx", PolicyModels.flatChunkPolicy(5, 8, 8, 3, 2));
        assertThat(messageOf(PolicySpec.singleInput(m, 5, "obs", new OutputSpec(null, ChunkLayout.BATCH_FLAT, 5, 0))))
                .isEqualTo(m + " output 'actions': layout 1xKD: 24 values do not split into K = 5 actions of D = 0");
        assertThat(messageOf(PolicySpec.singleInput(m, 5, "obs", new OutputSpec(null, ChunkLayout.BATCH_FLAT, 0, 0))))
                .isEqualTo(m + " output 'actions': layout 1xKD of [1, 24] needs K or D configured to split 24 values");
    }

    @Test
    void missingEmptyAndMalformedFilesAreRefused() throws Exception {
        Path missing = dir.resolve("nope.onnx");
        assertThat(messageOf(PolicySpec.singleInput(missing, 4, "obs", new OutputSpec(null, ChunkLayout.SINGLE_ACTION, 0, 0))))
                .isEqualTo(missing + ": no such file");
        Path empty = Files.write(dir.resolve("empty.onnx"), new byte[0]);
        assertThat(messageOf(PolicySpec.singleInput(empty, 4, "obs", new OutputSpec(null, ChunkLayout.SINGLE_ACTION, 0, 0))))
                .isEqualTo(empty + ": the file is empty");
        Path text = Files.writeString(dir.resolve("text.onnx"), "this is not a model\n");
        assertThat(messageOf(PolicySpec.singleInput(text, 4, "obs", new OutputSpec(null, ChunkLayout.SINGLE_ACTION, 0, 0))))
                .startsWith(text + ": not an ONNX model: ");
        byte[] good = PolicyModels.chunkPolicy(4, 8, 16, 3, 1).bytes();
        Path cut = Files.write(dir.resolve("cut.onnx"), java.util.Arrays.copyOf(good, good.length / 2));
        assertThat(messageOf(PolicySpec.singleInput(cut, 4, "obs", new OutputSpec(null, ChunkLayout.SINGLE_ACTION, 0, 0))))
                .startsWith(cut + ": not an ONNX model: a field of ");
    }

    @Test
    void modelWithSeveralOutputsNeedsTheChunkNamed() throws Exception {
        OnnxGraph g = OnnxGraph.named("two");
        String x = g.input("obs", Element.FLOAT, 1, 3);
        g.identityNamed("a", x);
        g.identityNamed("b", x);
        g.output("a", Element.FLOAT, 1, 3).output("b", Element.FLOAT, 1, 3);
        Path m = g.write(dir.resolve("two.onnx"));
        assertThat(messageOf(PolicySpec.singleInput(m, 3, "obs", new OutputSpec(null, ChunkLayout.SINGLE_ACTION, 0, 0))))
                .isEqualTo(m + " outputs: the model has 2 outputs ('a' float32 [1, 3], 'b' float32 [1, 3]); name the"
                        + " one that is the chunk");
        try (OnnxPolicy p = OnnxPolicy.load(PolicySpec.singleInput(m, 3, "obs",
                new OutputSpec("b", ChunkLayout.SINGLE_ACTION, 0, 0)))) {
            double[] out = new double[p.chunkLength() * 3];
            p.infer(new double[] {1, 2, 3}, 0, out);
            assertThat(out).containsExactly(1, 2, 3, 1, 2, 3, 1, 2, 3);
        }
    }

    @Test
    void closeIsIdempotentAndInferAfterCloseFails() throws Exception {
        Path m = write("chunk.onnx", PolicyModels.chunkPolicy(4, 8, 2, 3, 1));
        OnnxPolicy p = OnnxPolicy.load(PolicySpec.singleInput(m, 4, "obs", new OutputSpec(null, ChunkLayout.BATCH_STEPS_VALUES, 0, 0)));
        p.close();
        p.close();
        assertThatThrownBy(() -> p.infer(new double[4], 0, new double[6])).hasMessage("policy is closed");
    }
}
