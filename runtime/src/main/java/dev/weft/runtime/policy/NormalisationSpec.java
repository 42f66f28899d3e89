package dev.weft.runtime.policy;

/**
 * Where the normalisation of the observation values and the de-normalisation of the actions come
 * from. A null component means "from the model": the model's metadata properties decide (see
 * {@link Normalisation}), and a model without them is not scaled. A given {@link ValueScale},
 * {@link ValueScale#NONE} included, wins over the model's metadata, which is then not read.
 *
 * @param observation the observation values' scale, or null for the model's metadata
 * @param actions the action values' scale, or null for the model's metadata
 */
public record NormalisationSpec(ValueScale observation, ValueScale actions) {

    /** Both from the model's metadata (no scaling for a model without it). */
    public static final NormalisationSpec FROM_MODEL = new NormalisationSpec(null, null);
}
