package dev.weft.runtime.recording;

import dev.weft.runtime.BadInputException;
import io.jhdf.HdfFile;
import io.jhdf.api.Dataset;
import io.jhdf.api.Group;
import io.jhdf.api.Link;
import io.jhdf.api.Node;
import io.jhdf.exceptions.HdfException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import java.lang.reflect.Array;

/**
 * Reads an HDF5 recording with jhdf (the layout is described on {@link Recordings}). Datasets are
 * found and their types and shapes checked first; the values of every dataset whose shape is right
 * are then checked, so one reading reports every problem.
 */
final class Hdf5RecordingReader {

    /** How many members of a group a "holds" list shows. */
    private static final int MEMBERS_SHOWN_MAX = 20;

    /** Integers above this magnitude are not all exactly doubles (2^53). */
    private static final long EXACT_INTEGER_MAX = 1L << 53;

    private Hdf5RecordingReader() {
    }

    /** One dataset as it was found: its path, its shape and what kind of numbers it holds. */
    record Found(String path, Dataset dataset, int[] shape, String type) {
        int rows() {
            return shape[0];
        }

        int columns() {
            return shape.length == 2 ? shape[1] : 1;
        }
    }

    static Recording read(Path file, String name, RecordingSpec spec) throws BadInputException {
        try (HdfFile h = new HdfFile(file)) {
            return read(h, name, spec);
        } catch (HdfException e) {
            throw new BadInputException(name, "cannot be read as HDF5: " + e.getMessage());
        }
    }

    private static Recording read(HdfFile h, String name, RecordingSpec spec) throws BadInputException {
        ProblemList problems = new ProblemList(name);

        Found time = column(h, name, spec.time(), "recording.time", " of times in seconds", problems);
        int n = -1;
        if (time != null && time.rows() == 0) {
            problems.add(at(name, time.path()), "has no samples (shape " + Arrays.toString(time.shape()) + ")");
        } else if (time != null) {
            n = time.rows();
        }
        List<Found> obs = vector(h, name, spec.observation(), "recording.observation", spec.observationSize(),
                spec.observationSize() + " values per observation (policy.observation_size)", problems);
        List<Found> act = vector(h, name, spec.action(), "recording.action", spec.actionSize(),
                "one column per joint (" + spec.actionSize() + " in robot.joints)", problems);
        if (n > 0) {
            for (List<Found> group : List.of(obs, act)) {
                for (Found f : group) {
                    if (f != null && f.rows() != n) {
                        problems.add(at(name, f.path()), "has " + f.rows() + " samples (shape "
                                + Arrays.toString(f.shape()) + ") but recording.time (" + time.path() + ") has " + n);
                    }
                }
            }
        }

        double[] times = time == null ? null : values(name, time, problems);
        if (times != null && n > 0) {
            increasing(name, time, times, problems);
        }
        double[] observations = assemble(name, obs, n, spec.observationSize(), problems);
        double[] actions = assemble(name, act, n, spec.actionSize(), problems);
        problems.throwIfAny();

        List<String> obsNames = new ArrayList<>();
        if (spec.observation().matrix()) {
            for (int k = 0; k < spec.observationSize(); k++) {
                obsNames.add(obs.get(0).path() + "[" + k + "]");
            }
        } else {
            for (Found f : obs) {
                obsNames.add(f.path());
            }
        }
        return new Recording(name, times, observations, actions, obsNames, spec.jointNames());
    }

    /** Records every time in {@code times} (read from {@code time}) that is not after the one before it. */
    static void increasing(String name, Found time, double[] times, ProblemList problems) {
        for (int i = 1; i < times.length; i++) {
            if (!(times[i] > times[i - 1])) {
                problems.add(at(name, time.path(), i, time), "time " + show(times[i], time) + " is not after "
                        + show(times[i - 1], time) + " at " + index(i - 1, time) + "; times must increase strictly");
            }
        }
    }

