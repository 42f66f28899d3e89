package dev.weft.runtime;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import dev.weft.onnxkit.PolicyModels;
import dev.weft.runtime.policy.ActionRepresentation;
import dev.weft.runtime.policy.ChunkLayout;
import dev.weft.runtime.policy.OnnxPolicy;
import dev.weft.runtime.policy.OutputSpec;
import dev.weft.runtime.policy.PolicySpec;
import dev.weft.runtime.port.NullPort;
import dev.weft.safety.JointLimits;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class WeftBuilderTest {

    @TempDir
    Path dir;

    @Test
    void offsetActionsAndAPositionIndexElsewhereAreRefused() throws Exception {
        Path model = Files.write(dir.resolve("p.onnx"), PolicyModels.chunkPolicy(4, 8, 5, 2, 1).bytes());
        JointLimits limits = JointLimits.builder().joint("a", -1, 1, 1, 10, 100).joint("b", -1, 1, 1, 10, 100).build();
        try (OnnxPolicy p = OnnxPolicy.load(PolicySpec.singleInput(model, 4, "obs",
                new OutputSpec("actions", ChunkLayout.BATCH_STEPS_VALUES, 0, 0, ActionRepresentation.FROM_STATE)))) {
            // the offsets are added to observation values 0 and 1; positions read at 2 and 3 would disagree
            assertThatThrownBy(() -> Weft.builder(limits, 0.002).policy(p).port(new NullPort())
                    .positionIndex(new int[] {2, 3}).build())
                    .isInstanceOf(IllegalArgumentException.class)
                    .hasMessage("the policy's actions are from_state, offsets from the observation's first 2 values,"
                            + " but the position index [2, 3] reads the joint positions elsewhere");
            try (Weft w = Weft.builder(limits, 0.002).policy(p).port(new NullPort()).positionIndex(new int[] {0, 1})
                    .build()) {
                assertThat(w.state().name()).isEqualTo("DISARMED");
            }
        }
    }
}
