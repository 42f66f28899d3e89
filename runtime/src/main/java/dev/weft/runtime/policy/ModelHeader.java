package dev.weft.runtime.policy;

import dev.weft.runtime.BadInputException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;

/**
 * The top-level fields of an ONNX {@code ModelProto} that ONNX Runtime's Java API does not
 * expose: IR version, producer and operator-set imports. Read by walking the protobuf wire
 * format (field numbers from the ONNX standard's {@code onnx.proto}); the graph itself is
 * skipped, not parsed. A hand-written reader keeps protobuf off an embedding user's class path,
 * where it may clash with the robot's own messaging.
 *
 * @param irVersion the model's IR version (field 1)
 * @param producerName field 2, may be empty
 * @param producerVersion field 3, may be empty
 * @param opsets the operator sets imported (field 8), in file order
 */
public record ModelHeader(long irVersion, String producerName, String producerVersion, List<Opset> opsets) {

    /** One operator-set import; the empty domain is the default {@code ai.onnx} set. */
    public record Opset(String domain, long version) {
        /** The domain as people write it: {@code ai.onnx} for the empty default. */
        public String displayDomain() {
            return domain.isEmpty() ? "ai.onnx" : domain;
        }
    }

    private static final int VARINT = 0;
    private static final int FIXED64 = 1;
    private static final int LENGTH_DELIMITED = 2;
    private static final int FIXED32 = 5;

    /**
     * Reads the header from a serialised model.
     *
     * @param where the file name, for messages
     * @throws BadInputException when the bytes are not a well-formed protobuf message
     */
    public static ModelHeader read(byte[] bytes, String where) throws BadInputException {
        Reader r = new Reader(bytes, 0, bytes.length, where);
        long ir = -1;
        String producer = "";
        String producerVersion = "";
        List<Opset> opsets = new ArrayList<>();
        boolean sawGraph = false;
        while (r.hasMore()) {
            int fieldStart = r.pos;
            long tag = r.varint();
            int field = (int) (tag >>> 3);
            int wire = (int) (tag & 7);
            if (field == 0) {
                throw r.bad(fieldStart, "field number 0");
            }
            if (field == 1 && wire == VARINT) {
                ir = r.varint();
            } else if (field == 2 && wire == LENGTH_DELIMITED) {
                producer = r.string();
            } else if (field == 3 && wire == LENGTH_DELIMITED) {
                producerVersion = r.string();
            } else if (field == 7 && wire == LENGTH_DELIMITED) {
                sawGraph = true;
                r.skip(wire, fieldStart);
            } else if (field == 8 && wire == LENGTH_DELIMITED) {
                int len = r.length();
                Reader o = new Reader(bytes, r.pos, r.pos + len, where);
                r.pos += len;
                String domain = "";
                long version = 0;
                while (o.hasMore()) {
                    int start = o.pos;
                    long t = o.varint();
                    int f = (int) (t >>> 3);
                    int w = (int) (t & 7);
                    if (f == 1 && w == LENGTH_DELIMITED) {
                        domain = o.string();
                    } else if (f == 2 && w == VARINT) {
                        version = o.varint();
                    } else {
                        o.skip(w, start);
                    }
                }
                opsets.add(new Opset(domain, version));
            } else {
                r.skip(wire, fieldStart);
            }
        }
        if (ir < 0 || !sawGraph) {
            throw new BadInputException(where, "not an ONNX model: " + (ir < 0 ? "no IR version" : "no graph"));
        }
        return new ModelHeader(ir, producer, producerVersion, List.copyOf(opsets));
    }

    /**
     * One initializer whose values live outside the model file (ONNX external data): the
     * tensor's {@code external_data} entries {@code location}, {@code offset} and {@code length}.
     *
     * @param tensor the initializer's name
     * @param location the data file as written in the model, relative to the model's folder
     * @param offset where the tensor's bytes start in that file; 0 when not given
     * @param length how many bytes it takes; -1 when not given (up to the end of the file)
     */
    public record ExternalTensor(String tensor, String location, long offset, long length) {
    }

    private static final int GRAPH_INITIALIZER = 5;
    private static final int TENSOR_NAME = 8;
    private static final int TENSOR_EXTERNAL_DATA = 13;
    private static final int TENSOR_DATA_LOCATION = 14;
    private static final long DATA_LOCATION_EXTERNAL = 1;

    /**
     * The graph's initializers marked {@code data_location = EXTERNAL}, in file order (field
     * numbers from {@code onnx.proto}: graph 7, initializer 5; in a tensor name 8, external_data
     * 13, data_location 14). Initializers of subgraphs are not looked at.
     *
     * @throws BadInputException when the bytes are not well-formed, or an entry's offset or length
     *     is not a whole number
     */
    public static List<ExternalTensor> externalTensors(byte[] bytes, String where) throws BadInputException {
        List<ExternalTensor> found = new ArrayList<>();
        Reader r = new Reader(bytes, 0, bytes.length, where);
        while (r.hasMore()) {
            int fieldStart = r.pos;
            long tag = r.varint();
            if ((tag >>> 3) == 7 && (tag & 7) == LENGTH_DELIMITED) {
                int len = r.length();
                Reader g = new Reader(bytes, r.pos, r.pos + len, where);
                r.pos += len;
                while (g.hasMore()) {
                    int start = g.pos;
                    long t = g.varint();
                    if ((t >>> 3) == GRAPH_INITIALIZER && (t & 7) == LENGTH_DELIMITED) {
                        int n = g.length();
                        ExternalTensor e = tensor(new Reader(bytes, g.pos, g.pos + n, where));
                        g.pos += n;
                        if (e != null) {
                            found.add(e);
                        }
                    } else {
                        g.skip((int) (t & 7), start);
                    }
                }
            } else {
                r.skip((int) (tag & 7), fieldStart);
            }
        }
        return List.copyOf(found);
    }

