package dev.weft.runtime.port;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.BadInputException.Problem;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Collections;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;

/**
 * The options of one port or source, as a map from the configuration, with typed readers that
 * collect every problem under its key path (such as {@code port.options.host}). A reader returns
 * a usable default after recording a problem, so all problems come out of {@link #finish()} at once.
 *
 * <p>Not thread-safe; used while a run is built.
 */
public final class PortOptions {

    private final String path;
    private final Map<String, Object> values;
    private final Set<String> read = new HashSet<>();
    private final List<Problem> problems = new ArrayList<>();
    private final Path baseDir;

    /**
     * @param path the key path of the options map, for messages (such as {@code port.options})
     * @param values the options; not modified
     * @param baseDir the folder relative paths are resolved against (the configuration file's)
     */
    public PortOptions(String path, Map<String, ?> values, Path baseDir) {
        this.path = path;
        this.values = values == null ? Map.of() : Collections.unmodifiableMap(new LinkedHashMap<>(values));
        this.baseDir = baseDir;
    }

    /** Options with no values, for a port made in code. */
    public static PortOptions none(String path) {
        return new PortOptions(path, Map.of(), Path.of("."));
    }

    /** The key path of {@code key}, for messages. */
    public String where(String key) {
        return path + "." + key;
    }

    public boolean has(String key) {
        return values.containsKey(key);
    }

    /** A text option, or {@code fallback} when absent. */
    public String text(String key, String fallback) {
        Object v = take(key);
        if (v == null) {
            return fallback;
        }
        if (v instanceof String s) {
            return s;
        }
        problem(key, "must be text, got " + describe(v));
        return fallback;
    }

    /** A required text option. */
    public String requiredText(String key) {
        if (!has(key)) {
            problem(key, "is required");
            read.add(key);
            return "";
        }
        return text(key, "");
    }

    /** An integer option in {@code [min, max]}, or {@code fallback} when absent. */
    public int integer(String key, int fallback, int min, int max) {
        Object v = take(key);
        if (v == null) {
            return fallback;
        }
        if (v instanceof Number n && n.doubleValue() == Math.rint(n.doubleValue()) && !(v instanceof Double d && d.isInfinite())) {
            long l = n.longValue();
            if (l < min || l > max) {
                problem(key, "must be in [" + min + ", " + max + "], got " + l);
                return fallback;
            }
            return (int) l;
        }
        problem(key, "must be a whole number, got " + describe(v));
        return fallback;
    }

    /** A finite number in {@code [min, max]}, or {@code fallback} when absent. */
    public double number(String key, double fallback, double min, double max) {
        Object v = take(key);
        if (v == null) {
            return fallback;
        }
        if (v instanceof Number n && Double.isFinite(n.doubleValue())) {
            double d = n.doubleValue();
            if (d < min || d > max) {
                problem(key, "must be in [" + min + ", " + max + "], got " + d);
                return fallback;
            }
            return d;
        }
        problem(key, "must be a finite number, got " + describe(v));
        return fallback;
    }

    /** A true/false option, or {@code fallback} when absent. */
    public boolean flag(String key, boolean fallback) {
        Object v = take(key);
        if (v == null) {
            return fallback;
        }
        if (v instanceof Boolean b) {
            return b;
        }
        problem(key, "must be true or false, got " + describe(v));
        return fallback;
    }

    /** A list of text values, or {@code fallback} when absent. */
    public List<String> textList(String key, List<String> fallback) {
        Object v = take(key);
        if (v == null) {
            return fallback;
        }
        if (v instanceof List<?> l) {
            List<String> out = new ArrayList<>();
            for (int i = 0; i < l.size(); i++) {
                if (l.get(i) instanceof String s) {
                    out.add(s);
                } else {
                    problem(key + "[" + i + "]", "must be text, got " + describe(l.get(i)));
                }
            }
            return out;
        }
        problem(key, "must be a list, got " + describe(v));
        return fallback;
    }

    /** A file path resolved against the configuration's folder, or null when absent. */
    public Path path(String key) {
        String s = text(key, null);
        return s == null ? null : baseDir.resolve(s).normalize();
    }

    /** Records a problem with {@code key} found by the caller's own checks. */
    public void problem(String key, String what) {
        problems.add(new Problem(where(key), what));
    }

    /**
     * Ends reading: unknown keys are problems too (a typo must not silently change behaviour).
     *
     * @throws BadInputException with every problem recorded
     */
    public void finish() throws BadInputException {
        for (String key : values.keySet()) {
            if (!read.contains(key)) {
                problems.add(new Problem(where(key), "unknown option"));
            }
        }
        if (!problems.isEmpty()) {
            throw new BadInputException(problems);
        }
    }

    private Object take(String key) {
        read.add(key);
        return values.get(key);
    }

    private static String describe(Object v) {
        if (v instanceof String s) {
            return "\"" + s + "\"";
        }
        if (v instanceof List<?>) {
            return "a list";
        }
        if (v instanceof Map<?, ?>) {
            return "a map";
        }
        return String.valueOf(v);
    }
}
