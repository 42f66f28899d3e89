package dev.weft.runtime.policy;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.weft.runtime.BadInputException.Problem;
import java.util.List;
import java.util.Map;

/**
 * The observation and action scales a policy runs with, resolved at load from the configuration
 * ({@link NormalisationSpec}) and the model's metadata properties. The metadata keys are ours:
 * {@code weft.observation.mean} and {@code weft.observation.std}, or {@code weft.observation.min}
 * and {@code weft.observation.max}; the same under {@code weft.action.}; each value a JSON array
 * of numbers, one per observation value (or per action value, D).
 *
 * @param observation the scale of the observation values fed to the model
 * @param actions the scale of the action values the model gives
 */
public record Normalisation(ValueScale observation, ValueScale actions) {

    /** The prefix of the observation statistics in a model's metadata. */
    public static final String OBSERVATION_KEYS = "weft.observation.";
    /** The prefix of the action statistics in a model's metadata. */
    public static final String ACTION_KEYS = "weft.action.";

    private static final ObjectMapper JSON = new ObjectMapper();
    private static final List<String> LISTS = List.of("mean", "std", "min", "max");

    /**
     * Resolves both scales; every problem found goes to {@code problems}, each naming the
     * configuration's key path or the model file and metadata key, and the value index.
     *
     * @param metadata the model's custom metadata properties
     * @return the scales, or null when a problem was found
     */
    static Normalisation resolve(NormalisationSpec spec, Map<String, String> metadata, String file,
                                 int observationSize, int actionSize, List<Problem> problems) {
        int before = problems.size();
        ValueScale obs = one(spec.observation(), metadata, OBSERVATION_KEYS, file, observationSize,
                "the observation has " + observationSize, problems);
        ValueScale act = one(spec.actions(), metadata, ACTION_KEYS, file, actionSize,
                "an action has " + actionSize + " (D)", problems);
        return problems.size() == before ? new Normalisation(obs, act) : null;
    }

    private static ValueScale one(ValueScale given, Map<String, String> metadata, String prefix, String file,
                                  int expected, String what, List<Problem> problems) {
        if (given != null) {
            if (given.method() != ValueScale.Method.NONE && given.size() != expected) {
                problems.add(new Problem(given.source(), "has " + given.size() + " values, " + what));
                return null;
            }
            return given;
        }
        int before = problems.size();
        for (String key : metadata.keySet()) {
            if (key.startsWith(prefix) && !LISTS.contains(key.substring(prefix.length()))) {
                problems.add(new Problem(file + " metadata '" + key + "'", "is not a key weft reads; under "
                        + prefix + " weft reads mean and std, or min and max"));
            }
        }
        boolean meanStd = metadata.containsKey(prefix + "mean") || metadata.containsKey(prefix + "std");
        boolean minMax = metadata.containsKey(prefix + "min") || metadata.containsKey(prefix + "max");
        if (meanStd && minMax) {
            problems.add(new Problem(file + " metadata '" + prefix + "*'", "holds both mean/std and min/max; "
                    + "keep one pair"));
            return null;
        }
        if (!meanStd && !minMax) {
            return problems.size() == before ? ValueScale.NONE : null;
        }
        ValueScale.Method m = meanStd ? ValueScale.Method.MEAN_STD : ValueScale.Method.MIN_MAX;
        double[] a = list(metadata, prefix + m.first(), prefix + m.second(), file, problems);
        double[] b = list(metadata, prefix + m.second(), prefix + m.first(), file, problems);
        if (a == null || b == null) {
            return null;
        }
        ValueScale.check(m, a, b, (list, index, text) -> problems.add(new Problem(
                file + " metadata '" + prefix + list + "'" + (index >= 0 ? " value " + index : ""), text)));
        if (a.length != expected) {
            problems.add(new Problem(file + " metadata '" + prefix + m.first() + "'", "has " + a.length
                    + " values, " + what));
        }
        if (problems.size() != before) {
            return null;
        }
        String source = file + " metadata '" + prefix + m.first() + "', '" + prefix + m.second() + "'";
        return m == ValueScale.Method.MEAN_STD ? ValueScale.meanStd(a, b, source) : ValueScale.minMax(a, b, source);
    }

    private static double[] list(Map<String, String> metadata, String key, String partner, String file,
                                 List<Problem> problems) {
        String where = file + " metadata '" + key + "'";
        String text = metadata.get(key);
        if (text == null) {
            problems.add(new Problem(where, "missing; '" + partner + "' needs it"));
            return null;
        }
        JsonNode n;
        try {
            n = JSON.readTree(text);
        } catch (JsonProcessingException e) {
            n = null;
        }
        if (n == null || !n.isArray()) {
            problems.add(new Problem(where, "must be a JSON array of numbers, got " + shorten(text)));
            return null;
        }
        double[] v = new double[n.size()];
        boolean ok = true;
        for (int i = 0; i < n.size(); i++) {
            if (!n.get(i).isNumber()) {
                problems.add(new Problem(where + " value " + i, "must be a number, got " + shorten(n.get(i).toString())));
                ok = false;
            } else {
                v[i] = n.get(i).doubleValue();
            }
        }
        return ok ? v : null;
    }

    private static String shorten(String s) {
        return s.length() <= 40 ? "'" + s + "'" : "'" + s.substring(0, 37) + "...'";
    }
}
