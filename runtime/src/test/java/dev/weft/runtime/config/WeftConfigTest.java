package dev.weft.runtime.config;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import dev.weft.filters.Interpolation;
import dev.weft.onnxkit.PolicyModels;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.BadInputException.Problem;
import dev.weft.runtime.policy.ChunkLayout;
import dev.weft.runtime.policy.InputBinding;
import dev.weft.runtime.policy.OnnxPolicy;
import dev.weft.runtime.policy.OutputSpec;
import dev.weft.runtime.policy.PolicySpec;
import dev.weft.runtime.policy.SessionSettings;
import dev.weft.runtime.port.PortOptions;
import java.io.IOException;
import java.io.InputStream;
import java.math.BigInteger;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

class WeftConfigTest {

    /** A small valid file; tests change one line at a time. Line numbers are noted where they matter. */
    static final String VALID = """
            robot:
              name: arm
              joints:
                - name: shoulder
                  position: {min: -2.8, max: 2.8}
                  velocity: 2.0
                  acceleration: 8.0
                  jerk: 80.0
                - name: elbow
                  position: {min: -2.0, max: 2.0, margin: 0.1}
                  velocity: 2.5
                  acceleration: 10.0
                  jerk: 100.0
            timing:
              control_period: 0.002
              policy_step: 0.01
            policy:
              model: arm.onnx
              observation_size: 4
              inputs:
                obs: {source: observation}
              output:
                layout: 1xKxD
                chunk_length: 10
            watchdog:
              observation_age_max: 0.02
              inference_latency_max: 0.05
              overruns_max: 3
            arming:
              pose_distance_max: 0.05
            source:
              kind: sim
            port:
              kind: sim
            """;

    @TempDir
    Path dir;

    @BeforeEach
    void modelFile() throws IOException {
        Files.write(dir.resolve("arm.onnx"), PolicyModels.chunkPolicy(4, 8, 10, 2, 1).bytes());
    }

    private static String resource(String name) throws IOException {
        try (InputStream in = WeftConfigTest.class.getResourceAsStream("/config/" + name)) {
            return new String(in.readAllBytes(), StandardCharsets.UTF_8);
        }
    }

    private WeftConfig parse(String yaml) throws BadInputException {
        return WeftConfig.parse(yaml, dir, "test.yaml");
    }

    /** The problems as "where: what" lines; fails the test when the text is accepted. */
    private List<String> problems(String yaml) {
        BadInputException e = catchThrowableOfType(() -> parse(yaml), BadInputException.class);
        assertThat(e).as("the configuration should have been refused").isNotNull();
        return e.problems().stream().map(Problem::toString).toList();
    }

    private static String replace(String text, String from, String to) {
        assertThat(text).contains(from);
        return text.replace(from, to);
    }

    // ---- untrusted sizes

    @Test
    void aConfigurationFileOverOneMebibyteIsRefusedWithoutBeingRead() throws Exception {
        // a sparse 3 GB file: refused after reading 1 MiB + 1 byte, never held whole
        Path big = dir.resolve("big.yaml");
        try (java.io.RandomAccessFile f = new java.io.RandomAccessFile(big.toFile(), "rw")) {
            f.setLength(3_000_000_000L);
        }
        BadInputException e = catchThrowableOfType(() -> WeftConfig.load(big), BadInputException.class);
        assertThat(e).isNotNull();
        assertThat(e.problems()).map(Problem::toString).containsExactly(
                big + ": is larger than 1048576 bytes; a configuration may hold at most 1 MiB");
    }

    @Test
    void aHugeNumberOrTextValueIsRefusedBeforeItIsConverted() throws Exception {
        String digits = "1".repeat(100);
        assertThat(problems(replace(VALID, "control_period: 0.002", "control_period: " + digits)))
                .containsExactly("timing.control_period (line 15): is a value of 100 characters; a number may have"
                        + " at most 64");
        assertThat(problems(replace(VALID, "control_period: 0.002", "control_period: " + "1".repeat(100_000))))
                .containsExactly("timing.control_period (line 15): is a value of 100000 characters; a value may have"
                        + " at most 4096");
        assertThat(problems(replace(VALID, "name: arm", "name: " + "n".repeat(5000))))
                .containsExactly("robot.name (line 2): is a value of 5000 characters; a value may have at most 4096");
        assertThat(problems("# " + "x".repeat(1 << 20) + "\n" + VALID))
                .containsExactly("test.yaml: holds " + ((1 << 20) + 3 + VALID.length())
                        + " characters; a configuration may hold at most 1048576 (1 MiB)");
    }

    // ---- valid files