    /** The datasets of one vector, each checked for type and shape; an entry is null when it is wrong. */
    private static List<Found> vector(HdfFile h, String name, Columns c, String key, int size, String meaning,
                                      ProblemList problems) {
        List<Found> out = new ArrayList<>();
        if (c.matrix()) {
            String need = "a 2-D dataset [n, " + size + "]: one row per sample, " + meaning;
            Found f = typed(h, name, c.names().get(0), key, problems);
            if (f != null && (f.shape().length != 2 || f.shape()[1] != size)) {
                problems.add(at(name, f.path()), "has shape " + Arrays.toString(f.shape()) + "; " + key + " needs "
                        + need);
                f = null;
            }
            out.add(f);
            return out;
        }
        for (int k = 0; k < c.names().size(); k++) {
            out.add(column(h, name, c.names().get(k), key + "[" + k + "]", "", problems));
        }
        return out;
    }

    /** A dataset of one value per sample: shape [n] or [n, 1]. */
    static Found column(HdfFile h, String name, String path, String key, String meaning,
                                ProblemList problems) {
        Found f = typed(h, name, path, key, problems);
        if (f == null) {
            return null;
        }
        int[] s = f.shape();
        if (s.length == 1 || (s.length == 2 && s[1] == 1)) {
            return f;
        }
        problems.add(at(name, f.path()), "has shape " + Arrays.toString(s) + (s.length == 0 ? " (a single value)" : "")
                + "; " + key + " needs a 1-D dataset [n] (or [n, 1])" + meaning);
        return null;
    }

    /** The dataset at {@code path}, if it exists and holds numbers of an accepted type. */
    private static Found typed(HdfFile h, String name, String path, String key, ProblemList problems) {
        Dataset d = resolve(h, name, path, problems);
        if (d == null) {
            return null;
        }
        String type = typeName(d);
        if (!accepted(type)) {
            problems.add(at(name, d.getPath()), "holds " + type + " values; " + key
                    + " needs numbers: float64, float32 or integers");
            return null;
        }
        return new Found(d.getPath(), d, d.getDimensions(), type);
    }

    private static boolean accepted(String type) {
        return type.equals("float64") || type.equals("float32") || type.equals("integer");
    }

    /** Follows {@code path} group by group, saying where it stops and what is there instead. */
    static Dataset resolve(HdfFile h, String name, String path, ProblemList problems) {
        String trimmed = path.startsWith("/") ? path.substring(1) : path;
        String shown = "/" + trimmed;
        if (trimmed.isEmpty() || trimmed.endsWith("/") || trimmed.contains("//")) {
            problems.add(at(name, path), "is not a dataset path (names separated by single /, such as /obs/state)");
            return null;
        }
        String[] parts = trimmed.split("/");
        Group g = h;
        String here = "/";
        for (int i = 0; i < parts.length; i++) {
            Node child = g.getChild(parts[i]);
            if (child != null && child.isLink()) {
                Link link = (Link) child;
                if (link.isBrokenLink()) {
                    problems.add(at(name, shown), "not found: " + join(here, parts[i]) + " is a link to "
                            + link.getTargetPath() + ", which does not exist");
                    return null;
                }
                child = link.getTarget();
            }
            if (child == null) {
                problems.add(at(name, shown), "not found: " + here + " holds no \"" + parts[i] + "\"; " + here
                        + " holds: " + members(g));
                return null;
            }
            String childPath = join(here, parts[i]);
            if (i == parts.length - 1) {
                if (child instanceof Dataset d) {
                    return d;
                }
                problems.add(at(name, shown), child instanceof Group cg ? "is a group, not a dataset; it holds: "
                        + members(cg) : "is not a dataset");
                return null;
            }
            if (!(child instanceof Group cg)) {
                problems.add(at(name, shown), "not found: " + childPath + " is a dataset, not a group");
                return null;
            }
            g = cg;
            here = childPath;
        }
        throw new IllegalStateException("unreachable");
    }

    private static String join(String group, String member) {
        return group.endsWith("/") ? group + member : group + "/" + member;
    }

    private static String members(Group g) {
        Map<String, Node> sorted = new TreeMap<>(g.getChildren());
        if (sorted.isEmpty()) {
            return "nothing";
        }
        StringBuilder b = new StringBuilder();
        int shown = 0;
        for (Map.Entry<String, Node> e : sorted.entrySet()) {
            if (shown == MEMBERS_SHOWN_MAX) {
                b.append(", and ").append(sorted.size() - shown).append(" more");
                break;
            }
            Node m = e.getValue();
            String what = m.isLink() ? "link" : m instanceof Group ? "group"
                    : m instanceof Dataset d ? "dataset " + Arrays.toString(d.getDimensions()) + " " + typeName(d)
                    : "other";
            b.append(shown == 0 ? "" : ", ").append(e.getKey()).append(" (").append(what).append(')');
            shown++;
        }
        return b.toString();
    }

