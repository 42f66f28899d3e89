package dev.weft.runtime.policy;

import ai.onnxruntime.OnnxJavaType;

/** The tensor element types weft binds, named as ONNX names them. */
public enum TensorElement {
    FLOAT32("float32", OnnxJavaType.FLOAT, 4),
    FLOAT64("float64", OnnxJavaType.DOUBLE, 8),
    INT64("int64", OnnxJavaType.INT64, 8),
    /** For image inputs only: pixel values as they are, 0 to 255. */
    UINT8("uint8", OnnxJavaType.UINT8, 1);

    private final String label;
    final OnnxJavaType ort;
    final int bytes;

    TensorElement(String label, OnnxJavaType ort, int bytes) {
        this.label = label;
        this.ort = ort;
        this.bytes = bytes;
    }

    public String label() {
        return label;
    }

    /** The weft element for an ONNX Runtime type, or null when weft cannot bind it. */
    static TensorElement of(OnnxJavaType type) {
        for (TensorElement e : values()) {
            if (e.ort == type) {
                return e;
            }
        }
        return null;
    }

    /** A readable name for any ONNX Runtime type, for messages. */
    static String describe(OnnxJavaType type) {
        TensorElement e = of(type);
        if (e != null) {
            return e.label;
        }
        return switch (type) {
            case INT32 -> "int32";
            case INT16 -> "int16";
            case INT8 -> "int8";
            case UINT8 -> "uint8";
            case BOOL -> "bool";
            case STRING -> "string";
            case FLOAT16 -> "float16";
            case BFLOAT16 -> "bfloat16";
            default -> type.name().toLowerCase(java.util.Locale.ROOT);
        };
    }
}
