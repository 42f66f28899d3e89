package dev.weft.runtime.cli;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.policy.ModelHeader;
import dev.weft.runtime.policy.ModelMetadata;
import dev.weft.runtime.policy.ModelSignature;
import dev.weft.runtime.policy.TensorSignature;
import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import picocli.CommandLine.Parameters;

/**
 * {@code weft inspect MODEL [--json]}: prints a model's interface, its descriptive fields and
 * custom properties, and what its outputs mean as chunks.
 */
@Command(name = "inspect", mixinStandardHelpOptions = true,
        description = "Print an ONNX model's inputs and outputs (element type, shape with symbolic axes),"
                + " its IR version, opsets, producer, domain, version, descriptions and custom metadata"
                + " properties, and the chunk size K x D each output implies.")
final class InspectCommand implements Callable<Integer> {

    @Parameters(paramLabel = "MODEL", description = "the ONNX model file")
    Path model;

    @Option(names = "--json", description = "print the same facts as one JSON document")
    boolean json;

    @CommandLine.Spec
    CommandLine.Model.CommandSpec spec;

    @Override
    public Integer call() {
        PrintWriter out = spec.commandLine().getOut();
        PrintWriter err = spec.commandLine().getErr();
        ModelSignature sig;
        try {
            sig = ModelSignature.read(model);
        } catch (BadInputException e) {
            err.println("weft inspect: " + e.getMessage());
            err.flush();
            return WeftCommand.COULD_NOT_RUN;
        }
        if (json) {
            out.println(json(sig));
        } else {
            print(sig, out);
        }
        out.flush();
        return 0;
    }

    static void print(ModelSignature sig, PrintWriter out) {
        ModelHeader h = sig.header();
        out.printf("model     %s (%s)%n", sig.file(), size(sig.sizeBytes()));
        String producer = (h.producerName() + " " + h.producerVersion()).trim();
        out.printf("producer  %s%n", producer.isEmpty() ? "(not recorded)" : producer);
        out.printf("graph     %s%n", sig.graphName().isEmpty() ? "(unnamed)" : sig.graphName());
        StringBuilder ops = new StringBuilder();
        for (ModelHeader.Opset o : h.opsets()) {
            if (ops.length() > 0) {
                ops.append(", ");
            }
            ops.append(o.displayDomain()).append(' ').append(o.version());
        }
        out.printf("format    IR %d, opset %s%n", h.irVersion(), ops.length() == 0 ? "(none imported)" : ops);
        ModelMetadata m = sig.metadata();
        out.printf("domain    %s%n", m.domain().isEmpty() ? "(not recorded)" : m.domain());
        out.printf("version   %s%n", m.version() < 0 ? "(not recorded)" : Long.toString(m.version()));
        text(out, "about     ", m.description());
        text(out, "graph doc ", m.graphDescription());
        out.println();
        if (m.properties().isEmpty()) {
            out.println("properties  (none)");
        } else {
            out.println("properties");
            int keys = 0;
            for (String k : m.properties().keySet()) {
                keys = Math.max(keys, k.length());
            }
            for (Map.Entry<String, String> e : m.properties().entrySet()) {
                text(out, String.format("  %-" + keys + "s  ", e.getKey()), e.getValue());
            }
        }
        int width = 4;
        for (TensorSignature t : sig.inputs()) {
            width = Math.max(width, t.name().length());
        }
        for (TensorSignature t : sig.outputs()) {
            width = Math.max(width, t.name().length());
        }
        out.println();
        section(out, "inputs", sig.inputs(), width, false);
        section(out, "outputs", sig.outputs(), width, true);
    }

    /** A labelled text, "(not recorded)" when empty; further lines indented under the first. */
    private static void text(PrintWriter out, String label, String value) {
        if (value.isEmpty()) {
            out.println(label + "(not recorded)");
            return;
        }
        String indent = " ".repeat(label.length());
        List<String> lines = value.lines().toList();
        for (int i = 0; i < lines.size(); i++) {
            out.println((i == 0 ? label : indent) + lines.get(i));
        }
    }

    /** The facts {@link #print} shows, as one JSON document. */
    static String json(ModelSignature sig) {
        ObjectMapper mapper = new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT);
        ObjectNode root = mapper.createObjectNode();
        ModelHeader h = sig.header();
        ModelMetadata m = sig.metadata();
        root.put("model", sig.file().toString());
        root.put("size_bytes", sig.sizeBytes());
        root.put("ir_version", h.irVersion());
        ArrayNode opsets = root.putArray("opsets");
        for (ModelHeader.Opset o : h.opsets()) {
            opsets.addObject().put("domain", o.displayDomain()).put("version", o.version());
        }
        root.putObject("producer").put("name", h.producerName()).put("version", h.producerVersion());
        root.putObject("graph").put("name", m.graphName()).put("description", m.graphDescription());
        root.put("domain", m.domain());
        root.put("description", m.description());
        if (m.version() < 0) {
            root.putNull("model_version");
        } else {
            root.put("model_version", m.version());
        }
        ObjectNode props = root.putObject("properties");
        m.properties().forEach(props::put);
        tensors(root.putArray("inputs"), sig.inputs(), false);
        tensors(root.putArray("outputs"), sig.outputs(), true);
        try {
            return mapper.writeValueAsString(root);
        } catch (com.fasterxml.jackson.core.JsonProcessingException e) {
            throw new IllegalStateException("a JSON tree that cannot be written", e);
        }
    }

    private static void tensors(ArrayNode into, List<TensorSignature> ts, boolean chunks) {
        for (TensorSignature t : ts) {
            ObjectNode n = into.addObject();
            n.put("name", t.name());
            n.put("element", t.elementLabel());
            ArrayNode shape = n.putArray("shape");
            long[] dims = t.shape();
            for (int i = 0; i < dims.length; i++) {
                if (dims[i] >= 0) {
                    shape.add(dims[i]);
                } else if (i < t.dimNames().length && t.dimNames()[i] != null && !t.dimNames()[i].isEmpty()) {
                    shape.add(t.dimNames()[i]);
                } else {
                    shape.addNull();
                }
            }
            if (chunks) {
                n.put("as_chunk", t.chunkReading());
            }
        }
    }

    private static void section(PrintWriter out, String title, List<TensorSignature> ts, int width, boolean chunks) {
        out.println(title);
        String row = "  %-" + width + "s  %-8s  %s%n";
        for (TensorSignature t : ts) {
            out.printf(row, t.name(), t.elementLabel(), t.shapeText());
            String reading = chunks ? t.chunkReading() : null;
            if (reading != null) {
                out.printf("  %-" + width + "s  as chunk: %s%n", "", reading);
            }
        }
    }

    private static String size(long bytes) {
        if (bytes < 1024) {
            return bytes + " B";
        }
        if (bytes < 1024 * 1024) {
            return String.format(java.util.Locale.ROOT, "%.1f KiB", bytes / 1024.0);
        }
        return String.format(java.util.Locale.ROOT, "%.1f MiB", bytes / (1024.0 * 1024.0));
    }
}