    @Test
    void theFullSampleFileParsesIntoTheValuesItStates() throws Exception {
        Files.createDirectories(dir.resolve("models"));
        Files.createDirectories(dir.resolve("out"));
        Files.write(dir.resolve("models/arm.onnx"), PolicyModels.noiseAndStepPolicy(6, 8, 8, 3, 0.1f, 0.01f, 3).bytes());

        WeftConfig c = WeftConfig.parse(resource("full.yaml"), dir, "full.yaml");

        assertThat(c.robot()).isEqualTo(new RobotConfig("bench-arm", List.of(
                new JointConfig("shoulder", -2.8, 2.8, 0.05, 2.0, 8.0, 80.0),
                new JointConfig("elbow", -2.0, 2.0, 0.0, 2.5, 10.0, 100.0),
                new JointConfig("slide", 0.0, 0.4, 0.01, 0.25, 1.5, 20.0))));
        assertThat(c.timing()).isEqualTo(new TimingConfig(0.002, 0.02, TimingConfig.QuerySchedule.FIXED, 50, 0.0001));
        assertThat(c.timing().stepRatio()).isEqualTo(10.0);
        Map<String, InputBinding> inputs = new LinkedHashMap<>();
        inputs.put("obs", new InputBinding.Observation());
        inputs.put("noise", new InputBinding.Noise(42, 0.5, 24));
        inputs.put("step", new InputBinding.Step());
        assertThat(c.policySpec()).isEqualTo(new PolicySpec(dir.resolve("models/arm.onnx"), 6, inputs,
                new OutputSpec("actions", ChunkLayout.BATCH_STEPS_VALUES, 8, 3),
                new SessionSettings(2, SessionSettings.Optimization.BASIC, true, 5)));
        assertThat(List.copyOf(c.policySpec().inputs().keySet())).containsExactly("obs", "noise", "step");
        assertThat(c.blending()).isEqualTo(new BlendingConfig(BlendingConfig.Method.ENSEMBLE,
                Interpolation.CUBIC_HERMITE, 0.05, BlendingConfig.Favour.NEWEST, 0, 0, BlendingConfig.Weights.TAPERED,
                Double.NaN));
        assertThat(c.smoothing()).isEqualTo(new SmoothingConfig(SmoothingConfig.Method.ONE_EURO, 0, 2.0, 0.3, 1.5));
        assertThat(c.watchdog()).isEqualTo(new WatchdogConfig(0.01, 0.02, 0.08, 3, List.of(
                new WatchdogConfig.Disabled(WatchdogConfig.Condition.INFERENCE_LATENCY,
                        "bench run on a laptop; latency is not representative"))));
        assertThat(c.watchdog().enabled(WatchdogConfig.Condition.INFERENCE_LATENCY)).isFalse();
        assertThat(c.watchdog().enabledConditions()).hasSize(WatchdogConfig.Condition.values().length - 1)
                .contains(WatchdogConfig.Condition.OPERATOR_STOP, WatchdogConfig.Condition.OBSERVATION_AGE);
        assertThat(c.arming()).isEqualTo(new ArmingConfig(0.1, 0.5, 1));
        assertThat(c.source().kind()).isEqualTo("udp");
        assertThat(c.source().options()).isEqualTo(Map.of("port", 9870, "bind", "127.0.0.1",
                "layout", List.of("q0", "q1", "q2")));
        assertThat(c.port().kind()).isEqualTo("csv");
        assertThat(c.port().options()).isEqualTo(Map.of("file", "out/commands.csv", "flush_every", 100,
                "nested", Map.of("on", true, "gains", List.of(1, 2.5))));
        assertThat(c.telemetry()).isEqualTo(new TelemetryConfig(Optional.of(dir.resolve("out/telemetry.csv")),
                "telemetry.file (line 90)", false, TelemetryConfig.DEFAULT_DRAIN_TIMEOUT));
    }

    @Test
    void thePolicySpecOfTheFullSampleLoadsInTheOnnxAdapter() throws Exception {
        Files.createDirectories(dir.resolve("models"));
        Files.createDirectories(dir.resolve("out"));
        Files.write(dir.resolve("models/arm.onnx"), PolicyModels.noiseAndStepPolicy(6, 8, 8, 3, 0.1f, 0.01f, 3).bytes());
        WeftConfig c = WeftConfig.parse(resource("full.yaml"), dir, "full.yaml");

        try (OnnxPolicy p = OnnxPolicy.load(c.policySpec().withSession(c.policySpec().session().withWarmupRuns(0)))) {
            assertThat(p.chunkLength()).isEqualTo(8);
            assertThat(p.actionSize()).isEqualTo(c.robot().jointCount());
            assertThat(p.observationSize()).isEqualTo(6);
            assertThat(p.outputName()).isEqualTo("actions");
        }
    }

