package dev.weft.onnxkit;

import ai.onnx.proto.OnnxMl.ModelProto;
import ai.onnx.proto.OnnxMl.StringStringEntryProto;
import ai.onnx.proto.OnnxMl.TensorProto;
import com.google.protobuf.ByteString;
import com.google.protobuf.InvalidProtocolBufferException;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.Map;

/**
 * Edits a serialised model the way exporters write them, on the ONNX protobuf classes: moves
 * initializers into an external data file, and sets the model's metadata fields.
 */
public final class ModelEdits {

    /** Where each tensor's bytes went in the data file. */
    public record Placed(long offset, long length) {
    }

    /** Tensors in the data file start on multiples of this, as exporters align them for mapping. */
    public static final int ALIGNMENT = 4096;

    private ModelEdits() {
    }

    /**
     * Moves the values of the named float32 initializers into the file {@code location} names
     * under {@code folder} (the model's folder; raw little-endian,
     * as the ONNX standard's {@code raw_data} is), each at the next multiple of {@link #ALIGNMENT},
     * and marks them {@code data_location = EXTERNAL} with the entries {@code location} (the data
     * text as given), {@code offset} and {@code length}.
     *
     * @param placed filled with where each tensor went, by name
     * @return the edited model's bytes
     */
    public static byte[] externalise(byte[] model, Path folder, String location, Map<String, Placed> placed,
                                     String... tensors)
            throws IOException {
        ModelProto.Builder m = parse(model).toBuilder();
        ByteBuffer data = ByteBuffer.allocate(1 << 22).order(ByteOrder.LITTLE_ENDIAN);
        Map<String, Placed> done = new LinkedHashMap<>();
        for (String name : tensors) {
            int index = -1;
            for (int i = 0; i < m.getGraph().getInitializerCount(); i++) {
                if (m.getGraph().getInitializer(i).getName().equals(name)) {
                    index = i;
                }
            }
            if (index < 0) {
                throw new IllegalArgumentException("no initializer named " + name);
            }
            TensorProto t = m.getGraph().getInitializer(index);
            if (t.getDataType() != TensorProto.DataType.FLOAT.getNumber()) {
                throw new IllegalArgumentException(name + " is not float32");
            }
            int offset = (data.position() + ALIGNMENT - 1) / ALIGNMENT * ALIGNMENT;
            data.position(offset);
            for (float v : t.getFloatDataList()) {
                data.putFloat(v);
            }
            long length = data.position() - offset;
            done.put(name, new Placed(offset, length));
            TensorProto moved = t.toBuilder().clearFloatData().clearRawData()
                    .setDataLocation(TensorProto.DataLocation.EXTERNAL)
                    .addExternalData(entry("location", location))
                    .addExternalData(entry("offset", Long.toString(offset)))
                    .addExternalData(entry("length", Long.toString(length)))
                    .build();
            m.getGraphBuilder().setInitializer(index, moved);
        }
        Files.write(folder.resolve(location), java.util.Arrays.copyOf(data.array(), data.position()));
        placed.putAll(done);
        return m.build().toByteArray();
    }

    /**
     * Sets the model's documentation, domain, version, graph description and custom metadata
     * properties ({@code metadata_props}), as exporters record normalisation statistics and timing.
     */
    public static byte[] withMetadata(byte[] model, String docString, String domain, long version,
                                      String graphDoc, Map<String, String> props) {
        ModelProto.Builder m = parse(model).toBuilder()
                .setDocString(docString).setDomain(domain).setModelVersion(version);
        m.getGraphBuilder().setDocString(graphDoc);
        props.forEach((k, v) -> m.addMetadataProps(entry(k, v)));
        return m.build().toByteArray();
    }

    private static StringStringEntryProto entry(String key, String value) {
        return StringStringEntryProto.newBuilder().setKey(key).setValue(value).build();
    }

    private static ModelProto parse(byte[] model) {
        try {
            return ModelProto.parseFrom(ByteString.copyFrom(model));
        } catch (InvalidProtocolBufferException e) {
            throw new IllegalArgumentException("not a model", e);
        }
    }
}
