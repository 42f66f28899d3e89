package dev.weft.onnxkit;

import ai.onnx.proto.OnnxMl.AttributeProto;
import ai.onnx.proto.OnnxMl.GraphProto;
import ai.onnx.proto.OnnxMl.ModelProto;
import ai.onnx.proto.OnnxMl.NodeProto;
import ai.onnx.proto.OnnxMl.OperatorSetIdProto;
import ai.onnx.proto.OnnxMl.TensorProto;
import ai.onnx.proto.OnnxMl.TensorShapeProto;
import ai.onnx.proto.OnnxMl.TypeProto;
import ai.onnx.proto.OnnxMl.ValueInfoProto;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;

/**
 * Builds small ONNX graphs in code, on the ONNX protobuf classes that {@code tribuo-util-onnx}
 * ships. Tests, examples and benchmarks use it so that nothing is downloaded at run time.
 *
 * <p>Dimensions are given as {@code Integer}/{@code Long} (fixed) or {@code String} (a symbolic
 * axis such as {@code "batch"}). The model is written with IR version 8 and opset 13, which the
 * pinned ONNX Runtime accepts.
 *
 * <p>Not thread-safe; build a graph on one thread.
 */
public final class OnnxGraph {

    /** Element types weft binds. */
    public enum Element {
        FLOAT(TensorProto.DataType.FLOAT),
        DOUBLE(TensorProto.DataType.DOUBLE),
        INT64(TensorProto.DataType.INT64),
        INT32(TensorProto.DataType.INT32);

        final TensorProto.DataType proto;

        Element(TensorProto.DataType proto) {
            this.proto = proto;
        }
    }

    public static final long IR_VERSION = 8;
    public static final long OPSET = 13;

    private final GraphProto.Builder graph = GraphProto.newBuilder();
    private String producer = "weft-onnxkit";
    private int unique;

    private OnnxGraph(String name) {
        graph.setName(name);
    }

    public static OnnxGraph named(String name) {
        return new OnnxGraph(name);
    }

    public OnnxGraph producer(String name) {
        this.producer = name;
        return this;
    }

    /** Declares a graph input and returns its name. */
    public String input(String name, Element type, Object... dims) {
        graph.addInput(valueInfo(name, type, dims));
        return name;
    }

    /** Declares {@code ref} as a graph output with the given shape. */
    public OnnxGraph output(String ref, Element type, Object... dims) {
        graph.addOutput(valueInfo(ref, type, dims));
        return this;
    }

    /** A float32 initializer in row-major order. */
    public String floats(String name, float[] values, long... dims) {
        TensorProto.Builder t = TensorProto.newBuilder().setName(name).setDataType(TensorProto.DataType.FLOAT.getNumber());
        for (long d : dims) {
            t.addDims(d);
        }
        for (float v : values) {
            t.addFloatData(v);
        }
        checkCount(name, values.length, dims);
        graph.addInitializer(t);
        return name;
    }

    /** A float64 initializer in row-major order. */
    public String doubles(String name, double[] values, long... dims) {
        TensorProto.Builder t = TensorProto.newBuilder().setName(name).setDataType(TensorProto.DataType.DOUBLE.getNumber());
        for (long d : dims) {
            t.addDims(d);
        }
        for (double v : values) {
            t.addDoubleData(v);
        }
        checkCount(name, values.length, dims);
        graph.addInitializer(t);
        return name;
    }

    /** An int64 initializer (shapes for Reshape, for instance). */
    public String longs(String name, long[] values, long... dims) {
        TensorProto.Builder t = TensorProto.newBuilder().setName(name).setDataType(TensorProto.DataType.INT64.getNumber());
        for (long d : dims) {
            t.addDims(d);
        }
        for (long v : values) {
            t.addInt64Data(v);
        }
        checkCount(name, values.length, dims);
        graph.addInitializer(t);
        return name;
    }

    /** Adds a node of {@code opType} with one output and returns the output's name. */
    public String op(String opType, String... inputs) {
        return opNamed(opType, fresh(opType), inputs);
    }

    /** Adds a node whose single output gets the given name. */
    public String opNamed(String opType, String output, String... inputs) {
        return node(opType, output, null, inputs);
    }

    public String matMul(String a, String b) {
        return op("MatMul", a, b);
    }

    public String add(String a, String b) {
        return op("Add", a, b);
    }

    public String mul(String a, String b) {
        return op("Mul", a, b);
    }

    public String tanh(String x) {
        return op("Tanh", x);
    }

    public String relu(String x) {
        return op("Relu", x);
    }

