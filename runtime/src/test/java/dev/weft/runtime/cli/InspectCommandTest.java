package dev.weft.runtime.cli;

import static org.assertj.core.api.Assertions.assertThat;

import dev.weft.onnxkit.PolicyModels;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import picocli.CommandLine;

class InspectCommandTest {

    @TempDir
    Path dir;

    record Run(int exit, String out, String err) {
    }

    static Run weft(String... args) {
        StringWriter out = new StringWriter();
        StringWriter err = new StringWriter();
        CommandLine cl = WeftCommand.commandLine();
        cl.setOut(new PrintWriter(out));
        cl.setErr(new PrintWriter(err));
        int code = cl.execute(args);
        return new Run(code, out.toString(), err.toString());
    }

    @Test
    void printsTheSignatureWithSymbolicAxesAndTheChunkItImplies() throws Exception {
        Path m = Files.write(dir.resolve("batched.onnx"), PolicyModels.dynamicBatchPolicy(7, 16, 5, 3, 1).bytes());
        Run r = weft("inspect", m.toString());
        assertThat(r.exit()).isZero();
        assertThat(r.err()).isEmpty();
        assertThat(r.out().lines()).contains(
                "producer  weft-onnxkit 1",
                "graph     batched_chunk_mlp",
                "format    IR 8, opset ai.onnx 13",
                "inputs",
                "  obs      float32   [batch, 7]",
                "outputs",
                "  actions  float32   [batch, 5, 3]",
                "           as chunk: chunk of K = 5 actions, D = 3 values (layout 1xKxD)");
        assertThat(r.out().lines().findFirst().orElseThrow()).startsWith("model     " + m + " (");
    }

    @Test
    void flatOutputSaysItIsAmbiguous() throws Exception {
        Path m = Files.write(dir.resolve("actor.onnx"), PolicyModels.singleActionPolicy(4, 8, 6, 1).bytes());
        Run r = weft("inspect", m.toString());
        assertThat(r.out()).contains("as chunk: one action of D = 6 values (layout 1xD), or a flat chunk of K·D = 6"
                + " (layout 1xKD; declare K or D)");
    }

    @Test
    void missingAndMalformedFilesExitWithTwoAndAClearMessage() throws Exception {
        Run missing = weft("inspect", dir.resolve("gone.onnx").toString());
        assertThat(missing.exit()).isEqualTo(2);
        assertThat(missing.err()).isEqualTo("weft inspect: " + dir.resolve("gone.onnx") + ": no such file"
                + System.lineSeparator());
        Path junk = Files.writeString(dir.resolve("junk.onnx"), "hello");
        Run bad = weft("inspect", junk.toString());
        assertThat(bad.exit()).isEqualTo(2);
        assertThat(bad.err()).startsWith("weft inspect: " + junk + ": not an ONNX model: ");
        assertThat(bad.out()).isEmpty();
    }

    @Test
    void usageErrorsExitWithTwo() {
        assertThat(weft("inspect").exit()).isEqualTo(2);
        assertThat(weft("no-such-command").exit()).isEqualTo(2);
    }

    @Test
    void helpShowsTheCautionFirst() {
        Run r = weft("--help");
        assertThat(r.exit()).isZero();
        assertThat(r.out()).contains("CAUTION: weft commands machines that can injure people. It is not a safety-rated");
        assertThat(r.out().indexOf("CAUTION")).isLessThan(r.out().indexOf("Commands:"));
    }
}
