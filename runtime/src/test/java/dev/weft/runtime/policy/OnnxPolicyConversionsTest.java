package dev.weft.runtime.policy;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.catchThrowableOfType;
import static org.assertj.core.api.Assertions.offset;

import ai.onnx.proto.OnnxMl.ModelProto;
import ai.onnx.proto.OnnxMl.StringStringEntryProto;
import dev.weft.onnxkit.OnnxGraph;
import dev.weft.onnxkit.OnnxGraph.Element;
import dev.weft.onnxkit.PolicyModels;
import dev.weft.runtime.BadInputException;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The value conversions around an ONNX model, on real models run by ONNX Runtime: the action
 * representations and the de-normalisation against hand computations and against models whose
 * own graph converts (ONNX Runtime's Mul, Add, Slice and CumSum operators as the outside
 * reference), the observation normalisation against hand computations and against models whose
 * own graph normalises (Sub and Div), the metadata keys, and the refusals.
 */
class OnnxPolicyConversionsTest {

    /** float32 tensors: values of order 1 are exact to a few float32 ulps. */
    private static final double FLOAT32 = 2e-6;

    @TempDir
    Path dir;

    // ------------------------------------------------------------------------------ the models

    /**
     * {@code obs [1, 3]} → {@code actions [1, 3, 2]} = obs · W + c with W zero except row 2 all
     * ones: every action value is {@code c[n] + obs[2]}; c = [0.1, −0.2, 0.3, 0.0, −0.1, 0.5].
     * With obs = [1.0, 2.0, 0.5] the raw chunk is [0.6, 0.3 | 0.8, 0.5 | 0.4, 1.0].
     */
    private Path linearModel(String name) throws IOException {
        OnnxGraph g = OnnxGraph.named("linear");
        String x = g.input("obs", Element.FLOAT, 1, 3);
        float[] w = new float[18];
        for (int n = 0; n < 6; n++) {
            w[12 + n] = 1f;
        }
        String y = g.add(g.matMul(x, g.floats("w", w, 3, 6)), g.floats("c", new float[] {0.1f, -0.2f, 0.3f, 0f, -0.1f, 0.5f}, 6));
        g.reshapeNamed("actions", y, 1, 3, 2);
        g.output("actions", Element.FLOAT, 1, 3, 2);
        return g.write(dir.resolve(name));
    }

    private static final double[] LINEAR_OBS = {1.0, 2.0, 0.5};

    /** {@code obs [1, 4]} → {@code actions [1, 2, 2]}, the same values: what goes in comes out. */
    private Path identityModel(String name) throws IOException {
        OnnxGraph g = OnnxGraph.named("identity");
        String x = g.input("obs", Element.FLOAT, 1, 4);
        g.reshapeNamed("actions", x, 1, 2, 2);
        g.output("actions", Element.FLOAT, 1, 2, 2);
        return g.write(dir.resolve(name));
    }

    private static PolicySpec spec(Path model, int obs, ActionRepresentation rep, NormalisationSpec n) {
        return PolicySpec.singleInput(model, obs, "obs", new OutputSpec("actions", ChunkLayout.BATCH_STEPS_VALUES, 0, 0, rep))
                .withNormalisation(n);
    }

    private static double[] run(PolicySpec spec, double[] obs) throws BadInputException {
        try (OnnxPolicy p = OnnxPolicy.load(spec)) {
            double[] chunk = new double[p.chunkLength() * p.actionSize()];
            p.infer(obs, 0, chunk);
            return chunk;
        }
    }

    private static void assertChunk(double[] actual, double... expected) {
        assertThat(actual).hasSize(expected.length);
        for (int i = 0; i < expected.length; i++) {
            assertThat(actual[i]).as("value %d of %s", i, java.util.Arrays.toString(actual)).isCloseTo(expected[i], offset(FLOAT32));
        }
    }

    /** Adds metadata properties to a model file, as an exporter would. */
    private static Path withMetadata(Path model, Map<String, String> props) throws IOException {
        ModelProto.Builder m = ModelProto.parseFrom(Files.readAllBytes(model)).toBuilder();
        props.forEach((k, v) -> m.addMetadataProps(StringStringEntryProto.newBuilder().setKey(k).setValue(v)));
        Files.write(model, m.build().toByteArray());
        return model;
    }