    /** Reshape to a fixed shape; the shape travels as an int64 initializer, as the operator wants. */
    public String reshape(String x, long... shape) {
        String s = longs(fresh("shape"), shape, shape.length);
        return op("Reshape", x, s);
    }

    public String reshapeNamed(String output, String x, long... shape) {
        String s = longs(fresh("shape"), shape, shape.length);
        return opNamed("Reshape", output, x, s);
    }

    public String concat(long axis, String... inputs) {
        AttributeProto a = AttributeProto.newBuilder().setName("axis").setType(AttributeProto.AttributeType.INT).setI(axis).build();
        return node("Concat", fresh("Concat"), a, inputs);
    }

    public String cast(String x, Element to) {
        AttributeProto a = AttributeProto.newBuilder().setName("to").setType(AttributeProto.AttributeType.INT)
                .setI(to.proto.getNumber()).build();
        return node("Cast", fresh("Cast"), a, x);
    }

    public String identityNamed(String output, String x) {
        return opNamed("Identity", output, x);
    }

    /**
     * A node with attributes: each value a {@code String}, a {@code Long} or a {@code long[]}
     * (ints); returns the output's name.
     */
    public String opWith(String opType, java.util.Map<String, Object> attributes, String... inputs) {
        NodeProto.Builder n = NodeProto.newBuilder().setOpType(opType).setName(fresh("node_" + opType));
        String output = fresh(opType);
        n.addOutput(output);
        for (String in : inputs) {
            n.addInput(in);
        }
        for (java.util.Map.Entry<String, Object> e : attributes.entrySet()) {
            AttributeProto.Builder a = AttributeProto.newBuilder().setName(e.getKey());
            if (e.getValue() instanceof String text) {
                a.setType(AttributeProto.AttributeType.STRING).setS(com.google.protobuf.ByteString.copyFromUtf8(text));
            } else if (e.getValue() instanceof Long v) {
                a.setType(AttributeProto.AttributeType.INT).setI(v);
            } else if (e.getValue() instanceof long[] v) {
                a.setType(AttributeProto.AttributeType.INTS);
                for (long x : v) {
                    a.addInts(x);
                }
            } else {
                throw new IllegalArgumentException(e.getKey() + ": unsupported attribute value " + e.getValue());
            }
            n.addAttribute(a);
        }
        graph.addNode(n);
        return output;
    }

    /** The serialised model. */
    public byte[] toBytes() {
        ModelProto model = ModelProto.newBuilder()
                .setIrVersion(IR_VERSION)
                .setProducerName(producer)
                .setProducerVersion("1")
                .addOpsetImport(OperatorSetIdProto.newBuilder().setDomain("").setVersion(OPSET))
                .setGraph(graph)
                .build();
        return model.toByteArray();
    }

    /** Writes the model to {@code file} (parent folders created) and returns the file. */
    public Path write(Path file) throws IOException {
        if (file.getParent() != null) {
            Files.createDirectories(file.getParent());
        }
        Files.write(file, toBytes());
        return file;
    }

    private String node(String opType, String output, AttributeProto attribute, String... inputs) {
        NodeProto.Builder n = NodeProto.newBuilder().setOpType(opType).setName(fresh("node_" + opType)).addOutput(output);
        for (String in : inputs) {
            n.addInput(in);
        }
        if (attribute != null) {
            n.addAttribute(attribute);
        }
        graph.addNode(n);
        return output;
    }

    private String fresh(String base) {
        return base + "_" + (unique++);
    }

    private static void checkCount(String name, int count, long[] dims) {
        long expected = 1;
        for (long d : dims) {
            expected *= d;
        }
        if (expected != count) {
            throw new IllegalArgumentException(name + ": " + count + " values for shape of " + expected);
        }
    }

    private static ValueInfoProto valueInfo(String name, Element type, Object... dims) {
        TensorShapeProto.Builder shape = TensorShapeProto.newBuilder();
        for (Object d : dims) {
            TensorShapeProto.Dimension.Builder dim = TensorShapeProto.Dimension.newBuilder();
            if (d instanceof String s) {
                dim.setDimParam(s);
            } else if (d instanceof Number n) {
                dim.setDimValue(n.longValue());
            } else {
                throw new IllegalArgumentException("dimension must be a number or a name: " + d);
            }
            shape.addDim(dim);
        }
        TypeProto t = TypeProto.newBuilder()
                .setTensorType(TypeProto.Tensor.newBuilder().setElemType(type.proto.getNumber()).setShape(shape))
                .build();
        return ValueInfoProto.newBuilder().setName(name).setType(t).build();
    }
}
