package dev.weft.runtime.policy;

import dev.weft.runtime.BadInputException.Problem;
import java.util.List;
import java.util.Map;

/**
 * The value conversions around an ONNX model, in the order they are applied: observation values
 * are normalised as they are written into the input tensors; the chunk read from the output is
 * de-normalised, then turned from its representation into absolute joint targets.
 *
 * <p>Threading: immutable; {@link #toTargets} allocates nothing.
 */
record Conversions(ValueScale observation, ValueScale actions, ActionRepresentation representation) {

    /**
     * Resolves the scales (configuration first, then the model's metadata) and checks the
     * representation against the observation size; problems go to {@code problems}.
     *
     * @return the conversions, or null when a problem was found
     */
    static Conversions plan(PolicySpec spec, Map<String, String> metadata, String output, int actionSize,
                            List<Problem> problems) {
        String file = spec.model().toString();
        ActionRepresentation rep = spec.output().actions();
        int before = problems.size();
        if (rep.needsJointState() && spec.observationSize() < actionSize) {
            problems.add(new Problem(file + " output '" + output + "'", "actions " + rep.label() + " adds the joint positions, the first D = "
                    + actionSize + " observation values, but the observation has " + spec.observationSize()));
        }
        Normalisation n = Normalisation.resolve(spec.normalisation(), metadata, file, spec.observationSize(),
                actionSize, problems);
        if (problems.size() != before) {
            return null;
        }
        return new Conversions(n.observation(), n.actions(), rep);
    }

    /**
     * Turns a chunk as the model gave it into absolute targets, in place: de-normalise, then add
     * the joint state (or the previous action) as the representation says.
     *
     * @param observation the raw observation the chunk was computed from (not normalised)
     */
    void toTargets(double[] observation, double[] chunk, int k, int d) {
        actions.denormaliseChunk(chunk, k, d);
        representation.toAbsolute(observation, chunk, k, d);
    }
}