    private static List<String> problems(PolicySpec spec) {
        BadInputException e = catchThrowableOfType(() -> OnnxPolicy.load(spec).close(), BadInputException.class);
        assertThat(e).as("the model should have been refused").isNotNull();
        return e.problems().stream().map(BadInputException.Problem::toString).toList();
    }

    // ------------------------------------------------------------------ action representations

    @Test
    void absoluteActionsAreTheModelsOutput() throws Exception {
        Path m = linearModel("abs.onnx");
        assertChunk(run(spec(m, 3, ActionRepresentation.ABSOLUTE, NormalisationSpec.FROM_MODEL), LINEAR_OBS),
                0.6, 0.3, 0.8, 0.5, 0.4, 1.0);
    }

    @Test
    void offsetsFromTheStateAreAddedToTheObservedJointPositions() throws Exception {
        // hand computation: joint positions are obs[0..1] = (1.0, 2.0), added to every action
        Path m = linearModel("state.onnx");
        assertChunk(run(spec(m, 3, ActionRepresentation.FROM_STATE, NormalisationSpec.FROM_MODEL), LINEAR_OBS),
                1.6, 2.3, 1.8, 2.5, 1.4, 3.0);
    }

    @Test
    void offsetsFromThePreviousActionAccumulateFromTheObservedJointPositions() throws Exception {
        // hand computation: (1.0 + 0.6, 2.0 + 0.3) = (1.6, 2.3); (1.6 + 0.8, 2.3 + 0.5) = (2.4, 2.8);
        // (2.4 + 0.4, 2.8 + 1.0) = (2.8, 3.8)
        Path m = linearModel("prev.onnx");
        assertChunk(run(spec(m, 3, ActionRepresentation.FROM_PREVIOUS, NormalisationSpec.FROM_MODEL), LINEAR_OBS),
                1.6, 2.3, 2.4, 2.8, 2.8, 3.8);
    }

    @Test
    void everyCallStartsFromItsOwnObservation() throws Exception {
        Path m = linearModel("calls.onnx");
        try (OnnxPolicy p = OnnxPolicy.load(spec(m, 3, ActionRepresentation.FROM_PREVIOUS, NormalisationSpec.FROM_MODEL))) {
            double[] chunk = new double[6];
            p.infer(LINEAR_OBS, 0, chunk);
            // second call: obs = (0, 0, 0) → raw chunk c = [0.1, −0.2 | 0.3, 0.0 | −0.1, 0.5], joints at 0:
            // (0.1, −0.2), (0.4, −0.2), (0.3, 0.3) — nothing carried over from the first call
            p.infer(new double[] {0, 0, 0}, 1, chunk);
            assertChunk(chunk, 0.1, -0.2, 0.4, -0.2, 0.3, 0.3);
        }
    }

    @Test
    void actionsAreDeNormalisedBeforeTheStateIsAdded() throws Exception {
        // mean/std: x = z·std + mean with mean (0.1, −1), std (2, 0.5):
        // (0.6·2 + 0.1, 0.3·0.5 − 1) = (1.3, −0.85); (1.7, −0.75); (0.9, −0.5); then + (1.0, 2.0)
        Path m = linearModel("denorm.onnx");
        NormalisationSpec meanStd = new NormalisationSpec(ValueScale.NONE,
                ValueScale.meanStd(new double[] {0.1, -1}, new double[] {2, 0.5}, "test"));
        assertChunk(run(spec(m, 3, ActionRepresentation.FROM_STATE, meanStd), LINEAR_OBS),
                2.3, 1.15, 2.7, 1.25, 1.9, 1.5);
        // min/max: x = (z + 1)(max − min)/2 + min with min (−1, 0), max (3, 4): (z + 1)·2 − 1 and (z + 1)·2
        NormalisationSpec minMax = new NormalisationSpec(ValueScale.NONE,
                ValueScale.minMax(new double[] {-1, 0}, new double[] {3, 4}, "test"));
        assertChunk(run(spec(m, 3, ActionRepresentation.ABSOLUTE, minMax), LINEAR_OBS),
                2.2, 2.6, 2.6, 3.0, 1.8, 4.0);
        // and cumulated after de-normalising: (1 + 2.2, 2 + 2.6) = (3.2, 4.6); (5.8, 7.6); (7.6, 11.6)
        assertChunk(run(spec(m, 3, ActionRepresentation.FROM_PREVIOUS, minMax), LINEAR_OBS),
                3.2, 4.6, 5.8, 7.6, 7.6, 11.6);
    }

