package dev.weft.runtime.policy;

import java.nio.file.Path;
import java.util.Collections;
import java.util.LinkedHashMap;
import java.util.Map;

/**
 * Everything needed to load an ONNX policy: the file, what each input is bound to, how the
 * output is read, and the session options.
 *
 * @param model the ONNX file
 * @param observationSize length of the observation vector
 * @param inputs model input name → its source, in declaration order
 * @param output the chunk output
 * @param session ONNX Runtime options
 * @param normalisation where the observation and action scales come from
 */
public record PolicySpec(Path model, int observationSize, Map<String, InputBinding> inputs, OutputSpec output,
                         SessionSettings session, NormalisationSpec normalisation) {

    public PolicySpec {
        if (model == null || output == null || session == null || inputs == null || normalisation == null) {
            throw new IllegalArgumentException("model, inputs, output, session and normalisation must be given");
        }
        if (observationSize < 1) {
            throw new IllegalArgumentException("observation size must be >= 1, got " + observationSize);
        }
        inputs = Collections.unmodifiableMap(new LinkedHashMap<>(inputs));
    }

    /** Scales from the model's metadata ({@link NormalisationSpec#FROM_MODEL}). */
    public PolicySpec(Path model, int observationSize, Map<String, InputBinding> inputs, OutputSpec output,
                      SessionSettings session) {
        this(model, observationSize, inputs, output, session, NormalisationSpec.FROM_MODEL);
    }

    /** The common case: one input named {@code input} fed the observation. */
    public static PolicySpec singleInput(Path model, int observationSize, String input, OutputSpec output) {
        return new PolicySpec(model, observationSize, Map.of(input, new InputBinding.Observation()), output,
                SessionSettings.DEFAULTS);
    }

    public PolicySpec withSession(SessionSettings s) {
        return new PolicySpec(model, observationSize, inputs, output, s, normalisation);
    }

    public PolicySpec withNormalisation(NormalisationSpec n) {
        return new PolicySpec(model, observationSize, inputs, output, session, n);
    }
}
