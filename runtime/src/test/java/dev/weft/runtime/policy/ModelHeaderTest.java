package dev.weft.runtime.policy;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import ai.onnx.proto.OnnxMl;
import dev.weft.onnxkit.PolicyModels;
import dev.weft.runtime.BadInputException;
import java.util.Arrays;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class ModelHeaderTest {

    /**
     * Checked against the protobuf library (protobuf-java, the reference implementation of the
     * wire format): the fields weft's reader finds equal the ones protobuf parses.
     */
    private static void assertSameAsProtobuf(byte[] bytes) throws Exception {
        OnnxMl.ModelProto parsed = OnnxMl.ModelProto.parseFrom(bytes);
        ModelHeader h = ModelHeader.read(bytes, "m.onnx");
        assertThat(h.irVersion()).isEqualTo(parsed.getIrVersion());
        assertThat(h.producerName()).isEqualTo(parsed.getProducerName());
        assertThat(h.producerVersion()).isEqualTo(parsed.getProducerVersion());
        assertThat(h.opsets()).hasSize(parsed.getOpsetImportCount());
        for (int i = 0; i < parsed.getOpsetImportCount(); i++) {
            assertThat(h.opsets().get(i).domain()).isEqualTo(parsed.getOpsetImport(i).getDomain());
            assertThat(h.opsets().get(i).version()).isEqualTo(parsed.getOpsetImport(i).getVersion());
        }
    }

    @Test
    void readsTheFieldsProtobufWrote() throws Exception {
        assertSameAsProtobuf(PolicyModels.chunkPolicy(12, 64, 16, 6, 1).bytes());
        assertSameAsProtobuf(PolicyModels.singleActionPolicy(3, 4, 2, 1).bytes());
    }

    @Test
    void readsSeveralOpsetsLongStringsAndFieldsAfterTheGraph() throws Exception {
        OnnxMl.ModelProto base = OnnxMl.ModelProto.parseFrom(PolicyModels.chunkPolicy(4, 8, 2, 2, 1).bytes());
        OnnxMl.ModelProto m = base.toBuilder()
                .setProducerName("p".repeat(300))  // a length that needs a two-byte varint
                .setIrVersion(1L << 40)            // a six-byte varint
                .setDocString("after the graph")
                .setModelVersion(7)
                .addOpsetImport(OnnxMl.OperatorSetIdProto.newBuilder().setDomain("ai.onnx.ml").setVersion(3))
                .addMetadataProps(OnnxMl.StringStringEntryProto.newBuilder().setKey("k").setValue("v"))
                .build();
        assertSameAsProtobuf(m.toByteArray());
        ModelHeader h = ModelHeader.read(m.toByteArray(), "m.onnx");
        assertThat(h.defaultOpset()).isEqualTo(13);
        assertThat(h.opsets().get(1).displayDomain()).isEqualTo("ai.onnx.ml");
        assertThat(h.opsets().get(0).displayDomain()).isEqualTo("ai.onnx");
    }

    @Test
    void everyTruncationIsRefusedCleanly() throws Exception {
        byte[] good = PolicyModels.chunkPolicy(4, 8, 2, 2, 1).bytes();
        for (int len = 0; len < good.length; len++) {
            byte[] cut = Arrays.copyOf(good, len);
            try {
                ModelHeader.read(cut, "cut.onnx");
                // a cut exactly between top-level fields can still hold a header and a graph; then
                // it must agree with what protobuf reads from the same bytes
                assertSameAsProtobuf(cut);
            } catch (BadInputException e) {
                assertThat(e.getMessage()).startsWith("cut.onnx: not an ONNX model: ");
            }
        }
    }

    @Test
    void randomBytesNeverEscapeAsAnotherException() {
        SplittableRandom r = new SplittableRandom(5);
        for (int i = 0; i < 2000; i++) {
            byte[] junk = new byte[r.nextInt(1, 200)];
            for (int j = 0; j < junk.length; j++) {
                junk[j] = (byte) r.nextInt(256);
            }
            try {
                ModelHeader.read(junk, "junk.onnx");
            } catch (BadInputException e) {
                assertThat(e.getMessage()).startsWith("junk.onnx: not an ONNX model: ");
            }
        }
    }

    @Test
    void modelWithoutGraphIsRefused() {
        byte[] onlyIr = OnnxMl.ModelProto.newBuilder().setIrVersion(8).build().toByteArray();
        assertThatThrownBy(() -> ModelHeader.read(onlyIr, "m.onnx"))
                .isInstanceOf(BadInputException.class).hasMessage("m.onnx: not an ONNX model: no graph");
    }
}
