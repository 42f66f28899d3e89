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
 * @param metadata the model's descriptive fields and custom properties
 */
public record ModelSignature(Path file, long sizeBytes, ModelHeader header, String graphName,
                             List<TensorSignature> inputs, List<TensorSignature> outputs, ModelMetadata metadata) {

    /** Reads a model file's signature; the session used for it is closed before returning. */
    public static ModelSignature read(Path file) throws BadInputException {
        byte[] bytes = readModelFile(file);
        ModelHeader header = ModelHeader.read(bytes, file.toString());
        checkExternalData(file, bytes);
        OrtEnvironment env = OrtEnvironment.getEnvironment();
        try (OrtSession.SessionOptions options = new OrtSession.SessionOptions();
             OrtSession session = openSession(env, options, file)) {
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
        return new ModelSignature(file, size, header, meta.getGraphName(), List.copyOf(in), List.copyOf(out),
                ModelMetadata.of(meta));
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

    /**
     * Checks every initializer kept as external data before ONNX Runtime reads it: the file is
     * named relative to the model's folder and stays inside it, exists, is a regular file and holds
     * the bytes the tensor's offset and length ask for.
     *
     * @param bytes the model file's contents
     * @throws BadInputException naming the model file, the tensor and the data file
     */
    static void checkExternalData(Path file, byte[] bytes) throws BadInputException {
        String where = file.toString();
        Path folder = file.toAbsolutePath().normalize().getParent();
        for (ModelHeader.ExternalTensor t : ModelHeader.externalTensors(bytes, where)) {
            String about = where + " initializer '" + t.tensor() + "'";
            Path named = Path.of(t.location());
            Path data = folder.resolve(named).normalize();
            if (named.isAbsolute() || !data.startsWith(folder) || data.equals(folder)) {
                throw new BadInputException(about, "external data file \"" + t.location()
                        + "\" is not a file inside the model's folder " + folder);
            }
            if (!Files.exists(data)) {
                throw new BadInputException(about, "external data file " + data + " (\"" + t.location()
                        + "\") does not exist; keep it beside the model");
            }
            if (!Files.isRegularFile(data)) {
                throw new BadInputException(about, "external data file " + data + " is not a regular file");
            }
            long size;
            try {
                size = Files.size(data);
            } catch (IOException e) {
                throw new BadInputException(about, "cannot read external data file " + data + ": " + e.getMessage());
            }
            long end = t.length() < 0 ? size : t.offset() + t.length();
            if (t.offset() > size || end > size || end < t.offset()) {
                throw new BadInputException(about, "external data file " + data + " holds " + size
                        + " bytes; the tensor asks for " + (t.length() < 0 ? "the rest" : t.length() + " bytes")
                        + " from offset " + t.offset());
            }
        }
    }

    /**
     * Opens a session on the model file by its path, so that ONNX Runtime finds external data
     * beside it.
     */
    static OrtSession openSession(OrtEnvironment env, OrtSession.SessionOptions options, Path file)
            throws BadInputException {
        try {
            return env.createSession(file.toString(), options);
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
