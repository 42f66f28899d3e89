package dev.weft.runtime;

import static org.assertj.core.api.Assertions.assertThat;

import dev.weft.onnxkit.PolicyModels;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.policy.OnnxPolicy;
import dev.weft.runtime.port.CommandPort;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The complete example in docs/configuration.md is a configuration weft accepts and assembles. */
class DocumentedConfigurationTest {

    @TempDir
    Path dir;

    @Test
    void theExampleInTheDocsParsesLoadsItsModelAndMakesItsPort() throws Exception {
        String doc = Files.readString(Path.of("..", "docs", "configuration.md"));
        int start = doc.indexOf("```yaml\n");
        assertThat(start).as("docs/configuration.md has a yaml example").isPositive();
        String yaml = doc.substring(start + 8, doc.indexOf("```", start + 8));
        // the model the example names: obs [1, 6], noise [1, 8, 3] (24 values), step [1] → [1, 8, 3]
        Files.createDirectories(dir.resolve("models"));
        Files.write(dir.resolve("models/arm.onnx"),
                PolicyModels.noiseAndStepPolicy(6, 16, 8, 3, 0.1f, 0.0f, 1).bytes());
        Files.createDirectories(dir.resolve("out"));
        WeftConfig c = WeftConfig.parse(yaml, dir, "configuration.md");
        ConfiguredRun run = ConfiguredRun.of(c);
        try (OnnxPolicy p = run.loadPolicy()) {
            assertThat(p.chunkLength()).isEqualTo(8);
            assertThat(run.blender(p.chunkLength()).dimensions()).isEqualTo(3);
        }
        assertThat(run.watchdog().disabled()).isNotEmpty();
        CommandPort port = run.port();
        port.close();
    }
}
