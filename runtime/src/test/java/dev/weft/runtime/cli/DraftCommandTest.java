package dev.weft.runtime.cli;

import static org.assertj.core.api.Assertions.assertThat;

import dev.weft.onnxkit.OnnxGraph;
import dev.weft.onnxkit.OnnxGraph.Element;
import dev.weft.onnxkit.PolicyModels;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.policy.ChunkLayout;
import dev.weft.runtime.policy.InputBinding;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class DraftCommandTest {

    @TempDir
    Path dir;

    private static InspectCommandTest.Run weft(String... args) {
        return InspectCommandTest.weft(args);
    }

    /** What a person would write at each placeholder, by key. */
    private static String fill(String draft) {
        String s = draft.replace("position: {min: DECIDE, max: DECIDE}", "position: {min: -2.5, max: 2.5}");
        String[][] values = {
            {"velocity", "2"}, {"acceleration", "10"}, {"jerk", "100"}, {"control_period", "0.002"},
            {"policy_step", "0.02"}, {"observation_age_max", "0.02"}, {"inference_latency_max", "0.05"},
            {"pose_distance_max", "0.5"}, {"observation_size", "4"},
        };
        for (String[] v : values) {
            s = s.replaceAll("(?m)^(\\s*" + v[0] + "): DECIDE", "$1: " + v[1]);
        }
        assertThat(s).doesNotContain(": DECIDE").doesNotContain(" DECIDE,").doesNotContain(" DECIDE}");
        return s;
    }

    /** The key paths the configuration reader names, without their line numbers. */
    private static List<String> refusedKeys(Path file) {
        try {
            WeftConfig.load(file);
        } catch (BadInputException e) {
            return e.problems().stream().map(p -> p.where().replaceAll(" \\(line \\d+\\)$", "")).toList();
        }
        throw new AssertionError("the unfilled draft was accepted");
    }

    @Test
    void aSamplingPolicyGetsItsInputsGuessedAndRunsOnceTheDecisionsAreFilledIn() throws Exception {
        Path model = dir.resolve("models").resolve("sampler.onnx").toAbsolutePath();
        Files.createDirectories(model.getParent());
        Files.write(model, PolicyModels.noiseAndStepPolicy(6, 16, 5, 3, 0.1f, 0.01f, 2).bytes());
        Path config = dir.resolve("sampler.yaml");
        InspectCommandTest.Run r = weft("draft", model.toString(), config.toString());
        assertThat(r.err()).isEmpty();
        assertThat(r.exit()).isZero();
        // to decide: 3 joints × 5 limits, two periods, two watchdog bounds, one arming distance; guesses: the
        // robot's name, 3 joint names, the query schedule, 3 input bindings, overruns_max, source and port kinds
        assertThat(r.out()).isEqualTo("wrote " + config + ": 20 values to decide (marked DECIDE), 11 guesses to check"
                + " (marked guess)" + System.lineSeparator() + "next: fill them in, then weft check " + config
                + System.lineSeparator());
        String draft = Files.readString(config);
        List<String> lines = draft.lines().toList();
        assertThat(lines).contains(
                "  joints:                               # D = 3 values per action (axis 2), one joint each, in action order",
                "    - name: joint_2                     # guess: rename",
                "  model: models/sampler.onnx",
                "  observation_size: 6                   # from input 'obs' [1, 6]",
                "    obs: {source: observation}          # guess: float32 [1, 6]: the observation vector",
                "    noise: {source: noise, seed: 1}     # guess: float32 [1, 5, 3] named like a noise input; the seed is a guess",
                "    step: {source: step}                # guess: int64 [1], one whole number: the control tick",
                "    layout: 1xKxD                       # from [1, 5, 3]",
                "    chunk_length: 5                     # K, fixed by the model (axis 1)",
                "    action_size: 3                      # D, fixed by the model (axis 2)",
                "  options: {velocities: true}           # the plant reports velocities after the positions");
        assertThat(lines).filteredOn(l -> l.startsWith("    - name: joint_")).hasSize(3);

        // as written, the reader refuses it at every decision and nowhere else
        List<String> expected = new java.util.ArrayList<>();
        for (int j = 0; j < 3; j++) {
            for (String k : List.of("position.min", "position.max", "velocity", "acceleration", "jerk")) {
                expected.add("robot.joints[" + j + "]." + k);
            }
        }
        expected.addAll(List.of("timing.control_period", "timing.policy_step", "watchdog.observation_age_max",
                "watchdog.inference_latency_max", "arming.pose_distance_max"));
        assertThat(refusedKeys(config)).containsExactlyInAnyOrderElementsOf(expected);

        // filled in, it is a configuration weft reads, binds and checks
        Path filled = Files.writeString(dir.resolve("filled.yaml"), fill(draft));
        WeftConfig c = WeftConfig.load(filled);
        assertThat(c.policy().inputs().get("obs")).isInstanceOf(InputBinding.Observation.class);
        assertThat(c.policy().inputs().get("noise")).isInstanceOf(InputBinding.Noise.class);
        assertThat(c.policy().inputs().get("step")).isInstanceOf(InputBinding.Step.class);
        assertThat(c.policy().output().layout()).isEqualTo(ChunkLayout.BATCH_STEPS_VALUES);
        assertThat(c.policy().model()).isEqualTo(model);
        InspectCommandTest.Run check = weft("check", filled.toString(), "--runs", "20");
        assertThat(check.err()).isEmpty();
        assertThat(check.out()).contains("model          " + model
                + ": K = 5 actions of D = 3 values (layout 1xKxD, output 'actions')");
        assertThat(check.exit()).as(check.out()).isZero();
    }

    @Test
    void anExistingFileIsNeverReplaced() throws Exception {
        Path model = Files.write(dir.resolve("m.onnx"), PolicyModels.chunkPolicy(4, 8, 2, 2, 1).bytes());
        Path config = Files.writeString(dir.resolve("weft.yaml"), "mine\n");
        InspectCommandTest.Run r = weft("draft", model.toString(), config.toString());
        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.out()).isEmpty();
        assertThat(r.err()).isEqualTo("weft draft: " + config + ": already exists; weft draft never replaces a file"
                + " (name another, or move it away)" + System.lineSeparator());
        assertThat(Files.readString(config)).isEqualTo("mine\n");
        // a link to nothing is a file name that is taken, too
        Path link = Files.createSymbolicLink(dir.resolve("link.yaml"), dir.resolve("nowhere.yaml"));
        assertThat(weft("draft", model.toString(), link.toString()).exit()).isEqualTo(2);
        assertThat(dir.resolve("nowhere.yaml")).doesNotExist();
    }

    @Test
    void aModelThatCannotBeReadWritesNothing() {
        Path config = dir.resolve("weft.yaml");
        InspectCommandTest.Run r = weft("draft", dir.resolve("gone.onnx").toString(), config.toString());
        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.err()).isEqualTo("weft draft: " + dir.resolve("gone.onnx") + ": no such file"
                + System.lineSeparator());
        assertThat(config).doesNotExist();
    }

    @Test
    void anOpenObservationSizeIsLeftToDecideAndAHistoryIsGuessedFromItsShape() throws Exception {
        // obs [1, features] (size left open) and past [1, 3, features]: the draft cannot know the size
        OnnxGraph g = OnnxGraph.named("open_size");
        String x = g.input("obs", Element.FLOAT, 1, "features");
        g.input("past", Element.FLOAT, 1, 3, "features");
        g.reshapeNamed("actions", g.matMul(x, g.floats("w", new float[] {1, 0, 0, 1, 1, 0, 0, 1}, 4, 2)), 1, 2, 1);
        g.output("actions", Element.FLOAT, 1, 2, 1);
        Path model = g.write(dir.resolve("open.onnx"));
        Path config = dir.resolve("open.yaml");
        assertThat(weft("draft", model.toString(), config.toString()).exit()).isZero();
        String draft = Files.readString(config);
        assertThat(draft.lines()).contains(
                "  observation_size: DECIDE              # DECIDE: input 'obs' [1, features] leaves its size open",
                "    past: {source: constant, values: DECIDE} # DECIDE: float32 [1, 3, features]: weft cannot tell what"
                        + " this input holds; bind it (docs/policies.md)",
                "  kind: embedded                        # guess: observations from your own process (Weft.offer),"
                        + " or udp (docs/ports.md)");
        assertThat(refusedKeys(config)).contains("policy.observation_size", "policy.inputs.past.values");
    }

    @Test
    void aHistoryInputIsGuessedWhenItsLastAxisIsTheObservation() throws Exception {
        Path model = Files.write(dir.resolve("hist.onnx"), PolicyModels.stateAndHistoryPolicy(2, 3, 8, 4, 2, 5).bytes());
        Path config = dir.resolve("hist.yaml");
        assertThat(weft("draft", model.toString(), config.toString()).exit()).isZero();
        String draft = Files.readString(config);
        assertThat(draft.lines()).contains(
                "    state: {source: observation}        # guess: float32 [1, 2]: the observation vector",
                "    history: {source: history, depth: 3, spacing: DECIDE, with_current: false} # DECIDE: seconds"
                        + " between past observations, as trained; guess: float32 [1, 3, 2], past observations,"
                        + " oldest first, the current one in its own input",
                "  kind: sim                             # guess: the simulated plant observes the joint positions;"
                        + " for a robot: udp (docs/ports.md)");
        assertThat(refusedKeys(config)).contains("policy.inputs.history.spacing");
        WeftConfig c = WeftConfig.load(Files.writeString(dir.resolve("hist-filled.yaml"),
                fill(draft.replace("spacing: DECIDE", "spacing: 0.1"))));
        assertThat(c.policy().inputs().get("history")).isInstanceOf(InputBinding.History.class);
        InputBinding.History h = (InputBinding.History) c.policy().inputs().get("history");
        assertThat(h.depth()).isEqualTo(3);
        assertThat(h.withCurrent()).isFalse();
        assertThat(c.policy().observationSize()).isEqualTo(2);
    }

    @Test
    void anImageInputGetsACameraStreamAndACameraBindingThatLoadOnceFilledIn() throws Exception {
        // a model with an image [1, 3, 8, 8] and a state [1, 2], giving [1, 4, 2]
        dev.weft.onnxkit.OnnxGraph g = dev.weft.onnxkit.OnnxGraph.named("image-state");
        String image = g.input("image", dev.weft.onnxkit.OnnxGraph.Element.FLOAT, 1, 3, 8, 8);
        String state = g.input("state", dev.weft.onnxkit.OnnxGraph.Element.FLOAT, 1, 2);
        String mean = g.opWith("ReduceMean", java.util.Map.of("axes", new long[] {1, 2, 3}, "keepdims", 1L), image);
        String spread = g.add(g.reshape(mean, 1, 1, 1), g.floats("zeros", new float[4], 1, 4, 1));
        g.opNamed("Add", "actions", g.reshape(state, 1, 1, 2), spread);
        g.output("actions", dev.weft.onnxkit.OnnxGraph.Element.FLOAT, 1, 4, 2);
        Path model = g.write(dir.resolve("image-state.onnx"));
        Path config = dir.resolve("image.yaml");
        assertThat(weft("draft", model.toString(), config.toString()).exit()).isZero();
        String draft = Files.readString(config);
        assertThat(draft.lines()).contains(
                "    state: {source: observation}        # guess: float32 [1, 2]: the observation vector",
                "    image: {source: camera, camera: camera_0, layout: nchw, resize: bilinear, mean: [DECIDE], std:"
                        + " [DECIDE]} # DECIDE: float32 [1, 3, 8, 8] reads as an image of 3 channels; the mean and"
                        + " std per channel, as trained (after dividing by 255)");
        assertThat(refusedKeys(config)).contains("cameras.camera_0.height", "cameras.camera_0.age_max");
        String filled = fill(draft.replace("mean: [DECIDE], std: [DECIDE]", "mean: [0.5, 0.5, 0.5], std: [0.2, 0.2, 0.2]")
                .replace("height: DECIDE", "height: 16").replace("width: DECIDE", "width: 20")
                .replace("age_max: DECIDE", "age_max: 0.1").replace("file: DECIDE", "file: overhead.frames"));
        WeftConfig c = WeftConfig.load(Files.writeString(dir.resolve("image-filled.yaml"), filled));
        assertThat(c.cameras()).hasSize(1);
        assertThat(c.cameras().get(0).frameFile()).contains(dir.resolve("overhead.frames"));
        InputBinding.Image b = (InputBinding.Image) c.policy().inputs().get("image");
        assertThat(b.camera()).isEqualTo("camera_0");
        assertThat(b.frameHeight()).isEqualTo(16);
        // and the model loads with it: a 16 × 20 frame resized to the model's 8 × 8
        try (dev.weft.runtime.policy.OnnxPolicy p = dev.weft.runtime.ConfiguredRun.of(c).loadPolicy()) {
            assertThat(p.cameras()).containsExactly("camera_0");
        }
        InspectCommandTest.Run check = weft("check", dir.resolve("image-filled.yaml").toString());
        assertThat(check.out()).as(check.err()).contains("camera         camera_0: 16 × 20 rgb8, newest frame at most ")
                .contains("frames from " + dir.resolve("overhead.frames") + "; read by input 'image'");
    }

    @Test
    void aFlatOutputIsGuessedAsOneActionAndSaysSo() throws Exception {
        Path model = Files.write(dir.resolve("actor.onnx"), PolicyModels.singleActionPolicy(4, 8, 4, 1).bytes());
        Path config = dir.resolve("actor.yaml");
        assertThat(weft("draft", model.toString(), config.toString()).exit()).isZero();
        String draft = Files.readString(config);
        assertThat(draft.lines()).contains(
                "    layout: 1xD                         # guess: [1, 4] read as one action; a flat chunk would be 1xKD"
                        + " with chunk_length",
                "    action_size: 4                      # D, fixed by the model (axis 1)");
        assertThat(draft).doesNotContain("chunk_length: ");
        // one action per call plans a single policy step ahead: the latency bound a person fills in must be below it
        String filled = fill(draft.replace("inference_latency_max: DECIDE", "inference_latency_max: 0.01"));
        InspectCommandTest.Run check = weft("check", Files.writeString(dir.resolve("actor-filled.yaml"), filled)
                .toString(), "--runs", "5");
        assertThat(check.err()).isEmpty();
        assertThat(check.out()).contains(": one action of D = 4 values, held for 2 policy steps (K = 3; layout 1xD,"
                + " output 'action')");
    }

    @Test
    void namesThatAreNotPlainWordsAreQuoted() {
        assertThat(DraftCommand.quote("obs")).isEqualTo("obs");
        assertThat(DraftCommand.quote("obs:0")).isEqualTo("\"obs:0\"");
        assertThat(DraftCommand.quote("yes")).isEqualTo("\"yes\"");
        assertThat(DraftCommand.quote("DECIDE")).isEqualTo("\"DECIDE\"");
        assertThat(DraftCommand.quote("a \"b\"\n")).isEqualTo("\"a \\\"b\\\"\\n\"");
    }
}