    @Test
    void theMinimalSampleTakesEveryDefaultAndResolvesTheModelAgainstItsFolder() throws Exception {
        Path conf = Files.createDirectories(dir.resolve("conf"));
        Files.createDirectories(dir.resolve("models"));
        Files.write(dir.resolve("models/axis.onnx"), PolicyModels.chunkPolicy(2, 4, 5, 1, 2).bytes());
        Path file = conf.resolve("minimal.yaml");
        Files.writeString(file, resource("minimal.yaml"));

        WeftConfig c = WeftConfig.load(file);

        assertThat(c.policySpec().model()).isEqualTo(dir.resolve("models/axis.onnx").toAbsolutePath().normalize());
        assertThat(c.robot().joints()).containsExactly(new JointConfig("axis", -1, 1, 0, 1, 5, 50));
        // policy_step defaults to the control period, spin_window to min(0.0002, control_period / 2).
        assertThat(c.timing()).isEqualTo(new TimingConfig(0.002, 0.002, TimingConfig.QuerySchedule.WHEN_IDLE, 0,
                0.0002));
        assertThat(c.policySpec().output()).isEqualTo(new OutputSpec(null, ChunkLayout.BATCH_STEPS_VALUES, 0, 1));
        assertThat(c.policySpec().session()).isEqualTo(SessionSettings.DEFAULTS);
        assertThat(c.blending()).isEqualTo(BlendingConfig.DEFAULTS);
        assertThat(c.smoothing()).isEqualTo(SmoothingConfig.NONE);
        assertThat(c.watchdog()).isEqualTo(new WatchdogConfig(0.02, 0, 0.05, 5, List.of()));
        assertThat(c.arming()).isEqualTo(new ArmingConfig(0.05, 0, 2));
        assertThat(c.source()).isEqualTo(new EndpointConfig("sim", Map.of(), "source.options", conf.toAbsolutePath()));
        assertThat(c.telemetry()).isEqualTo(TelemetryConfig.NONE);
        try (OnnxPolicy p = OnnxPolicy.load(c.policySpec().withSession(SessionSettings.DEFAULTS.withWarmupRuns(0)))) {
            assertThat(p.chunkLength()).isEqualTo(5);
        }
    }

    @Test
    void theSpinWindowDefaultIsCappedAtHalfAShortControlPeriod() throws Exception {
        WeftConfig c = parse(replace(replace(VALID, "control_period: 0.002", "control_period: 0.0001"),
                "observation_age_max: 0.02", "observation_age_max: 0.001"));
        assertThat(c.timing().spinWindow()).isEqualTo(0.00005);
    }

    @Test
    void everyInputSourceMapsOntoItsBinding() throws Exception {
        String yaml = replace(VALID, "    obs: {source: observation}\n", """
                    state: {source: observation}
                    past: {source: history, depth: 3, spacing: 0.01}
                    prior: {source: history, depth: 2, spacing: 0.1, with_current: false, between_samples: linear}
                    bias: {source: constant, values: [0.5, -1, 2e-3]}
                    noise: {source: noise, seed: -9007199254740993}
                    tick: {source: step}
                """);
        Map<String, InputBinding> in = parse(yaml).policySpec().inputs();
        assertThat(in).containsExactly(
                Map.entry("state", new InputBinding.Observation()),
                Map.entry("past", new InputBinding.History(3, 10_000_000L, true, false)),
                Map.entry("prior", new InputBinding.History(2, 100_000_000L, false, true)),
                Map.entry("bias", new InputBinding.Constant(new double[] {0.5, -1, 0.002})),
                Map.entry("noise", new InputBinding.Noise(-9007199254740993L, 1.0, 0)),
                Map.entry("tick", new InputBinding.Step()));
    }

    @Test
    void aHistoryNeedsItsSpacingAndNamesEveryBadKey() {
        String yaml = replace(VALID, "    obs: {source: observation}\n", """
                    past: {source: history, depth: 3}
                    prior: {source: history, depth: 2, spacing: -0.1, with_current: 1, between_samples: cubic}
                    long: {source: history, depth: 1000, spacing: 1}
                """);
        assertThat(problems(yaml)).containsExactly(
                "policy.inputs.past.spacing (line 21): is required",
                "policy.inputs.prior.spacing (line 22): must be > 0, got -0.1",
                "policy.inputs.prior.with_current (line 22): must be true or false, got 1",
                "policy.inputs.prior.between_samples (line 22): must be one of latest, linear, got \"cubic\"",
                "policy.inputs.long.spacing (line 23): 1000 points 1.0 s apart span more than 60 s");
    }

    @Test
    void ensembleWeightsAreTaperedByDefaultAndPublishedOnRequest() throws Exception {
        WeftConfig d = parse(VALID);
        assertThat(d.blending().interpolation()).isEqualTo(Interpolation.CUBIC_SPLINE);
        assertThat(d.blending().weights()).isEqualTo(BlendingConfig.Weights.TAPERED);
        // the default taper: half the chunk in whole steps, at least one step
        assertThat(d.blending().taperSteps(12)).isEqualTo(6.0);
        assertThat(d.blending().taperSteps(3)).isEqualTo(1.0);
        assertThat(d.blending().taperSteps(1)).isEqualTo(1.0);
        WeftConfig t = parse(VALID + "blending: {ensemble: {taper_steps: 2.5}}\n");
        assertThat(t.blending().taperSteps(12)).isEqualTo(2.5);
        WeftConfig p = parse(VALID + "blending: {ensemble: {weights: published}}\n");
        assertThat(p.blending().weights()).isEqualTo(BlendingConfig.Weights.PUBLISHED);
        assertThat(p.blending().taperSteps(12)).isZero();
        assertThat(problems(VALID + "blending: {ensemble: {weights: published, taper_steps: 2}}\n")).containsExactly(
                "blending.ensemble.taper_steps (line 35): is given but blending.ensemble.weights is published,"
                        + " which has no taper; remove it or use weights: tapered");
        assertThat(problems(VALID + "blending: {ensemble: {weights: exact}}\n")).hasSize(1)
                .allMatch(m -> m.contains("blending.ensemble.weights") && m.contains("tapered") && m.contains("published"));
    }