    @Test
    void theJointStateIsTheRawObservationNotTheNormalisedOne() throws Exception {
        // observation normalised for the model: z = (x − 1)/2 → (0, 0.5, −0.25); the model adds
        // z[2] = −0.25 to c: [−0.15, −0.45 | 0.05, −0.25 | −0.35, 0.25]; the offsets are then added
        // to the raw joint positions (1.0, 2.0)
        Path m = linearModel("raw.onnx");
        NormalisationSpec n = new NormalisationSpec(
                ValueScale.meanStd(new double[] {1, 1, 1}, new double[] {2, 2, 2}, "test"), ValueScale.NONE);
        assertChunk(run(spec(m, 3, ActionRepresentation.FROM_STATE, n), LINEAR_OBS),
                0.85, 1.55, 1.05, 1.75, 0.65, 2.25);
    }

    @Test
    void offsetsNeedAJointPositionForEveryActionValue() throws Exception {
        // D = 2, but an observation of one value: no joint state for joint 1
        OnnxGraph g = OnnxGraph.named("short");
        String x = g.input("obs", Element.FLOAT, 1, 1);
        g.reshapeNamed("actions", g.concat(1, x, x, x, x), 1, 2, 2);
        g.output("actions", Element.FLOAT, 1, 2, 2);
        Path m = g.write(dir.resolve("short.onnx"));
        assertThat(problems(spec(m, 1, ActionRepresentation.FROM_PREVIOUS, NormalisationSpec.FROM_MODEL)))
                .containsExactly(m + " output 'actions': actions from_previous adds the joint positions, the first D = 2 "
                        + "observation values, but the observation has 1");
        assertChunk(run(spec(m, 1, ActionRepresentation.ABSOLUTE, NormalisationSpec.FROM_MODEL), new double[] {0.5}),
                0.5, 0.5, 0.5, 0.5);
    }

    // ------------------------------------------------------------------ observation normalisation

    @Test
    void observationValuesAreNormalisedBeforeTheModelSeesThem() throws Exception {
        Path m = identityModel("id.onnx");
        // mean/std, hand computation: ((3 − 1)/2, (0 − 2)/4, (3.25 − 3)/0.5, (4 − 4)/1) = (1, −0.5, 0.5, 0)
        NormalisationSpec meanStd = new NormalisationSpec(
                ValueScale.meanStd(new double[] {1, 2, 3, 4}, new double[] {2, 4, 0.5, 1}, "test"), ValueScale.NONE);
        assertChunk(run(spec(m, 4, ActionRepresentation.ABSOLUTE, meanStd), new double[] {3, 0, 3.25, 4}),
                1, -0.5, 0.5, 0);
        // min/max, hand computation: 2·(1 − 0)/4 − 1 = −0.5; 2·1/1 − 1 = 1; 2·1/2 − 1 = 0; 2·0/4 − 1 = −1
        NormalisationSpec minMax = new NormalisationSpec(
                ValueScale.minMax(new double[] {0, 0, -1, -2}, new double[] {4, 1, 1, 2}, "test"), ValueScale.NONE);
        assertChunk(run(spec(m, 4, ActionRepresentation.ABSOLUTE, minMax), new double[] {1, 1, 0, -2}),
                -0.5, 1, 0, -1);
    }