    private static ExternalTensor tensor(Reader t) throws BadInputException {
        String name = "";
        long location = 0;
        String file = null;
        String offset = null;
        String length = null;
        while (t.hasMore()) {
            int start = t.pos;
            long tag = t.varint();
            int f = (int) (tag >>> 3);
            int w = (int) (tag & 7);
            if (f == TENSOR_NAME && w == LENGTH_DELIMITED) {
                name = t.string();
            } else if (f == TENSOR_DATA_LOCATION && w == VARINT) {
                location = t.varint();
            } else if (f == TENSOR_EXTERNAL_DATA && w == LENGTH_DELIMITED) {
                int n = t.length();
                Reader e = new Reader(t.b, t.pos, t.pos + n, t.where);
                t.pos += n;
                String key = "";
                String value = "";
                while (e.hasMore()) {
                    int s = e.pos;
                    long et = e.varint();
                    if ((et >>> 3) == 1 && (et & 7) == LENGTH_DELIMITED) {
                        key = e.string();
                    } else if ((et >>> 3) == 2 && (et & 7) == LENGTH_DELIMITED) {
                        value = e.string();
                    } else {
                        e.skip((int) (et & 7), s);
                    }
                }
                switch (key) {
                    case "location" -> file = value;
                    case "offset" -> offset = value;
                    case "length" -> length = value;
                    default -> { }
                }
            } else {
                t.skip(w, start);
            }
        }
        if (location != DATA_LOCATION_EXTERNAL) {
            return null;
        }
        String where = t.where + " initializer '" + name + "'";
        if (file == null || file.isEmpty()) {
            throw new BadInputException(where, "keeps its data outside the model but names no file"
                    + " (external_data has no \"location\")");
        }
        return new ExternalTensor(name, file, number(offset, 0, "offset", where), number(length, -1, "length", where));
    }

    private static long number(String text, long absent, String key, String where) throws BadInputException {
        if (text == null) {
            return absent;
        }
        try {
            long v = Long.parseLong(text);
            if (v >= 0) {
                return v;
            }
        } catch (NumberFormatException ignored) {
            // reported below
        }
        throw new BadInputException(where, "external_data \"" + key + "\" must be a whole number >= 0, got \""
                + text + "\"");
    }

    /** The version of the default operator set, or -1 when the model does not import it. */
    public long defaultOpset() {
        for (Opset o : opsets) {
            if (o.domain().isEmpty() || o.domain().equals("ai.onnx")) {
                return o.version();
            }
        }
        return -1;
    }

    private static final class Reader {
        final byte[] b;
        final int end;
        final String where;
        int pos;

        Reader(byte[] b, int start, int end, String where) {
            this.b = b;
            this.pos = start;
            this.end = end;
            this.where = where;
        }

        boolean hasMore() {
            return pos < end;
        }

        long varint() throws BadInputException {
            int start = pos;
            long v = 0;
            for (int shift = 0; shift < 64; shift += 7) {
                if (pos >= end) {
                    throw bad(start, "a varint runs past the end");
                }
                byte x = b[pos++];
                v |= (long) (x & 0x7f) << shift;
                if (x >= 0) {
                    return v;
                }
            }
            throw bad(start, "a varint longer than 10 bytes");
        }

        int length() throws BadInputException {
            int start = pos;
            long len = varint();
            if (len < 0 || len > end - pos) {
                throw bad(start, "a field of " + len + " bytes runs past the end");
            }
            return (int) len;
        }

        String string() throws BadInputException {
            int len = length();
            String s = new String(b, pos, len, StandardCharsets.UTF_8);
            pos += len;
            return s;
        }

        void skip(int wire, int fieldStart) throws BadInputException {
            switch (wire) {
                case VARINT -> varint();
                case FIXED64 -> advance(8, fieldStart);
                case LENGTH_DELIMITED -> {
                    int len = length();
                    pos += len;
                }
                case FIXED32 -> advance(4, fieldStart);
                default -> throw bad(fieldStart, "unknown protobuf wire type " + wire);
            }
        }

        private void advance(int n, int fieldStart) throws BadInputException {
            if (end - pos < n) {
                throw bad(fieldStart, "a fixed-size field runs past the end");
            }
            pos += n;
        }

        BadInputException bad(int at, String what) {
            return new BadInputException(where, "not an ONNX model: " + what + " at byte " + at);
        }
    }
}