    @Test
    void blendingAndSmoothingMethodsReadTheirOwnSection() throws Exception {
        String latest = VALID + "blending: {method: latest, latest: {executed_steps: 6}}\n"
                + "smoothing: {method: butterworth, butterworth: {cutoff: 20}}\n";
        WeftConfig a = parse(latest);
        assertThat(a.blending()).isEqualTo(new BlendingConfig(BlendingConfig.Method.LATEST, Interpolation.CUBIC_SPLINE,
                BlendingConfig.DEFAULT_WEIGHT_RATE, BlendingConfig.Favour.OLDEST, 6, 0, BlendingConfig.Weights.TAPERED,
                Double.NaN));
        assertThat(a.smoothing()).isEqualTo(new SmoothingConfig(SmoothingConfig.Method.BUTTERWORTH, 20, 0, 0, 0));

        WeftConfig b = parse(VALID + "blending: {method: crossfade, crossfade: {fade_steps: 3}}\n");
        assertThat(b.blending().method()).isEqualTo(BlendingConfig.Method.CROSSFADE);
        assertThat(b.blending().fadeSteps()).isEqualTo(3);
    }

    @Test
    void optionsReachTheProviderWithTheirKeyPathAndTheFileFolder() throws Exception {
        String yaml = replace(VALID, "port:\n  kind: sim\n", """
                port:
                  kind: csv
                  options:
                    file: out/commands.csv
                    every: 2.5
                """);
        WeftConfig c = parse(yaml);
        PortOptions o = c.portOptions();
        assertThat(o.path("file")).isEqualTo(dir.resolve("out/commands.csv"));
        assertThat(o.integer("every", 1, 1, 10)).isEqualTo(1);
        BadInputException e = catchThrowableOfType(o::finish, BadInputException.class);
        assertThat(e.problems()).containsExactly(new Problem("port.options.every", "must be a whole number, got 2.5"));
        // A fresh reader each time: the first reader's state does not leak into the next.
        assertThat(c.portOptions().has("file")).isTrue();
        assertThat(c.sourceOptions().has("file")).isFalse();
    }

    @Test
    void hugeWholeNumbersInOptionsStayExact() throws Exception {
        String yaml = replace(VALID, "port:\n  kind: sim\n",
                "port:\n  kind: sim\n  options: {id: 123456789012345678901234567890, small: 7, big: 5000000000}\n");
        Map<String, Object> o = parse(yaml).port().options();
        assertThat(o.get("id")).isEqualTo(new BigInteger("123456789012345678901234567890"));
        assertThat(o.get("small")).isEqualTo(7);
        assertThat(o.get("big")).isEqualTo(5_000_000_000L);
    }

    // ---- all problems at once

    @Test
    void aFileWithManyMistakesReportsEveryOneOfThemInFileOrder() throws Exception {
        BadInputException e = catchThrowableOfType(
                () -> WeftConfig.parse(resource("many-mistakes.yaml"), dir, "many-mistakes.yaml"),
                BadInputException.class);
        assertThat(e.problems().stream().map(Problem::toString).toList()).containsExactly(
                "robot.joints[1].position.max (line 6): must be > min (1), got -1",
                "robot.joints[2].name (line 7): \"a\" is already the name of robot.joints[0]",
                "robot.joints[2].position.margin (line 7): must be < half the position range ((max - min) / 2 = 1), got 1",
                "robot.joints[3].acceleration (line 13): must be > 0, got 0",
                "robot.joints[3].jerk (line 14): must be > 0, got -2",
                "robot.joints[3].jerkk (line 15): unknown key",
                "timing.policy_step (line 18): must be >= control_period (0.002), got 0.001",
                "timing.query.every_ticks (line 19): must be >= 1, got 0",
                "policy.model (line 21): file not found: " + dir.resolve("missing.onnx"),
                "policy.observation_size (line 22): must be a whole number, got \"four\"",
                "policy.inputs.obs.depth (line 24): unknown key",
                "policy.inputs.noise.stddev (line 25): must be >= 0, got -0.5",
                "policy.inputs.extra.source (line 26): must be one of observation, history, constant, noise, step, "
                        + "camera, got \"lidar\"",
                "policy.output.chunk_length (line 27): must be >= 1, got 0",
                "policy.output.action_size (line 27): must equal the number of joints in robot.joints (4), got 3",
                "policy.session.optimization (line 28): must be one of none, basic, extended, all, got \"max\"",
                "blending.crossfade (line 31): is given but blending.method is latest; remove it or change the method",
                // Nyquist frequency = half the sampling rate (sampling theorem; common practice): 1 / (2 × 0.002 s).
                "smoothing.butterworth.cutoff (line 34): must be below the Nyquist frequency of the control rate "
                        + "(250 Hz = 1 / (2 × timing.control_period)), got 300",
                "watchdog.observation_age_max (line 36): must be >= timing.control_period (0.002), got 0.001",
                "watchdog.overruns_max (line 38): must be a whole number, got 2.5",
                "watchdog.disabled[0].condition (line 40): must be one of observation_age, plan_remaining, "
                        + "inference_latency, overruns, port_fault, non_finite_output, got \"latency\"",
                "watchdog.disabled[1].reason (line 41): must not be empty",
                "arming.pose_distance_max (line 42): is required",
                "port.kind (line 46): is required",
                "logging (line 48): unknown key");
        assertThat(e.getMessage()).startsWith("25 problems:");
    }