    @Test
    void historyValuesAreNormalisedPerObservationValue() throws Exception {
        // history [1, 4]: two grid points of a 2-value observation → actions [1, 2, 2], the same values
        OnnxGraph g = OnnxGraph.named("history_identity");
        String h = g.input("history", Element.FLOAT, 1, 4);
        g.reshapeNamed("actions", h, 1, 2, 2);
        g.output("actions", Element.FLOAT, 1, 2, 2);
        Path m = g.write(dir.resolve("hist.onnx"));
        Map<String, InputBinding> inputs = new LinkedHashMap<>();
        inputs.put("history", new InputBinding.History(2, 10_000_000L, false, false));
        PolicySpec spec = new PolicySpec(m, 2, inputs, new OutputSpec("actions", ChunkLayout.BATCH_STEPS_VALUES, 0, 0),
                SessionSettings.DEFAULTS, new NormalisationSpec(
                        ValueScale.meanStd(new double[] {1, -1}, new double[] {2, 4}, "test"), ValueScale.NONE));
        try (OnnxPolicy p = OnnxPolicy.load(spec)) {
            PolicyInput in = PolicyInput.forPolicy(p);
            System.arraycopy(new double[] {0, 0}, 0, in.observation(), 0, 2);
            // grid points (3, 3), oldest, and (0, −3); hand computation with mean (1, −1), std (2, 4):
            // ((3 − 1)/2, (3 + 1)/4) = (1, 1) and ((0 − 1)/2, (−3 + 1)/4) = (−0.5, −0.5)
            System.arraycopy(new double[] {3, 3, 0, -3}, 0, in.history(0), 0, 4);
            double[] chunk = new double[4];
            p.infer(in, chunk);
            assertChunk(chunk, 1, 1, -0.5, -0.5);
        }
    }

    /**
     * The outside reference: the same MLP with the normalisation done by the graph itself, as
     * ONNX Runtime's Sub and Div (observation) and Mul and Add (actions) operators compute it,
     * against weft normalising and de-normalising around the bare MLP. Fed the same raw values,
     * both must give the same chunk.
     */
    @Test
    void weftSideMeanStdEqualsNormalisationInsideTheGraph() throws Exception {
        int obs = 5;
        int k = 4;
        int d = 3;
        float[] mean = {0.5f, -1.25f, 2f, 0f, 10f};
        float[] std = {2f, 0.5f, 0.25f, 1f, 4f};
        float[] actMean = {0.1f, -0.3f, 1.5f};
        float[] actStd = {0.2f, 3f, 0.05f};
        PolicyModels.Mlp mlp = PolicyModels.Mlp.random(obs, 16, k * d, 21);

        OnnxGraph inside = OnnxGraph.named("normalised_inside");
        String x = inside.input("obs", Element.FLOAT, 1, obs);
        String z = inside.op("Div", inside.op("Sub", x, inside.floats("mean", mean, obs)), inside.floats("std", std, obs));
        String y = mlp(inside, z, mlp);
        String yk = inside.reshape(y, 1, k, d);
        inside.opNamed("Add", "actions", inside.op("Mul", yk, inside.floats("act_std", actStd, d)),
                inside.floats("act_mean", actMean, d));
        inside.output("actions", Element.FLOAT, 1, k, d);
        Path insideModel = inside.write(dir.resolve("inside.onnx"));

        OnnxGraph bare = OnnxGraph.named("bare");
        String xb = bare.input("obs", Element.FLOAT, 1, obs);
        bare.reshapeNamed("actions", mlp(bare, xb, mlp), 1, k, d);
        bare.output("actions", Element.FLOAT, 1, k, d);
        Path bareModel = bare.write(dir.resolve("bare.onnx"));

        NormalisationSpec weftSide = new NormalisationSpec(ValueScale.meanStd(doubles(mean), doubles(std), "test"),
                ValueScale.meanStd(doubles(actMean), doubles(actStd), "test"));
        assertSameChunks(spec(insideModel, obs, ActionRepresentation.ABSOLUTE, new NormalisationSpec(ValueScale.NONE,
                ValueScale.NONE)), spec(bareModel, obs, ActionRepresentation.ABSOLUTE, weftSide), obs, 4.0);
    }

