package dev.weft.runtime.policy;

/**
 * What the values of a policy's action chunk mean, and how they become absolute joint targets
 * before the chunk leaves the policy. The joint state is the observation's leading values: joint
 * i's position is observation value i (the same convention as
 * {@code LoopSettings.leadingPositions}).
 *
 * <p>Threading: stateless; {@link #toAbsolute} writes only into the array it is given.
 */
public enum ActionRepresentation {
    /** Each value is joint i's target position. */
    ABSOLUTE("absolute"),
    /** Each value is an offset from joint i's position in the observation the chunk came from. */
    FROM_STATE("from_state"),
    /**
     * Each value is an offset from the previous action's value for joint i; the first action's
     * offset is from joint i's position in the observation the chunk came from.
     */
    FROM_PREVIOUS("from_previous");

    private final String label;

    ActionRepresentation(String label) {
        this.label = label;
    }

    /** The name configuration uses, such as {@code from_state}. */
    public String label() {
        return label;
    }

    /** True when the conversion reads the joint state from the observation. */
    public boolean needsJointState() {
        return this != ABSOLUTE;
    }

    /**
     * Turns a chunk in this representation into absolute targets, in place; allocates nothing.
     *
     * @param observation the observation the chunk was computed from, at least {@code d} values
     *     (the first {@code d} are the joint positions); not modified
     * @param chunk {@code k·d} values, row-major (action j's value i at {@code j·d + i})
     */
    public void toAbsolute(double[] observation, double[] chunk, int k, int d) {
        switch (this) {
            case ABSOLUTE -> {
                // already absolute
            }
            case FROM_STATE -> {
                for (int j = 0; j < k; j++) {
                    int row = j * d;
                    for (int i = 0; i < d; i++) {
                        chunk[row + i] += observation[i];
                    }
                }
            }
            case FROM_PREVIOUS -> {
                for (int i = 0; i < d; i++) {
                    chunk[i] += observation[i];
                }
                for (int j = 1; j < k; j++) {
                    int row = j * d;
                    for (int i = 0; i < d; i++) {
                        chunk[row + i] += chunk[row - d + i];
                    }
                }
            }
        }
    }

    /** The representation for a label, or null. */
    public static ActionRepresentation byLabel(String label) {
        for (ActionRepresentation r : values()) {
            if (r.label.equals(label)) {
                return r;
            }
        }
        return null;
    }
}
