package dev.weft.runtime.config;

import com.fasterxml.jackson.databind.JsonNode;
import dev.weft.runtime.config.TreeReader.Section;
import dev.weft.runtime.policy.NormalisationSpec;
import dev.weft.runtime.policy.ValueScale;

/**
 * Reads {@code policy.normalisation}: for {@code observation} and for {@code actions}, either
 * {@code mean} and {@code std}, or {@code min} and {@code max} (lists of numbers), or the word
 * {@code none} (no scaling, whatever the model's metadata says), or {@code from_model} (the
 * default: the model's metadata properties decide).
 */
final class NormalisationSection {

    private static final String NONE = "none";
    private static final String FROM_MODEL = "from_model";

    private final TreeReader r;

    NormalisationSection(TreeReader r) {
        this.r = r;
    }

    /**
     * @param s the {@code policy.normalisation} map, or null when absent
     * @param observationSize {@code policy.observation_size}, or null when it did not read
     * @param actionSize D, or null when unknown
     * @return the spec, or null with problems recorded
     */
    NormalisationSpec read(Section s, Integer observationSize, Integer actionSize) {
        if (s == null) {
            return NormalisationSpec.FROM_MODEL;
        }
        int before = r.count();
        ValueScale observation = vector(s, "observation", observationSize,
                "one value per observation value (policy.observation_size = " + observationSize + ")");
        ValueScale actions = vector(s, "actions", actionSize,
                "one value per action value (D = " + actionSize + ")");
        s.done();
        return r.count() == before ? new NormalisationSpec(observation, actions) : null;
    }

    private ValueScale vector(Section s, String key, Integer expected, String rule) {
        JsonNode peek = s.peek(key);
        if (peek == null || peek.isTextual()) {
            String word = s.text(key, FROM_MODEL);
            if (word != null && !word.equals(NONE) && !word.equals(FROM_MODEL)) {
                s.problem(key, "must be " + FROM_MODEL + ", " + NONE + ", or a map of mean and std or of min and max, "
                        + "got \"" + word + "\"");
            }
            return NONE.equals(word) ? ValueScale.NONE : null;
        }
        Section v = s.section(key, false);
        if (v == null) {
            return null;
        }
        boolean meanStd = v.has("mean") || v.has("std");
        boolean minMax = v.has("min") || v.has("max");
        if (meanStd && minMax) {
            v.problem(minMax && v.has("min") ? "min" : "max", "give mean and std, or min and max, not both");
            v.acceptAllKeys();
            v.done();
            return null;
        }
        if (!meanStd && !minMax) {
            s.problem(key, "must hold mean and std, or min and max");
            v.acceptAllKeys();
            v.done();
            return null;
        }
        ValueScale.Method m = meanStd ? ValueScale.Method.MEAN_STD : ValueScale.Method.MIN_MAX;
        String firstKey = meanStd ? "mean" : "min";
        String secondKey = meanStd ? "std" : "max";
        int before = r.count();
        double[] a = v.numbers(firstKey);
        double[] b = v.numbers(secondKey);
        v.done();
        if (a == null || b == null || r.count() != before) {
            return null;
        }
        ValueScale.check(m, a, b, (list, index, what) -> {
            String p = v.pathOf(list);
            r.add(index >= 0 ? KeyPath.index(p, index) : p, what);
        });
        if (expected != null && a.length != expected) {
            v.problem(firstKey, "must have " + rule + ", has " + a.length);
        }
        if (r.count() != before) {
            return null;
        }
        String source = r.where(s.pathOf(key));
        return meanStd ? ValueScale.meanStd(a, b, source) : ValueScale.minMax(a, b, source);
    }
}