    static String typeName(Dataset d) {
        if (d.isCompound()) {
            return "compound";
        }
        Class<?> t = d.getJavaType();
        if (t == double.class || t == Double.class) {
            return "float64";
        }
        if (t == float.class || t == Float.class) {
            return "float32";
        }
        if (t == long.class || t == int.class || t == short.class || t == byte.class || t == Long.class
                || t == Integer.class || t == Short.class || t == Byte.class) {
            return "integer";
        }
        if (t == String.class) {
            return "text";
        }
        if (t == java.math.BigInteger.class) {
            return "unsigned 64-bit integer";
        }
        return t.getSimpleName();
    }

    /** The values of a dataset whose shape was accepted, as doubles, or null after recording why not. */
    static double[] values(String name, Found f, ProblemList problems) {
        Object flat = f.dataset().getDataFlat();
        int len = Array.getLength(flat);
        double[] out = new double[len];
        int before = problems.total();
        if (flat instanceof double[] a) {
            System.arraycopy(a, 0, out, 0, len);
        } else if (flat instanceof float[] a) {
            for (int i = 0; i < len; i++) {
                out[i] = a[i];
            }
        } else if (flat instanceof long[] a) {
            for (int i = 0; i < len; i++) {
                if (a[i] > EXACT_INTEGER_MAX || a[i] < -EXACT_INTEGER_MAX) {
                    problems.add(at(name, f.path(), i, f), "integer " + a[i]
                            + " is not exactly a double (its magnitude is above 2^53)");
                }
                out[i] = a[i];
            }
        } else if (flat instanceof int[] a) {
            for (int i = 0; i < len; i++) {
                out[i] = a[i];
            }
        } else if (flat instanceof short[] a) {
            for (int i = 0; i < len; i++) {
                out[i] = a[i];
            }
        } else if (flat instanceof byte[] a) {
            for (int i = 0; i < len; i++) {
                out[i] = a[i];
            }
        } else {
            problems.add(at(name, f.path()), "holds values jhdf returns as " + flat.getClass().getSimpleName()
                    + ", which weft does not read");
            return null;
        }
        for (int i = 0; i < len; i++) {
            if (!Double.isFinite(out[i])) {
                problems.add(at(name, f.path(), i, f), "is not finite: " + show(out[i], f));
            }
        }
        return problems.total() == before ? out : null;
    }

    /** The samples of one vector, row-major, or null when any part of it is wrong. */
    private static double[] assemble(String name, List<Found> parts, int n, int size, ProblemList problems) {
        List<double[]> read = new ArrayList<>();
        boolean complete = n > 0;
        for (Found f : parts) {
            double[] v = f == null || (n > 0 && f.rows() != n) ? null : values(name, f, problems);
            complete &= v != null;
            read.add(v);
        }
        if (!complete) {
            return null;
        }
        if (parts.size() == 1 && parts.get(0).columns() == size) {
            return read.get(0);
        }
        double[] out = new double[n * size];
        for (int k = 0; k < size; k++) {
            double[] col = read.get(k);
            for (int i = 0; i < n; i++) {
                out[i * size + k] = col[i];
            }
        }
        return out;
    }

    static String at(String name, String path) {
        return name + " (dataset " + path + ")";
    }

    static String at(String name, String path, int flatIndex, Found f) {
        return name + " (dataset " + path + ", index " + index(flatIndex, f) + ")";
    }

    /** A flat index as the dataset's own index: {@code [i]} or {@code [i, j]}. */
    private static String index(int flatIndex, Found f) {
        if (f.shape().length == 1) {
            return "[" + flatIndex + "]";
        }
        int c = f.columns();
        return "[" + flatIndex / c + ", " + flatIndex % c + "]";
    }

    /** A value as the dataset holds it: float32 values with float digits, integers without a point. */
    private static String show(double v, Found f) {
        if (f.type().equals("float32")) {
            return Float.toString((float) v);
        }
        if (f.type().equals("integer") && Double.isFinite(v)) {
            return Long.toString((long) v);
        }
        return Double.toString(v);
    }
}