    @Test
    void unknownKeysAreProblemsAtEveryLevelWithAHintForATypo() {
        String yaml = replace(VALID, "      jerk: 80.0", "      jerkk: 80.0") + "telemetri: {file: t.csv}\n";
        assertThat(problems(yaml)).containsExactly(
                "robot.joints[0].jerk (line 4): is required",
                "robot.joints[0].jerkk (line 8): unknown key (did you mean jerk?)",
                "telemetri (line 35): unknown key (did you mean telemetry?)");
    }

    @Test
    void aKeyThatNeedsNoHintIsPlainlyUnknown() {
        assertThat(problems(replace(VALID, "  policy_step: 0.01", "  policy_step: 0.01\n  priority: 90")))
                .containsExactly("timing.priority (line 17): unknown key");
    }

    @Test
    void wrongTypesNameWhatWasFound() {
        String yaml = replace(replace(replace(replace(replace(VALID,
                "  name: arm", "  name: [a, b]"),
                "      velocity: 2.0", "      velocity: \"2.0\""),
                "    chunk_length: 10", "    chunk_length: {k: 10}"),
                "  joints:", "  joints: {}\n  extra_joints:"),
                "  overruns_max: 3", "  overruns_max: many");
        assertThat(problems(yaml)).containsExactly(
                "robot.name (line 2): must be text, got a list",
                "robot.joints (line 3): must be a list, got a map",
                "robot.extra_joints (line 4): unknown key",
                "policy.output.chunk_length (line 25): must be a whole number, got a map",
                "watchdog.overruns_max (line 29): must be a whole number, got \"many\"");
        assertThat(problems(replace(VALID, "      velocity: 2.0", "      velocity: \"2.0\"")))
                .containsExactly("robot.joints[0].velocity (line 6): must be a number, got \"2.0\"");
        assertThat(problems(replace(VALID, "policy:\n  model", "policy: arm.onnx\npolicy_settings:\n  model")))
                .containsExactly("policy (line 17): must be a map, got \"arm.onnx\"",
                        "policy_settings (line 18): unknown key");
    }

    @Test
    void yamlInfinityAndNotANumberAreRefusedAsNonFinite() {
        // The YAML 1.2 core schema spells infinity and not-a-number .inf, -.inf and .nan (spec section
        // 10.3.2, from memory). Jackson hands them over as unreadable numbers; they must not slip past
        // the finite checks as text or as defaults.
        String yaml = replace(replace(VALID, "      jerk: 80.0", "      jerk: .inf"),
                "min: -2.0, max: 2.0", "min: -.inf, max: .NaN");
        assertThat(problems(yaml)).containsExactly(
                "robot.joints[0].jerk (line 8): must be a finite number, got .inf",
                "robot.joints[1].position.min (line 10): must be a finite number, got -.inf",
                "robot.joints[1].position.max (line 10): must be a finite number, got .NaN");
        assertThat(problems(replace(VALID, "      jerk: 80.0", "      jerk: 1e400")))
                .containsExactly("robot.joints[0].jerk (line 8): must be a finite number, got 1e400");
    }

    @Test
    void anEmptyValueNeverPassesForADefault() {
        assertThat(problems(replace(VALID, "  policy_step: 0.01", "  policy_step:")))
                .containsExactly("timing.policy_step (line 16): has no value");
    }

    @Test
    void onlyTrueAndFalseAreFlags() {
        // YAML 1.1 also read yes, no, on and off as booleans; here they stay words and are refused.
        String yaml = replace(VALID, "    chunk_length: 10", "    chunk_length: 10\n  session: {spinning: yes}");
        assertThat(problems(yaml)).containsExactly("policy.session.spinning (line 25): must be true or false, got \"yes\"");
    }

