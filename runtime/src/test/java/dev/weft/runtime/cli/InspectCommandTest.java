package dev.weft.runtime.cli;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.weft.onnxkit.ModelEdits;
import dev.weft.onnxkit.PolicyModels;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.Map;
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

    /**
     * The metadata is written with the ONNX standard's own protobuf classes (tribuo-util-onnx's
     * {@code OnnxMl}) and read back through ONNX Runtime's {@code OnnxModelMetadata}: both sides
     * are outside weft.
     */
    private Path modelWithMetadata() throws Exception {
        Map<String, String> props = new LinkedHashMap<>();
        props.put("policy_step", "0.02");
        props.put("obs_mean", "[0.1, -0.2, 0.3, 0, 0, 0, 0]");
        props.put("trained_on", "glaze cell, 40 episodes");
        byte[] bytes = ModelEdits.withMetadata(PolicyModels.dynamicBatchPolicy(7, 16, 5, 3, 1).bytes(),
                "Behaviour-cloned chunk policy.\nExported for weft.", "dev.weft.test", 3, "two-layer MLP", props);
        return Files.write(dir.resolve("described.onnx"), bytes);
    }

    @Test
    void printsTheMetadataFieldsAndCustomProperties() throws Exception {
        Path m = modelWithMetadata();
        Run r = weft("inspect", m.toString());
        assertThat(r.exit()).isZero();
        assertThat(r.out().lines()).containsSubsequence(
                "format    IR 8, opset ai.onnx 13",
                "domain    dev.weft.test",
                "version   3",
                "about     Behaviour-cloned chunk policy.",
                "          Exported for weft.",
                "graph doc two-layer MLP",
                "",
                "properties",
                "  obs_mean     [0.1, -0.2, 0.3, 0, 0, 0, 0]",
                "  policy_step  0.02",
                "  trained_on   glaze cell, 40 episodes",
                "",
                "inputs",
                "  obs      float32   [batch, 7]");
    }

    @Test
    void aModelWithoutMetadataSaysSo() throws Exception {
        Path m = Files.write(dir.resolve("plain.onnx"), PolicyModels.chunkPolicy(4, 8, 2, 2, 1).bytes());
        Run r = weft("inspect", m.toString());
        assertThat(r.out().lines()).contains("domain    (not recorded)", "version   (not recorded)",
                "about     (not recorded)", "graph doc (not recorded)", "properties  (none)");
        assertThat(new ObjectMapper().readTree(weft("inspect", "--json", m.toString()).out())
                .get("model_version").isNull()).isTrue();
    }

    @Test
    void jsonHoldsTheSameFactsAsOneDocument() throws Exception {
        Path m = modelWithMetadata();
        Run r = weft("inspect", m.toString(), "--json");
        assertThat(r.exit()).isZero();
        assertThat(r.err()).isEmpty();
        JsonNode j = new ObjectMapper().readTree(r.out());
        assertThat(j.get("model").asText()).isEqualTo(m.toString());
        assertThat(j.get("size_bytes").asLong()).isEqualTo(Files.size(m));
        assertThat(j.get("ir_version").asLong()).isEqualTo(8);
        assertThat(j.get("opsets").toString()).isEqualTo("[{\"domain\":\"ai.onnx\",\"version\":13}]");
        assertThat(j.get("producer").toString()).isEqualTo("{\"name\":\"weft-onnxkit\",\"version\":\"1\"}");
        assertThat(j.get("graph").toString())
                .isEqualTo("{\"name\":\"batched_chunk_mlp\",\"description\":\"two-layer MLP\"}");
        assertThat(j.get("domain").asText()).isEqualTo("dev.weft.test");
        assertThat(j.get("description").asText()).isEqualTo("Behaviour-cloned chunk policy.\nExported for weft.");
        assertThat(j.get("model_version").asLong()).isEqualTo(3);
        assertThat(j.get("properties").toString()).isEqualTo("{\"obs_mean\":\"[0.1, -0.2, 0.3, 0, 0, 0, 0]\","
                + "\"policy_step\":\"0.02\",\"trained_on\":\"glaze cell, 40 episodes\"}");
        assertThat(j.get("inputs").toString())
                .isEqualTo("[{\"name\":\"obs\",\"element\":\"float32\",\"shape\":[\"batch\",7]}]");
        assertThat(j.get("outputs").toString()).isEqualTo("[{\"name\":\"actions\",\"element\":\"float32\","
                + "\"shape\":[\"batch\",5,3],"
                + "\"as_chunk\":\"chunk of K = 5 actions, D = 3 values (layout 1xKxD)\"}]");
        // one document and nothing else on standard output
        assertThat(r.out().trim()).startsWith("{").endsWith("}");
    }

    @Test
    void jsonOfAMissingFileIsAnErrorNotADocument() {
        Run r = weft("inspect", "--json", dir.resolve("gone.onnx").toString());
        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.out()).isEmpty();
        assertThat(r.err()).startsWith("weft inspect: ");
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
