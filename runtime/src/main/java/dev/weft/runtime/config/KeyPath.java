package dev.weft.runtime.config;

import java.util.regex.Pattern;

/**
 * Key paths as messages show them: {@code robot.joints[3].jerk}. A key that is not a plain word
 * (letters, digits, {@code _} and {@code -}) is quoted in brackets, {@code policy.inputs["obs.0"]},
 * so that a path always reads back unambiguously. The root is the empty path.
 */
final class KeyPath {

    private static final Pattern PLAIN = Pattern.compile("[A-Za-z0-9_-]+");

    private KeyPath() {
    }

    /** The path of {@code key} inside the map at {@code parent}. */
    static String child(String parent, String key) {
        if (PLAIN.matcher(key).matches()) {
            return parent.isEmpty() ? key : parent + "." + key;
        }
        return parent + "[\"" + key.replace("\\", "\\\\").replace("\"", "\\\"") + "\"]";
    }

    /** The path of element {@code i} of the list at {@code parent}. */
    static String index(String parent, int i) {
        return parent + "[" + i + "]";
    }

    /** The path as shown in a message; the root shows as {@code (top level)}. */
    static String display(String path) {
        return path.isEmpty() ? "(top level)" : path;
    }
}