    @ParameterizedTest(name = "{0}")
    @CsvSource(delimiter = '|', textBlock = """
            velocity: 2.5      | robot.joints[1].velocity (line 11): must be > 0, got -2
            acceleration: 10.0 | robot.joints[1].acceleration (line 12): must be > 0, got -2
            jerk: 100.0        | robot.joints[1].jerk (line 13): must be > 0, got -2
            control_period: 0.002 | timing.control_period (line 15): must be > 0, got -2
            policy_step: 0.01  | timing.policy_step (line 16): must be > 0, got -2
            observation_size: 4 | policy.observation_size (line 19): must be >= 1, got -2
            chunk_length: 10   | policy.output.chunk_length (line 24): must be >= 1, got -2
            observation_age_max: 0.02 | watchdog.observation_age_max (line 26): must be > 0, got -2
            inference_latency_max: 0.05 | watchdog.inference_latency_max (line 27): must be > 0, got -2
            overruns_max: 3    | watchdog.overruns_max (line 28): must be >= 1, got -2
            pose_distance_max: 0.05 | arming.pose_distance_max (line 30): must be > 0, got -2
            """)
    void aNegativeBoundIsReportedAloneAtItsKey(String line, String expected) {
        String key = line.substring(0, line.indexOf(':') + 1);
        assertThat(problems(replace(VALID, line, key + " -2"))).containsExactly(expected);
    }

    @Test
    void missingSectionsAreEachReported() {
        String yaml = VALID.substring(0, VALID.indexOf("policy:")) + VALID.substring(VALID.indexOf("arming:"));
        assertThat(problems(yaml)).containsExactly("policy: is required", "watchdog: is required");
        assertThat(problems("robot: {name: x, joints: []}\n")).containsExactly(
                "timing: is required", "policy: is required", "watchdog: is required", "arming: is required",
                "source: is required", "port: is required",
                "robot.joints (line 1): must list at least one joint");
    }

    @Test
    void jointPositionRangeAndMarginRules() throws Exception {
        assertThat(problems(replace(VALID, "{min: -2.0, max: 2.0, margin: 0.1}", "{min: 2.0, max: 2.0, margin: -0.1}")))
                .containsExactly("robot.joints[1].position.margin (line 10): must be >= 0, got -0.1",
                        "robot.joints[1].position.max (line 10): must be > min (2.0), got 2.0");
        assertThat(parse(replace(VALID, "{min: -2.0, max: 2.0, margin: 0.1}", "{min: -2.0, max: 2.0, margin: 1.99}"))
                .robot().joints().get(1).operatingMin()).isCloseTo(-0.01, org.assertj.core.data.Offset.offset(1e-12));
        assertThat(problems(replace(VALID, "{min: -2.0, max: 2.0, margin: 0.1}", "{min: -2.0, max: 2.0, margin: 2}")))
                .containsExactly("robot.joints[1].position.margin (line 10): must be < half the position range "
                        + "((max - min) / 2 = 2), got 2");
    }

    // ---- rules between sections

    @Test
    void theActionSizeMustMatchTheJointCount() {
        assertThat(problems(replace(VALID, "    chunk_length: 10", "    chunk_length: 10\n    action_size: 3")))
                .containsExactly("policy.output.action_size (line 25): must equal the number of joints in "
                        + "robot.joints (2), got 3");
    }

    @Test
    void aFixedQueryIntervalLongerThanAChunkWouldStarveThePlan() throws Exception {
        // One chunk covers 10 steps × 0.01 s = 0.1 s; queries every 50 ticks × 0.002 s = 0.1 s just keep up.
        String ok = replace(VALID, "  policy_step: 0.01", "  policy_step: 0.01\n  query: {schedule: fixed, every_ticks: 50}");
        assertThat(parse(ok).timing().everyTicks()).isEqualTo(50);
        assertThat(problems(ok.replace("every_ticks: 50", "every_ticks: 51"))).containsExactly(
                "timing.query.every_ticks (line 17): queries 0.102 s apart (51 × timing.control_period) outlast the "
                        + "plan one chunk gives (policy.output.chunk_length × timing.policy_step = 10 × 0.01 s = 0.1 s), "
                        + "so the plan would run out even with instant inference");
        // Executing only the first 4 steps of each chunk shortens the plan to 0.04 s.
        assertThat(problems(ok + "blending: {method: latest, latest: {executed_steps: 4}}\n")).containsExactly(
                "timing.query.every_ticks (line 17): queries 0.1 s apart (50 × timing.control_period) outlast the "
                        + "plan one chunk gives (blending.latest.executed_steps × timing.policy_step = 4 × 0.01 s = "
                        + "0.04 s), so the plan would run out even with instant inference",
                "watchdog.inference_latency_max (line 28): must be below the plan one chunk gives "
                        + "(blending.latest.executed_steps × timing.policy_step = 4 × 0.01 s = 0.04 s: a chunk that "
                        + "late is entirely in the past), got 0.05");
        assertThat(problems(VALID + "blending: {method: latest, latest: {executed_steps: 11}}\n")).containsExactly(
                "blending.latest.executed_steps (line 35): must be <= policy.output.chunk_length (10), got 11");
    }

    @Test
    void whenIdleTakesNoInterval() {
        assertThat(problems(replace(VALID, "  policy_step: 0.01",
                "  policy_step: 0.01\n  query: {schedule: when_idle, every_ticks: 5}"))).containsExactly(
                "timing.query.every_ticks (line 17): applies only to schedule fixed; schedule when_idle queries "
                        + "whenever the inference worker is free");
        assertThat(problems(replace(VALID, "  policy_step: 0.01", "  policy_step: 0.01\n  query: {every_ticks: 5}")))
                .containsExactly("timing.query.schedule (line 17): is required");
    }

