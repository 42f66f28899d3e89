package dev.weft.runtime.config;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import dev.weft.onnxkit.PolicyModels;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.BadInputException.Problem;
import dev.weft.runtime.policy.ActionRepresentation;
import dev.weft.runtime.policy.NormalisationSpec;
import dev.weft.runtime.policy.OnnxPolicy;
import dev.weft.runtime.policy.ValueScale;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** {@code policy.output.actions} and {@code policy.normalisation}: what they read into, and every refusal by key path. */
class ConfigParserConversionsTest {

    /** The last line of the output section in {@link WeftConfigTest#VALID} (line 24). */
    private static final String CHUNK_LINE = "    chunk_length: 10\n";

    @TempDir
    Path dir;

    @BeforeEach
    void modelFile() throws IOException {
        Files.write(dir.resolve("arm.onnx"), PolicyModels.chunkPolicy(4, 8, 10, 2, 1).bytes());
    }

    private WeftConfig parse(String yaml) throws BadInputException {
        return WeftConfig.parse(yaml, dir, "test.yaml");
    }

    /** The valid file with {@code lines} added after the output section (they start at line 25). */
    private static String withPolicyLines(String lines) {
        assertThat(WeftConfigTest.VALID).contains(CHUNK_LINE);
        return WeftConfigTest.VALID.replace(CHUNK_LINE, CHUNK_LINE + lines);
    }

    private List<String> problems(String yaml) {
        BadInputException e = catchThrowableOfType(() -> parse(yaml), BadInputException.class);
        assertThat(e).as("the configuration should have been refused").isNotNull();
        return e.problems().stream().map(Problem::toString).toList();
    }

    @Test
    void actionsAreAbsoluteUnlessConfigured() throws Exception {
        assertThat(parse(WeftConfigTest.VALID).policy().output().actions()).isEqualTo(ActionRepresentation.ABSOLUTE);
        assertThat(parse(withPolicyLines("    actions: from_state\n")).policy().output().actions())
                .isEqualTo(ActionRepresentation.FROM_STATE);
        assertThat(parse(withPolicyLines("    actions: from_previous\n")).policy().output().actions())
                .isEqualTo(ActionRepresentation.FROM_PREVIOUS);
    }

    @Test
    void anUnknownRepresentationIsRefusedAtItsKey() {
        assertThat(problems(withPolicyLines("    actions: relative\n"))).containsExactly(
                "policy.output.actions (line 25): must be one of absolute, from_state, from_previous, got \"relative\"");
    }

    @Test
    void offsetsNeedTheJointPositionsInTheObservation() {
        String yaml = withPolicyLines("    actions: from_state\n").replace("observation_size: 4", "observation_size: 1");
        assertThat(problems(yaml)).containsExactly("policy.output.actions (line 25): from_state adds the joint positions, "
                + "the first D = 2 observation values, but policy.observation_size is 1");
    }

    @Test
    void normalisationIsReadIntoScalesThatNameTheirKey() throws Exception {
        WeftConfig c = parse(withPolicyLines("""
                  normalisation:
                    observation: {mean: [0, 0, 1, 1], std: [1, 2, 3, 4]}
                    actions:
                      min: [-1, -1]
                      max: [1, 2]
                """));
        NormalisationSpec n = c.policy().normalisation();
        assertThat(n.observation().method()).isEqualTo(ValueScale.Method.MEAN_STD);
        assertThat(n.observation().first()).containsExactly(0, 0, 1, 1);
        assertThat(n.observation().second()).containsExactly(1, 2, 3, 4);
        assertThat(n.observation().source()).isEqualTo("policy.normalisation.observation (line 26)");
        assertThat(n.actions().method()).isEqualTo(ValueScale.Method.MIN_MAX);
        assertThat(n.actions().first()).containsExactly(-1, -1);
        assertThat(n.actions().second()).containsExactly(1, 2);
        // and the adapter runs with them
        try (OnnxPolicy p = OnnxPolicy.load(c.policy())) {
            assertThat(p.observationScale()).isEqualTo(n.observation());
            assertThat(p.actionScale()).isEqualTo(n.actions());
        }
    }

    @Test
    void withoutTheSectionOrWithFromModelTheModelDecidesAndNoneSwitchesItOff() throws Exception {
        assertThat(parse(WeftConfigTest.VALID).policy().normalisation()).isEqualTo(NormalisationSpec.FROM_MODEL);
        NormalisationSpec n = parse(withPolicyLines("""
                  normalisation:
                    observation: none
                    actions: from_model
                """)).policy().normalisation();
        assertThat(n.observation()).isSameAs(ValueScale.NONE);
        assertThat(n.actions()).isNull();
    }

    @Test
    void aZeroStdOrAnEmptyRangeIsRefusedByKeyAndIndex() {
        assertThat(problems(withPolicyLines("""
                  normalisation:
                    observation:
                      mean: [0, 0, 1, 1]
                      std: [1, 2, 0, 4]
                    actions:
                      min: [-1, 3]
                      max: [1, 3]
                """))).containsExactly(
                "policy.normalisation.observation.std[2] (line 28): must be > 0 (z = (x − mean) / std), got 0.0",
                "policy.normalisation.actions.max[1] (line 31): must be greater than min[1] (3.0), got 3.0: a zero range "
                        + "cannot be scaled to [−1, 1]");
    }

    @Test
    void listsMustFitTheObservationAndTheAction() {
        assertThat(problems(withPolicyLines("""
                  normalisation:
                    observation: {mean: [0, 0, 1], std: [1, 2, 3]}
                    actions: {min: [-1, -1, -1], max: [1, 2, 3, 4]}
                """))).containsExactly(
                "policy.normalisation.observation.mean (line 26): must have one value per observation value "
                        + "(policy.observation_size = 4), has 3",
                "policy.normalisation.actions.max (line 27): must have as many values as min (3), has 4",
                "policy.normalisation.actions.min (line 27): must have one value per action value (D = 2), has 3");
    }

    @Test
    void mixedIncompleteOrUnknownEntriesAreRefused() {
        assertThat(problems(withPolicyLines("""
                  normalisation:
                    observation: {mean: [0, 0, 1, 1], min: [1, 2, 3, 4]}
                    actions: {mean: [0, 0]}
                """))).containsExactly(
                "policy.normalisation.observation.min (line 26): give mean and std, or min and max, not both",
                "policy.normalisation.actions.std (line 27): is required");
        assertThat(problems(withPolicyLines("""
                  normalisation:
                    observation: scaled
                    actions: {}
                    images: none
                """))).containsExactly(
                "policy.normalisation.observation (line 26): must be from_model, none, or a map of mean and std or of "
                        + "min and max, got \"scaled\"",
                "policy.normalisation.actions (line 27): must hold mean and std, or min and max",
                "policy.normalisation.images (line 28): unknown key");
        assertThat(problems(withPolicyLines("""
                  normalisation:
                    observation: {mean: [0, 0, 1, .inf], std: [1, 1, 1, 1], median: [0]}
                """))).containsExactly(
                "policy.normalisation.observation.mean[3] (line 26): must be a finite number, got .inf",
                "policy.normalisation.observation.median (line 26): unknown key");
    }
}
