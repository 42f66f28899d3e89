package dev.weft.runtime.policy;

import ai.onnxruntime.OnnxModelMetadata;
import ai.onnxruntime.OrtEnvironment;
import ai.onnxruntime.OrtException;
import ai.onnxruntime.OrtSession;
import dev.weft.runtime.BadInputException;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;

/**
 * A model's interface: inputs and outputs from ONNX Runtime's own metadata, and the header
 * fields (IR version, producer, opsets) read from the file.
 *
 * @param file the model file
 * @param sizeBytes its size
 * @param header IR version, producer and operator sets
 * @param graphName the graph's name
 * @param inputs inputs in the model's order
 * @param outputs outputs in the model's order
 */
public record ModelSignature(Path file, long sizeBytes, ModelHeader header, String graphName,
                             List<TensorSignature> inputs, List<TensorSignature> outputs) {

    /** Reads a model file's signature; the session used for it is closed before returning. */
    public static ModelSignature read(Path file) throws BadInputException {
        byte[] bytes = readModelFile(file);
        ModelHeader header = ModelHeader.read(bytes, file.toString());
        OrtEnvironment env = OrtEnvironment.getEnvironment();
        try (OrtSession.SessionOptions options = new OrtSession.SessionOptions();
             OrtSession session = openSession(env, bytes, options, file)) {
            return of(file, bytes.length, header, session);
        } catch (OrtException e) {
            throw new BadInputException(file.toString(), "ONNX Runtime could not read the model's interface: " + e.getMessage());
        }
    }

    static ModelSignature of(Path file, long size, ModelHeader header, OrtSession session) throws OrtException {
        List<TensorSignature> in = new ArrayList<>();
        session.getInputInfo().values().forEach(n -> in.add(TensorSignature.of(n)));
        List<TensorSignature> out = new ArrayList<>();
        session.getOutputInfo().values().forEach(n -> out.add(TensorSignature.of(n)));
        OnnxModelMetadata meta = session.getMetadata();
        return new ModelSignature(file, size, header, meta.getGraphName(), List.copyOf(in), List.copyOf(out));
    }

    static byte[] readModelFile(Path file) throws BadInputException {
        if (!Files.exists(file)) {
            throw new BadInputException(file.toString(), "no such file");
        }
        if (!Files.isRegularFile(file)) {
            throw new BadInputException(file.toString(), "not a regular file");
        }
        try {
            long size = Files.size(file);
            if (size == 0) {
                throw new BadInputException(file.toString(), "the file is empty");
            }
            if (size > Integer.MAX_VALUE - 8) {
                throw new BadInputException(file.toString(),
                        "models over 2 GiB in one file are not supported; keep weights as external data");
            }
            return Files.readAllBytes(file);
        } catch (IOException e) {
            throw new BadInputException(file.toString(), "cannot read: " + e.getMessage());
        }
    }

    static OrtSession openSession(OrtEnvironment env, byte[] bytes, OrtSession.SessionOptions options, Path file)
            throws BadInputException {
        try {
            return env.createSession(bytes, options);
        } catch (OrtException e) {
            throw new BadInputException(file.toString(), "ONNX Runtime refused the model: " + firstLine(e.getMessage()));
        }
    }

    static String firstLine(String s) {
        if (s == null) {
            return "(no message)";
        }
        int nl = s.indexOf('\n');
        return nl < 0 ? s : s.substring(0, nl);
    }
}
