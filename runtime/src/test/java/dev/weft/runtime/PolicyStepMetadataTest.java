package dev.weft.runtime;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import dev.weft.onnxkit.ModelEdits;
import dev.weft.onnxkit.PolicyModels;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.policy.OnnxPolicy;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** A model that records its policy step in its metadata is refused by a configuration that plays it at another. */
class PolicyStepMetadataTest {

    @TempDir
    Path dir;

    private ConfiguredRun run(String recordedStep, double configuredStep) throws Exception {
        byte[] model = PolicyModels.chunkPolicy(2, 8, 4, 2, 5).bytes();
        if (recordedStep != null) {
            model = ModelEdits.withMetadata(model, "", "", 1, "", Map.of(ConfiguredRun.POLICY_STEP_KEY, recordedStep));
        }
        Files.write(dir.resolve("policy.onnx"), model);
        String yaml = """
                robot:
                  name: step-check
                  joints:
                    - {name: a, position: {min: -1, max: 1}, velocity: 1, acceleration: 10, jerk: 100}
                    - {name: b, position: {min: -1, max: 1}, velocity: 1, acceleration: 10, jerk: 100}
                timing:
                  control_period: 0.002
                  policy_step: %s
                policy:
                  model: policy.onnx
                  observation_size: 2
                  inputs:
                    obs: {source: observation}
                  output: {layout: 1xKxD}
                watchdog:
                  observation_age_max: 0.05
                  inference_latency_max: 0.05
                  overruns_max: 5
                arming:
                  pose_distance_max: 0.1
                source: {kind: embedded}
                port: {kind: discard}
                """.formatted(configuredStep);
        return ConfiguredRun.of(WeftConfig.parse(yaml, dir, "step-check.yaml"));
    }

    @Test
    void aMatchingOrAbsentPolicyStepLoads() throws Exception {
        try (OnnxPolicy p = run("0.02", 0.02).loadPolicy()) {
            assertThat(p.chunkLength()).isEqualTo(4);
        }
        try (OnnxPolicy p = run(null, 0.04).loadPolicy()) {
            assertThat(p.chunkLength()).isEqualTo(4);
        }
    }

    @Test
    void aDifferentOrUnreadablePolicyStepIsRefusedNamingTheProperty() throws Exception {
        Path model = dir.resolve("policy.onnx");
        BadInputException e = catchThrowableOfType(() -> run("0.02", 0.04).loadPolicy(), BadInputException.class);
        assertThat(e).hasMessage(model + " metadata 'weft.policy_step': the model was exported with actions 0.02 s"
                + " apart, timing.policy_step is 0.04 s: its chunks would be played at the wrong speed");
        e = catchThrowableOfType(() -> run("fast", 0.02).loadPolicy(), BadInputException.class);
        assertThat(e).hasMessage(model + " metadata 'weft.policy_step': must be the time between two actions in"
                + " seconds, a number > 0, got \"fast\"");
    }
}
