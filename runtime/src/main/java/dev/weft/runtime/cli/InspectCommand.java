package dev.weft.runtime.cli;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.policy.ModelHeader;
import dev.weft.runtime.policy.ModelSignature;
import dev.weft.runtime.policy.TensorSignature;
import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Parameters;

/** {@code weft inspect MODEL}: prints a model's interface and what its outputs mean as chunks. */
@Command(name = "inspect", mixinStandardHelpOptions = true,
        description = "Print an ONNX model's inputs and outputs (element type, shape with symbolic axes),"
                + " its IR version, opsets and producer, and the chunk size K x D each output implies.")
final class InspectCommand implements Callable<Integer> {

    @Parameters(paramLabel = "MODEL", description = "the ONNX model file")
    Path model;

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
        print(sig, out);
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