    /** As above for min/max: z = (x − min)·2 / (max − min) − 1 and its inverse, as graph nodes. */
    @Test
    void weftSideMinMaxEqualsNormalisationInsideTheGraph() throws Exception {
        int obs = 4;
        int k = 3;
        int d = 2;
        float[] min = {-1f, 0f, 2f, -10f};
        float[] max = {1f, 4f, 2.5f, 30f};
        float[] actMin = {-0.5f, 1f};
        float[] actMax = {1.5f, 9f};
        PolicyModels.Mlp mlp = PolicyModels.Mlp.random(obs, 8, k * d, 22);

        OnnxGraph inside = OnnxGraph.named("minmax_inside");
        String x = inside.input("obs", Element.FLOAT, 1, obs);
        String one = inside.floats("one", new float[] {1f}, 1);
        String two = inside.floats("two", new float[] {2f}, 1);
        String z = inside.op("Sub", inside.op("Div", inside.mul(inside.op("Sub", x, inside.floats("min", min, obs)), two),
                inside.floats("range", range(min, max), obs)), one);
        String yk = inside.reshape(mlp(inside, z, mlp), 1, k, d);
        String scaled = inside.op("Div", inside.mul(inside.add(yk, one), inside.floats("act_range", range(actMin, actMax), d)), two);
        inside.opNamed("Add", "actions", scaled, inside.floats("act_min", actMin, d));
        inside.output("actions", Element.FLOAT, 1, k, d);
        Path insideModel = inside.write(dir.resolve("minmax_inside.onnx"));

        OnnxGraph bare = OnnxGraph.named("bare");
        String xb = bare.input("obs", Element.FLOAT, 1, obs);
        bare.reshapeNamed("actions", mlp(bare, xb, mlp), 1, k, d);
        bare.output("actions", Element.FLOAT, 1, k, d);
        Path bareModel = bare.write(dir.resolve("minmax_bare.onnx"));

        NormalisationSpec weftSide = new NormalisationSpec(ValueScale.minMax(doubles(min), doubles(max), "test"),
                ValueScale.minMax(doubles(actMin), doubles(actMax), "test"));
        assertSameChunks(spec(insideModel, obs, ActionRepresentation.ABSOLUTE, NormalisationSpec.FROM_MODEL),
                spec(bareModel, obs, ActionRepresentation.ABSOLUTE, weftSide), obs, 20.0);
    }

    /**
     * The representations against ONNX Runtime's own operators: a graph that de-normalises its
     * MLP's output (Mul, Add), then adds the joint state taken from its own input (Slice, Add), or
     * first sums the offsets along the chunk (CumSum over axis 1) for offsets from the previous
     * action, gives absolute targets itself; weft converting the bare MLP's output must agree.
     */
    @Test
    void representationsEqualTheConversionInsideTheGraph() throws Exception {
        int obs = 5;
        int k = 6;
        int d = 3;
        float[] actMean = {0.02f, -0.01f, 0f};
        float[] actStd = {0.05f, 0.1f, 0.2f};
        PolicyModels.Mlp mlp = PolicyModels.Mlp.random(obs, 12, k * d, 23);
        for (ActionRepresentation rep : List.of(ActionRepresentation.FROM_STATE, ActionRepresentation.FROM_PREVIOUS)) {
            OnnxGraph inside = OnnxGraph.named("targets_inside");
            String x = inside.input("obs", Element.FLOAT, 1, obs);
            String a = inside.reshape(mlp(inside, x, mlp), 1, k, d);
            a = inside.add(inside.mul(a, inside.floats("act_std", actStd, d)), inside.floats("act_mean", actMean, d));
            if (rep == ActionRepresentation.FROM_PREVIOUS) {
                a = inside.op("CumSum", a, inside.longs("axis", new long[] {1}));
            }
            String state = inside.op("Slice", x, inside.longs("starts", new long[] {0}, 1),
                    inside.longs("ends", new long[] {d}, 1), inside.longs("axes", new long[] {1}, 1));
            inside.opNamed("Add", "actions", a, state);
            inside.output("actions", Element.FLOAT, 1, k, d);
            Path insideModel = inside.write(dir.resolve("targets_" + rep.label() + ".onnx"));

            OnnxGraph bare = OnnxGraph.named("bare");
            String xb = bare.input("obs", Element.FLOAT, 1, obs);
            bare.reshapeNamed("actions", mlp(bare, xb, mlp), 1, k, d);
            bare.output("actions", Element.FLOAT, 1, k, d);
            Path bareModel = bare.write(dir.resolve("bare_" + rep.label() + ".onnx"));

            NormalisationSpec weftSide = new NormalisationSpec(ValueScale.NONE,
                    ValueScale.meanStd(doubles(actMean), doubles(actStd), "test"));
            assertSameChunks(spec(insideModel, obs, ActionRepresentation.ABSOLUTE, NormalisationSpec.FROM_MODEL),
                    spec(bareModel, obs, rep, weftSide), obs, 2.0);
        }
    }