    @Test
    void watchdogBoundsMustFitInsideOneChunk() {
        String yaml = replace(replace(VALID, "  inference_latency_max: 0.05", "  inference_latency_max: 0.1"),
                "  overruns_max: 3", "  overruns_max: 3\n  plan_remaining_min: 0.2");
        assertThat(problems(yaml)).containsExactly(
                "watchdog.inference_latency_max (line 27): must be below the plan one chunk gives "
                        + "(policy.output.chunk_length × timing.policy_step = 10 × 0.01 s = 0.1 s: a chunk that late "
                        + "is entirely in the past), got 0.1",
                "watchdog.plan_remaining_min (line 29): must be below the plan one chunk gives "
                        + "(policy.output.chunk_length × timing.policy_step = 10 × 0.01 s = 0.1 s), got 0.2");
    }

    @Test
    void theSingleActionLayoutIsOneActionHeldForTwoSteps() throws Exception {
        String yaml = replace(VALID, "    layout: 1xKxD\n    chunk_length: 10", "    layout: 1xD\n    chunk_length: 2");
        assertThat(problems(yaml)).containsExactly(
                "policy.output.chunk_length (line 24): must be 1 for layout 1xD (one action per call), got 2");
        // one action held for two steps, K = 3 at 0.01 s: an inference latency bound of 0.05 s could
        // never be met by a fresh chunk
        assertThat(problems(replace(VALID, "    layout: 1xKxD\n    chunk_length: 10", "    layout: 1xD")))
                .containsExactly("watchdog.inference_latency_max (line 26): must be below the plan one chunk gives "
                        + "(policy.output.chunk_length × timing.policy_step = 3 × 0.01 s = 0.03 s: a chunk that late "
                        + "is entirely in the past), got 0.05");
        // held for five steps, 0.06 s: the bound holds
        assertThat(parse(replace(VALID, "    layout: 1xKxD\n    chunk_length: 10", "    layout: 1xD\n    hold_steps: 5"))
                .policySpec().output().effectiveHoldSteps()).isEqualTo(5);
    }

    @Test
    void disablingAWatchdogConditionIsExplicitAndLimited() throws Exception {
        String base = replace(VALID, "  overruns_max: 3", "  overruns_max: 3\n  disabled:\n%s");
        assertThat(parse(base.formatted("    - {condition: port_fault, reason: sim port}")).watchdog().disabled())
                .containsExactly(new WatchdogConfig.Disabled(WatchdogConfig.Condition.PORT_FAULT, "sim port"));
        assertThat(problems(base.formatted("""
                    - {condition: operator_stop, reason: testing}
                    - {condition: overruns, reason: slow laptop}
                    - {condition: overruns, reason: still slow}
                    - {condition: port_fault}
                """.stripTrailing()))).containsExactly(
                "watchdog.disabled[0].condition (line 30): operator_stop cannot be disabled: an operator's stop "
                        + "request always stops",
                "watchdog.disabled[2].condition (line 32): overruns is already disabled by watchdog.disabled[1]",
                "watchdog.disabled[3].reason (line 33): is required");
    }

    @Test
    void aStopCategoryIsOneOrTwo() throws Exception {
        // IEC 60204-1, 9.2.2 (from memory): category 0 removes power at once (uncontrolled), 1 stops under
        // control then removes power, 2 stops under control and keeps power. weft only does controlled stops.
        assertThat(parse(replace(VALID, "  pose_distance_max: 0.05", "  pose_distance_max: 0.05\n  stop_category: 1"))
                .arming().stopCategory()).isEqualTo(1);
        assertThat(problems(replace(VALID, "  pose_distance_max: 0.05", "  pose_distance_max: 0.05\n  stop_category: 0")))
                .containsExactly("arming.stop_category (line 31): must be in [1, 2], got 0");
    }

    @Test
    void aModelPathThatIsAFolderIsRefused() throws Exception {
        Files.createDirectories(dir.resolve("models"));
        assertThat(problems(replace(VALID, "model: arm.onnx", "model: models")))
                .containsExactly("policy.model (line 18): is not a file: " + dir.resolve("models"));
    }

    @Test
    void aTelemetryFileNeedsAnExistingFolder() throws Exception {
        assertThat(problems(VALID + "telemetry: {file: nowhere/t.csv}\n"))
                .containsExactly("telemetry.file (line 35): folder not found: " + dir.resolve("nowhere"));
        assertThat(parse(VALID + "telemetry: {file: t.csv}\n").telemetry().file()).contains(dir.resolve("t.csv"));
    }

