package dev.weft.runtime.policy;

import ai.onnxruntime.NodeInfo;
import ai.onnxruntime.OnnxJavaType;
import ai.onnxruntime.TensorInfo;
import ai.onnxruntime.ValueInfo;

/**
 * One model input or output as ONNX Runtime describes it.
 *
 * @param name the tensor's name
 * @param type ONNX Runtime's element type; null for a value that is not a tensor
 * @param shape dimensions, -1 where the axis is dynamic
 * @param dimNames the symbolic name of each dynamic axis, empty where it has none or is fixed
 * @param kind "tensor", or what the value is when it is not one (map, sequence)
 */
public record TensorSignature(String name, OnnxJavaType type, long[] shape, String[] dimNames, String kind) {

    static TensorSignature of(NodeInfo node) {
        ValueInfo info = node.getInfo();
        if (info instanceof TensorInfo t) {
            return new TensorSignature(node.getName(), t.type, t.getShape(), t.getDimensionNames(), "tensor");
        }
        return new TensorSignature(node.getName(), null, new long[0], new String[0],
                info.getClass().getSimpleName().replace("Info", "").toLowerCase(java.util.Locale.ROOT));
    }

    public boolean isTensor() {
        return type != null;
    }

    /** The element type as ONNX names it, such as {@code float32}. */
    public String elementLabel() {
        return type == null ? kind : TensorElement.describe(type);
    }

    /** The shape as text, symbolic axes by name and unnamed dynamic axes as {@code ?}. */
    public String shapeText() {
        StringBuilder b = new StringBuilder("[");
        for (int i = 0; i < shape.length; i++) {
            if (i > 0) {
                b.append(", ");
            }
            if (shape[i] >= 0) {
                b.append(shape[i]);
            } else if (i < dimNames.length && dimNames[i] != null && !dimNames[i].isEmpty()) {
                b.append(dimNames[i]);
            } else {
                b.append('?');
            }
        }
        return b.append(']').toString();
    }

    /**
     * What this output would mean as a chunk, or null when no layout fits. Fixed axes decide;
     * a flat {@code [1, n]} is ambiguous between one action and a flat chunk and says so.
     */
    public String chunkReading() {
        if (type != OnnxJavaType.FLOAT && type != OnnxJavaType.DOUBLE) {
            return null;
        }
        long[] s = shape;
        if (s.length == 3 && (s[0] == 1 || s[0] < 0) && s[1] > 0 && s[2] > 0) {
            return "chunk of K = " + s[1] + " actions, D = " + s[2] + " values (layout 1xKxD)";
        }
        if (s.length == 2 && (s[0] == 1 || s[0] < 0) && s[1] > 0) {
            return "one action of D = " + s[1] + " values (layout 1xD), or a flat chunk of K·D = " + s[1]
                    + " (layout 1xKD; declare K or D)";
        }
        if (s.length == 2 && s[0] > 1 && s[1] > 0) {
            return "chunk of K = " + s[0] + " actions, D = " + s[1] + " values (layout KxD)";
        }
        return null;
    }
}
