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
 * @param holdSteps for a single-step actor (layout {@code 1xD}): for how many policy steps its
 *     action is held, so the policy gives a chunk of {@code 1 + holdSteps} equal actions covering
 *     {@code holdSteps·Δp}; 0 for every other layout ({@code 1xD} then takes
 *     {@link #DEFAULT_HOLD_STEPS})
 */
public record OutputSpec(String name, ChunkLayout layout, int chunkLength, int actionSize,
                         ActionRepresentation actions, int holdSteps) {

    /**
     * A single-step actor's action is held for two policy steps unless configured: the next action
     * may then come up to one step late (a query every step plus its latency) without the plan
     * running out.
     */
    public static final int DEFAULT_HOLD_STEPS = 2;

    public OutputSpec {
        if (layout == null || actions == null) {
            throw new IllegalArgumentException("an output layout and an action representation must be given");
        }
        if (chunkLength < 0 || actionSize < 0) {
            throw new IllegalArgumentException("K and D must be >= 0 (0 = from the model)");
        }
        if (holdSteps < 0 || (holdSteps > 0 && layout != ChunkLayout.SINGLE_ACTION)) {
            throw new IllegalArgumentException("a hold of " + holdSteps + " steps is for layout 1xD only, and >= 1");
        }
    }

    /** Without a configured hold. */
    public OutputSpec(String name, ChunkLayout layout, int chunkLength, int actionSize, ActionRepresentation actions) {
        this(name, layout, chunkLength, actionSize, actions, 0);
    }

    /** Absolute actions (the default). */
    public OutputSpec(String name, ChunkLayout layout, int chunkLength, int actionSize) {
        this(name, layout, chunkLength, actionSize, ActionRepresentation.ABSOLUTE);
    }

    /** The hold a single-step actor gets (configured, or the default); 0 for a chunk layout. */
    public int effectiveHoldSteps() {
        return layout != ChunkLayout.SINGLE_ACTION ? 0 : holdSteps > 0 ? holdSteps : DEFAULT_HOLD_STEPS;
    }
}