    /** Raw observations spread over ±{@code spread} around zero through both policies: the same chunks. */
    private static void assertSameChunks(PolicySpec reference, PolicySpec weft, int obs, double spread) throws Exception {
        SplittableRandom r = new SplittableRandom(5);
        try (OnnxPolicy a = OnnxPolicy.load(reference); OnnxPolicy b = OnnxPolicy.load(weft)) {
            double[] ca = new double[a.chunkLength() * a.actionSize()];
            double[] cb = new double[ca.length];
            for (int call = 0; call < 20; call++) {
                double[] x = new double[obs];
                for (int i = 0; i < obs; i++) {
                    // float32-representable inputs: both sides start from the same float values
                    x[i] = (float) ((r.nextDouble() * 2 - 1) * spread);
                }
                a.infer(x, call, ca);
                b.infer(x, call, cb);
                for (int i = 0; i < ca.length; i++) {
                    // float32 arithmetic in a different order on each side: a few ulps of values up to ~10
                    assertThat(cb[i]).as("call %d value %d", call, i).isCloseTo(ca[i], offset(1e-5 * Math.max(1, Math.abs(ca[i]))));
                }
            }
            assertThat(ca).as("the chunk is not trivially constant").isNotEqualTo(new double[ca.length]);
        }
    }

    private static String mlp(OnnxGraph g, String x, PolicyModels.Mlp m) {
        String h = g.tanh(g.add(g.matMul(x, g.floats("w1", m.w1(), m.in(), m.hidden())), g.floats("b1", m.b1(), m.hidden())));
        return g.add(g.matMul(h, g.floats("w2", m.w2(), m.hidden(), m.out())), g.floats("b2", m.b2(), m.out()));
    }

    private static float[] range(float[] min, float[] max) {
        float[] r = new float[min.length];
        for (int i = 0; i < r.length; i++) {
            r[i] = max[i] - min[i];
        }
        return r;
    }

    private static double[] doubles(float[] f) {
        double[] d = new double[f.length];
        for (int i = 0; i < f.length; i++) {
            d[i] = f[i];
        }
        return d;
    }

    // ------------------------------------------------------------------------------ metadata

    @Test
    void statisticsAreReadFromTheModelsMetadata() throws Exception {
        Path m = withMetadata(identityModel("meta.onnx"), Map.of(
                "weft.observation.mean", "[1, 2, 3, 4]",
                "weft.observation.std", "[2, 4, 0.5, 1]",
                "weft.action.min", "[-1, 0]",
                "weft.action.max", "[3, 4]"));
        try (OnnxPolicy p = OnnxPolicy.load(spec(m, 4, ActionRepresentation.ABSOLUTE, NormalisationSpec.FROM_MODEL))) {
            assertThat(p.observationScale().method()).isEqualTo(ValueScale.Method.MEAN_STD);
            assertThat(p.observationScale().source()).isEqualTo(m + " metadata 'weft.observation.mean', 'weft.observation.std'");
            assertThat(p.actionScale().method()).isEqualTo(ValueScale.Method.MIN_MAX);
            double[] chunk = new double[4];
            p.infer(new double[] {3, 0, 3.25, 4}, 0, chunk);
            // normalised (1, −0.5, 0.5, 0) as above, the actions (1, −0.5) and (0.5, 0); de-normalised
            // value 0 by (z + 1)·4/2 − 1: 1 → 3, 0.5 → 2; value 1 by (z + 1)·4/2: −0.5 → 1, 0 → 2
            assertChunk(chunk, 3, 1, 2, 2);
        }
    }

