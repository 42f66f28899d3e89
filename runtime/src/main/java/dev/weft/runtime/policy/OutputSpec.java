package dev.weft.runtime.policy;

/**
 * Which model output is the chunk and how to read it.
 *
 * @param name the output's name, or null when the model has exactly one output
 * @param layout how the tensor is read as K × D
 * @param chunkLength K as configured, or 0 to take it from the model
 * @param actionSize D as configured, or 0 to take it from the model
 */
public record OutputSpec(String name, ChunkLayout layout, int chunkLength, int actionSize) {
    public OutputSpec {
        if (layout == null) {
            throw new IllegalArgumentException("an output layout must be given");
        }
        if (chunkLength < 0 || actionSize < 0) {
            throw new IllegalArgumentException("K and D must be >= 0 (0 = from the model)");
        }
    }
}
