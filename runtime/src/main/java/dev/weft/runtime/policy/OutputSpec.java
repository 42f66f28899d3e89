package dev.weft.runtime.policy;

/**
 * Which model output is the chunk and how to read it.
 *
 * @param name the output's name, or null when the model has exactly one output
 * @param layout how the tensor is read as K × D
 * @param chunkLength K as configured, or 0 to take it from the model
 * @param actionSize D as configured, or 0 to take it from the model
 * @param actions what the action values mean; every representation is turned into absolute
 *     targets before the chunk leaves the policy
 */
public record OutputSpec(String name, ChunkLayout layout, int chunkLength, int actionSize,
                         ActionRepresentation actions) {
    public OutputSpec {
        if (layout == null || actions == null) {
            throw new IllegalArgumentException("an output layout and an action representation must be given");
        }
        if (chunkLength < 0 || actionSize < 0) {
            throw new IllegalArgumentException("K and D must be >= 0 (0 = from the model)");
        }
    }

    /** Absolute actions (the default). */
    public OutputSpec(String name, ChunkLayout layout, int chunkLength, int actionSize) {
        this(name, layout, chunkLength, actionSize, ActionRepresentation.ABSOLUTE);
    }
}