    @Test
    void theConfigurationWinsOverTheMetadataAndNoneSwitchesItOff() throws Exception {
        Path m = withMetadata(identityModel("both.onnx"), Map.of(
                "weft.observation.mean", "[100, 100, 100, 100]",
                "weft.observation.std", "[1, 1, 1, 1]",
                "weft.action.mean", "[5, 5]",
                "weft.action.std", "[1, 1]"));
        double[] x = {3, 0, 3.25, 4};
        NormalisationSpec configured = new NormalisationSpec(
                ValueScale.meanStd(new double[] {1, 2, 3, 4}, new double[] {2, 4, 0.5, 1}, "policy.normalisation.observation"),
                ValueScale.NONE);
        assertChunk(run(spec(m, 4, ActionRepresentation.ABSOLUTE, configured), x), 1, -0.5, 0.5, 0);
        // only the actions configured (none): the observation still takes the metadata, x − 100
        assertChunk(run(spec(m, 4, ActionRepresentation.ABSOLUTE, new NormalisationSpec(null, ValueScale.NONE)), x),
                -97, -100, -96.75, -96);
        // nothing configured: both from the metadata, x − 100 + 5
        assertChunk(run(spec(m, 4, ActionRepresentation.ABSOLUTE, NormalisationSpec.FROM_MODEL), x),
                -92, -95, -91.75, -91);
    }

    @Test
    void badStatisticsInTheMetadataAreRefusedByKeyAndIndex() throws Exception {
        Path m = withMetadata(identityModel("bad.onnx"), Map.of(
                "weft.observation.mean", "[0, 0, 0, 0]",
                "weft.observation.std", "[1, 1, 0, 1]",
                "weft.action.min", "[0, 2]",
                "weft.action.max", "[1, 2]"));
        assertThat(problems(spec(m, 4, ActionRepresentation.ABSOLUTE, NormalisationSpec.FROM_MODEL))).containsExactly(
                m + " metadata 'weft.observation.std' value 2: must be > 0 (z = (x − mean) / std), got 0.0",
                m + " metadata 'weft.action.max' value 1: must be greater than min[1] (2.0), got 2.0: a zero range "
                        + "cannot be scaled to [−1, 1]");
    }

    @Test
    void malformedIncompleteOrMismatchedMetadataIsRefused() throws Exception {
        Path m = withMetadata(identityModel("malformed.onnx"), Map.of(
                "weft.observation.mean", "[0, 0, 0]",
                "weft.observation.std", "[1, 1, 1]",
                "weft.action.mean", "0.5"));
        assertThat(problems(spec(m, 4, ActionRepresentation.ABSOLUTE, NormalisationSpec.FROM_MODEL))).containsExactly(
                m + " metadata 'weft.observation.mean': has 3 values, the observation has 4",
                m + " metadata 'weft.action.mean': must be a JSON array of numbers, got '0.5'",
                m + " metadata 'weft.action.std': missing; 'weft.action.mean' needs it");
        Path n = withMetadata(identityModel("mixed.onnx"), Map.of(
                "weft.observation.mean", "[0, 0, 0, 0]",
                "weft.observation.max", "[1, 1, 1, 1]",
                "weft.action.scale", "[1, 1]",
                "weft.action.min", "[0, \"x\"]",
                "weft.action.max", "[1, 1]"));
        assertThat(problems(spec(n, 4, ActionRepresentation.ABSOLUTE, NormalisationSpec.FROM_MODEL))).containsExactly(
                n + " metadata 'weft.observation.*': holds both mean/std and min/max; keep one pair",
                n + " metadata 'weft.action.scale': is not a key weft reads; under weft.action. weft reads mean and std, "
                        + "or min and max",
                n + " metadata 'weft.action.min' value 1: must be a number, got '\"x\"'");
        // the configuration wins: the malformed metadata is not read at all
        assertChunk(run(spec(n, 4, ActionRepresentation.ABSOLUTE, new NormalisationSpec(ValueScale.NONE, ValueScale.NONE)),
                new double[] {1, 2, 3, 4}), 1, 2, 3, 4);
    }

    @Test
    void configuredStatisticsOfTheWrongLengthAreRefusedAtLoad() throws Exception {
        Path m = identityModel("length.onnx");
        NormalisationSpec n = new NormalisationSpec(
                ValueScale.meanStd(new double[] {0, 0, 0}, new double[] {1, 1, 1}, "policy.normalisation.observation (line 9)"),
                ValueScale.minMax(new double[] {0, 0, 0}, new double[] {1, 1, 1}, "policy.normalisation.actions (line 12)"));
        assertThat(problems(spec(m, 4, ActionRepresentation.ABSOLUTE, n))).containsExactly(
                "policy.normalisation.observation (line 9): has 3 values, the observation has 4",
                "policy.normalisation.actions (line 12): has 3 values, an action has 2 (D)");
    }
}
