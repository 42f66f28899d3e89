package dev.weft.runtime.config;

import com.fasterxml.jackson.databind.JsonNode;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.BadInputException.Problem;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.LinkedHashSet;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.function.Function;

/**
 * Walks a {@link YamlTree} and records every problem with its key path and line, so that a whole
 * file is checked in one pass. Readers return null for a value that is missing or wrong (after
 * recording why); the caller builds its result only when {@link #finish()} finds no problem.
 *
 * <p>Not thread-safe; one instance per document.
 */
final class TreeReader {

    private record Found(int line, int order, Problem problem) {
    }

    private final YamlTree tree;
    private final List<Found> problems = new ArrayList<>();

    TreeReader(YamlTree tree) {
        this.tree = tree;
    }

    /** The top-level map, or null (with a problem) when the document is not a map. */
    Section root() {
        JsonNode r = tree.root();
        if (!r.isObject()) {
            add("", "must be a map of sections (robot, timing, policy, ...), got " + describe("", r));
            return null;
        }
        return new Section("", r);
    }

    /** Records a problem at {@code path}, shown with the line of the key at {@code path}. */
    void add(String path, String what) {
        addAt(path, path, what);
    }

    /** Records a problem at {@code path}, shown with the line of the key at {@code linePath}. */
    void addAt(String path, String linePath, String what) {
        int line = linePath.isEmpty() && !path.isEmpty() ? 0 : tree.line(linePath);
        problems.add(new Found(line, problems.size(), new Problem(where(path, line), what)));
    }

    /** How a problem names the key at {@code path}: its display path and line, for checks made later. */
    String where(String path) {
        return where(path, path.isEmpty() ? 0 : tree.line(path));
    }

    private static String where(String path, int line) {
        return KeyPath.display(path) + (line > 0 ? " (line " + line + ")" : "");
    }

    /** The number of problems recorded so far. */
    int count() {
        return problems.size();
    }

    /** The source text of the number or true/false at {@code path}, or null. */
    String raw(String path) {
        return tree.rawText(path);
    }

    /**
     * @throws BadInputException with every recorded problem, in the order of their lines in the file
     *     (problems with no line first)
     */
    void finish() throws BadInputException {
        if (problems.isEmpty()) {
            return;
        }
        List<Found> sorted = new ArrayList<>(problems);
        sorted.sort(Comparator.comparingInt(Found::line).thenComparingInt(Found::order));
        List<Problem> out = new ArrayList<>();
        for (Found f : sorted) {
            out.add(f.problem());
        }
        throw new BadInputException(out);
    }

    /** How a value is named in "got ..." messages: text quoted, numbers as written, containers by kind. */
    String describe(String path, JsonNode n) {
        if (n == null || n.isNull()) {
            return "no value";
        }
        if (n.isTextual()) {
            return "\"" + n.textValue() + "\"";
        }
        if (n.isObject()) {
            return "a map";
        }
        if (n.isArray()) {
            return "a list";
        }
        String raw = tree.rawText(path);
        return raw != null ? raw : n.asText();
    }

    /** A map in the document, read key by key; {@link #done()} reports the keys nobody asked for. */
    final class Section {
        private final String path;
        private final JsonNode node;
        private final Set<String> asked = new LinkedHashSet<>();

        Section(String path, JsonNode node) {
            this.path = path;
            this.node = node;
        }

        String path() {
            return path;
        }

        /** The key path of {@code key} in this map. */
        String pathOf(String key) {
            return KeyPath.child(path, key);
        }

        /** True when {@code key} is present (with any value, including an empty one). */
        boolean has(String key) {
            return node.has(key);
        }

        /** Records a problem with {@code key}; a missing key is shown with this map's line. */
        void problem(String key, String what) {
            String p = pathOf(key);
            addAt(p, node.has(key) ? p : path, what);
        }

        /** The node at {@code key} or null, without counting the key as read. */
        JsonNode peek(String key) {
            return node.get(key);
        }

        /** The keys of this map in document order. */
        List<String> keys() {
            List<String> out = new ArrayList<>();
            for (Iterator<String> it = node.fieldNames(); it.hasNext(); ) {
                out.add(it.next());
            }
            return out;
        }