    @Test
    void telemetryTakesOverwriteAndADrainTimeoutAndRefusesWhatNoRunCouldWrite() throws Exception {
        TelemetryConfig t = parse(VALID + "telemetry: {file: t.csv, overwrite: true, drain_timeout: 0.5}\n").telemetry();
        assertThat(t).isEqualTo(new TelemetryConfig(Optional.of(dir.resolve("t.csv")), "telemetry.file (line 35)", true,
                0.5));
        assertThat(parse(VALID + "telemetry: {file: t.csv}\n").telemetry().overwrite()).isFalse();
        assertThat(problems(VALID + "telemetry: {file: t.csv, drain_timeout: 0}\n"))
                .containsExactly("telemetry.drain_timeout (line 35): must be > 0, got 0");
        assertThat(problems(VALID + "telemetry: {file: t.csv, overwrite: maybe}\n"))
                .containsExactly("telemetry.overwrite (line 35): must be true or false, got \"maybe\"");
        // an existing file is left to the run's own check, since --overwrite may allow it
        Files.writeString(dir.resolve("old.csv"), "kept\n");
        assertThat(parse(VALID + "telemetry: {file: old.csv}\n").telemetry().file()).contains(dir.resolve("old.csv"));
        assertThat(Files.readString(dir.resolve("old.csv"))).isEqualTo("kept\n");
        // a link to nothing and a special file are refused here, with the line
        Files.createSymbolicLink(dir.resolve("gone.csv"), dir.resolve("nothing.csv"));
        assertThat(problems(VALID + "telemetry: {file: gone.csv}\n")).singleElement().asString()
                .startsWith("telemetry.file (line 35): ").contains("gone.csv is a symbolic link to a file that does not exist");
        assertThat(problems(VALID + "telemetry: {file: /dev/null}\n")).singleElement().asString()
                .startsWith("telemetry.file (line 35): ").contains("/dev/null is not a regular file");
    }

    @Test
    void keysThatAreNotPlainWordsAreQuotedInPaths() {
        assertThat(problems(replace(VALID, "    obs: {source: observation}", "    \"obs.0\": {source: histroy}")))
                .containsExactly("policy.inputs[\"obs.0\"].source (line 21): must be one of observation, history, "
                        + "constant, noise, step, camera, got \"histroy\"");
    }

    // ---- problems with the file itself

    @Test
    void aYamlSyntaxErrorNamesFileLineAndColumn() {
        String broken = replace(VALID, "    obs: {source: observation}", "    obs: {source: observation");
        assertThat(problems(broken)).containsExactly(
                "test.yaml (line 22, column 9): YAML syntax error: expected ',' or '}', but got : "
                        + "(while parsing a flow mapping that starts at line 21, column 10)");
        assertThat(problems("robot:\n  name: a\n name: b\n")).containsExactly(
                "test.yaml (line 3, column 2): YAML syntax error: expected <block end>, but found '<block mapping "
                        + "start>' (while parsing a block mapping that starts at line 1, column 1)");
    }

    @Test
    void documentShapeProblems() {
        assertThat(problems("")).containsExactly("test.yaml: the file holds no settings");
        assertThat(problems("# only a comment\n")).containsExactly("test.yaml: the file holds no settings");
        assertThat(problems("- robot\n")).containsExactly(
                "(top level) (line 1): must be a map of sections (robot, timing, policy, ...), got a list");
        assertThat(problems(VALID + "---\nrobot: {}\n")).containsExactly(
                "test.yaml (line 36): holds a second YAML document; a configuration is one document");
    }

    @Test
    void aKeyGivenTwiceIsAProblemNotAnOverwrite() {
        assertThat(problems(replace(VALID, "      jerk: 80.0", "      jerk: 80.0\n      jerk: 800.0")))
                .containsExactly("robot.joints[0].jerk (line 9): is given twice (first at line 8)");
    }

    @Test
    void aliasesAreRefused() {
        String yaml = replace(replace(VALID, "      velocity: 2.0", "      velocity: &v 2.0"),
                "      velocity: 2.5", "      velocity: *v");
        assertThat(problems(yaml)).containsExactly(
                "robot.joints[1].velocity (line 11): uses the alias *v; aliases are not supported, write the value out");
    }

    @Test
    void loadNamesAFileThatIsMissing() {
        Path missing = dir.resolve("absent.yaml");
        BadInputException e = catchThrowableOfType(() -> WeftConfig.load(missing), BadInputException.class);
        assertThat(e.problems()).containsExactly(new Problem(missing.toString(), "file not found"));
    }

    @Test
    void loadResolvesRelativePathsAgainstTheFileFolder() throws Exception {
        Path sub = Files.createDirectories(dir.resolve("cell"));
        Files.write(sub.resolve("arm.onnx"), PolicyModels.chunkPolicy(4, 8, 10, 2, 1).bytes());
        Files.writeString(sub.resolve("weft.yaml"), VALID + "telemetry: {file: rows.csv}\n");
        WeftConfig c = WeftConfig.load(sub.resolve("weft.yaml"));
        assertThat(c.policySpec().model()).isEqualTo(sub.resolve("arm.onnx"));
        assertThat(c.telemetry().file()).contains(sub.resolve("rows.csv"));
        assertThat(c.port().baseDir()).isEqualTo(sub);
    }
}
