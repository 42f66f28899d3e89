package dev.weft.runtime.policy;

/** How a model output is read as an action chunk of K actions by D values. */
public enum ChunkLayout {
    /** {@code [1, K, D]}: batch, steps, values. */
    BATCH_STEPS_VALUES("1xKxD", 3),
    /** {@code [K, D]}: steps, values. */
    STEPS_VALUES("KxD", 2),
    /** {@code [1, K·D]}: batch, flat row-major chunk. */
    BATCH_FLAT("1xKD", 2),
    /** {@code [1, D]}: one action (K = 1), as single-step actors produce. */
    SINGLE_ACTION("1xD", 2);

    private final String label;
    private final int rank;

    ChunkLayout(String label, int rank) {
        this.label = label;
        this.rank = rank;
    }

    /** The name used in configuration and messages, such as {@code 1xKxD}. */
    public String label() {
        return label;
    }

    public int rank() {
        return rank;
    }

    /** The layout for a label, or null. */
    public static ChunkLayout byLabel(String label) {
        for (ChunkLayout l : values()) {
            if (l.label.equals(label)) {
                return l;
            }
        }
        return null;
    }

    /** All labels, for messages. */
    public static String labels() {
        StringBuilder b = new StringBuilder();
        for (ChunkLayout l : values()) {
            if (b.length() > 0) {
                b.append(", ");
            }
            b.append(l.label);
        }
        return b.toString();
    }
}