        /**
         * The node at {@code key}, or null when absent; a key given with no value is a problem
         * (reported here) and also reads as null, so an empty {@code jerk:} never passes for a default.
         */
        JsonNode get(String key, boolean required) {
            asked.add(key);
            JsonNode n = node.get(key);
            if (n == null) {
                if (required) {
                    problem(key, "is required");
                }
                return null;
            }
            if (n.isNull()) {
                problem(key, "has no value");
                return null;
            }
            return n;
        }

        /** A nested map, or null when absent or not a map. */
        Section section(String key, boolean required) {
            JsonNode n = get(key, required);
            if (n == null) {
                return null;
            }
            if (!n.isObject()) {
                problem(key, "must be a map, got " + describe(pathOf(key), n));
                return null;
            }
            return new Section(pathOf(key), n);
        }

        /** The elements of a nested list with their paths, or null when absent or not a list. */
        Map<String, JsonNode> list(String key, boolean required) {
            JsonNode n = get(key, required);
            if (n == null) {
                return null;
            }
            if (!n.isArray()) {
                problem(key, "must be a list, got " + describe(pathOf(key), n));
                return null;
            }
            Map<String, JsonNode> out = new LinkedHashMap<>();
            for (int i = 0; i < n.size(); i++) {
                out.put(KeyPath.index(pathOf(key), i), n.get(i));
            }
            return out;
        }

        /** A required list of finite numbers, or null with a problem for each element that is not one. */
        double[] numbers(String key) {
            Map<String, JsonNode> list = list(key, true);
            if (list == null) {
                return null;
            }
            double[] out = new double[list.size()];
            int i = 0;
            boolean ok = true;
            for (Map.Entry<String, JsonNode> e : list.entrySet()) {
                Double d = finite(e.getKey(), e.getValue());
                ok &= d != null;
                out[i++] = d == null ? 0 : d;
            }
            return ok ? out : null;
        }

        /** A map element of a list (at {@code elementPath}), or null with a problem when it is not a map. */
        Section element(String elementPath, JsonNode n) {
            if (n == null || !n.isObject()) {
                add(elementPath, "must be a map, got " + describe(elementPath, n));
                return null;
            }
            return new Section(elementPath, n);
        }

        /**
         * Text; a plain scalar that YAML reads as a number or true/false counts as its text as written.
         *
         * @param fallback the value when absent, or null when the key is required
         */
        String text(String key, String fallback) {
            JsonNode n = get(key, fallback == null);
            if (n == null) {
                return has(key) ? null : fallback;
            }
            String s;
            if (n.isTextual()) {
                s = n.textValue();
            } else if (n.isNumber() || n.isBoolean()) {
                s = describe(pathOf(key), n);
            } else {
                problem(key, "must be text, got " + describe(pathOf(key), n));
                return null;
            }
            if (s.isBlank()) {
                problem(key, "must not be empty");
                return null;
            }
            return s;
        }

        /**
         * One of a fixed set of words.
         *
         * @param fallback the value when absent, or null when the key is required
         */
        <E> E choice(String key, E[] values, Function<E, String> label, E fallback) {
            JsonNode n = get(key, fallback == null);
            if (n == null) {
                return has(key) ? null : fallback;
            }
            String s = n.isTextual() ? n.textValue() : describe(pathOf(key), n);
            for (E e : values) {
                if (label.apply(e).equals(s)) {
                    return e;
                }
            }
            StringBuilder all = new StringBuilder();
            for (E e : values) {
                all.append(all.length() == 0 ? "" : ", ").append(label.apply(e));
            }
            problem(key, "must be one of " + all + ", got " + describe(pathOf(key), n));
            return null;
        }

        /**
         * True or false.
         *
         * @param fallback the value when absent, or null when the key is required
         */
        Boolean flag(String key, Boolean fallback) {
            JsonNode n = get(key, fallback == null);
            if (n == null) {
                return has(key) ? null : fallback;
            }
            if (!n.isBoolean()) {
                problem(key, "must be true or false, got " + describe(pathOf(key), n));
                return null;
            }
            return n.booleanValue();
        }

        /**
         * A finite number.
         *
         * @param fallback the value when absent, or null when the key is required
         */
        Double number(String key, Double fallback) {
            JsonNode n = get(key, fallback == null);
            if (n == null) {
                return has(key) ? null : fallback;
            }
            return finite(pathOf(key), n);
        }

