package dev.weft.examples.demo;

import dev.weft.onnxkit.OnnxGraph;
import dev.weft.onnxkit.OnnxGraph.Element;

/**
 * Writes a {@link ChunkRegression.Fit} as an ONNX model weft loads as it is:
 *
 * <pre>
 * history [1, 3, 12] float32 ─Reshape→ [1, 36] ─MatMul weights [36, 72]─Add bias [1, 72]─Reshape→ actions [1, 12, 6]
 * </pre>
 *
 * which is the fitted product {@code [h_0, h_1, h_2, 1] · W} with the bias (the last row of
 * {@code W}) added separately. Weights are rounded to float32, the type the model computes in.
 * The bytes depend only on the fit (the graph's node names are numbered in build order).
 */
public final class PolicyExport {

    /** The model's input, bound to weft's {@code history} source. */
    public static final String INPUT = "history";
    /** The model's output, a {@code 1xKxD} chunk. */
    public static final String OUTPUT = "actions";

    private PolicyExport() {
    }

    /** The model's bytes. */
    public static byte[] toOnnx(ChunkRegression.Fit fit) {
        int inputs = ChunkRegression.FEATURES - 1;
        int targets = ChunkRegression.TARGETS;
        float[] w = new float[inputs * targets];
        float[] b = new float[targets];
        for (int t = 0; t < targets; t++) {
            for (int f = 0; f < inputs; f++) {
                w[f * targets + t] = (float) fit.weight(f, t);
            }
            b[t] = (float) fit.weight(inputs, t);
        }
        OnnxGraph g = OnnxGraph.named("dip_and_shelve_policy").producer("weft-examples-demo");
        String h = g.input(INPUT, Element.FLOAT, 1, ChunkRegression.HISTORY_DEPTH, ChunkRegression.OBSERVATION);
        String flat = g.reshape(h, 1, inputs);
        String weights = g.floats("weights", w, inputs, targets);
        String bias = g.floats("bias", b, 1, targets);
        String y = g.add(g.matMul(flat, weights), bias);
        g.reshapeNamed(OUTPUT, y, 1, ChunkRegression.K, DipCell.D);
        g.output(OUTPUT, Element.FLOAT, 1, ChunkRegression.K, DipCell.D);
        return g.toBytes();
    }
}
