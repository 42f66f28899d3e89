package dev.weft.examples;

import static org.assertj.core.api.Assertions.assertThat;

import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;

class ExampleModelsTest {

    @Test
    void shippedModelIsExactlyWhatTheGeneratorWrites() throws Exception {
        // the test runs in examples/, the model path is relative to the repository root
        Path shipped = Path.of("..").resolve(ExampleModels.CHUNK_POLICY);
        assertThat(shipped).exists();
        assertThat(Files.readAllBytes(shipped))
                .as("regenerate with ExampleModels.main when the generator changes")
                .isEqualTo(ExampleModels.chunkPolicy());
    }
}