        /** A finite number {@code > 0}; {@code fallback} as in {@link #number}. */
        Double positive(String key, Double fallback) {
            Double v = number(key, fallback);
            if (v != null && !(v > 0) && has(key)) {
                problem(key, "must be > 0, got " + describe(pathOf(key), node.get(key)));
                return null;
            }
            return v;
        }

        /** A finite number {@code >= 0}; {@code fallback} as in {@link #number}. */
        Double nonNegative(String key, Double fallback) {
            Double v = number(key, fallback);
            if (v != null && v < 0 && has(key)) {
                problem(key, "must be >= 0, got " + describe(pathOf(key), node.get(key)));
                return null;
            }
            return v;
        }

        /**
         * A whole number in {@code [min, max]}.
         *
         * @param fallback the value when absent, or null when the key is required
         */
        Long whole(String key, Long fallback, long min, long max) {
            JsonNode n = get(key, fallback == null);
            if (n == null) {
                return has(key) ? null : fallback;
            }
            return wholeValue(pathOf(key), n, min, max);
        }

        /** {@link #whole} narrowed to an int in {@code [min, Integer.MAX_VALUE]}. */
        Integer count(String key, Integer fallback, int min) {
            Long v = whole(key, fallback == null ? null : (long) fallback, min, Integer.MAX_VALUE);
            return v == null ? null : (int) (long) v;
        }

        /** Reports every key of this map that no reader asked for. */
        void done() {
            for (String k : keys()) {
                if (!asked.contains(k)) {
                    problem(k, "unknown key" + hint(k));
                }
            }
        }

        /** Marks every present key as known (for maps whose keys are names, such as model inputs). */
        void acceptAllKeys() {
            asked.addAll(keys());
        }

        private String hint(String unknown) {
            String best = null;
            int bestDistance = 3;
            for (String k : asked) {
                int d = distance(unknown, k);
                if (d < bestDistance && !node.has(k)) {
                    best = k;
                    bestDistance = d;
                }
            }
            return best == null ? "" : " (did you mean " + best + "?)";
        }
    }

    /** A finite number at {@code path}, or null with a problem. */
    Double finite(String path, JsonNode n) {
        if (!n.isNumber()) {
            add(path, "must be a number, got " + describe(path, n));
            return null;
        }
        double d = n.doubleValue();
        if (!Double.isFinite(d)) {
            add(path, "must be a finite number, got " + describe(path, n));
            return null;
        }
        return d;
    }

    /** A whole number in {@code [min, max]} at {@code path}, or null with a problem. */
    Long wholeValue(String path, JsonNode n, long min, long max) {
        boolean integral = n.isIntegralNumber()
                || (n.isNumber() && Double.isFinite(n.doubleValue()) && n.doubleValue() == Math.rint(n.doubleValue()));
        if (!integral) {
            add(path, "must be a whole number, got " + describe(path, n));
            return null;
        }
        boolean exact = n.isIntegralNumber() && n.canConvertToLong();
        boolean below = exact ? n.longValue() < min : n.doubleValue() < min;
        boolean above = exact ? n.longValue() > max : n.doubleValue() > max || !n.canConvertToLong();
        if (below || above) {
            boolean bounded = max != Long.MAX_VALUE && max != Integer.MAX_VALUE;
            String rule = bounded ? "must be in [" + min + ", " + max + "]"
                    : below ? "must be >= " + min : "must be at most " + max;
            add(path, rule + ", got " + describe(path, n));
            return null;
        }
        return n.longValue();
    }

    /** Levenshtein distance, for "did you mean" hints on unknown keys. */
    static int distance(String a, String b) {
        int[] prev = new int[b.length() + 1];
        int[] cur = new int[b.length() + 1];
        for (int j = 0; j <= b.length(); j++) {
            prev[j] = j;
        }
        for (int i = 1; i <= a.length(); i++) {
            cur[0] = i;
            for (int j = 1; j <= b.length(); j++) {
                int sub = prev[j - 1] + (a.charAt(i - 1) == b.charAt(j - 1) ? 0 : 1);
                cur[j] = Math.min(sub, Math.min(prev[j] + 1, cur[j - 1] + 1));
            }
            int[] t = prev;
            prev = cur;
            cur = t;
        }
        return prev[b.length()];
    }
}
