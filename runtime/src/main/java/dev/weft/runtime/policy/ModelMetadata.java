package dev.weft.runtime.policy;

import ai.onnxruntime.OnnxModelMetadata;
import java.util.Collections;
import java.util.Map;
import java.util.TreeMap;

/**
 * A model's descriptive fields as ONNX Runtime reads them ({@code OnnxModelMetadata}): who made
 * it, the graph's name and description, the model's domain, description and version, and the
 * free key-value properties ({@code metadata_props}) where exporters keep facts such as
 * normalisation statistics and timing. A field the model does not record is an empty text, or
 * version -1.
 *
 * @param producer the producer's name
 * @param graphName the main graph's name
 * @param graphDescription the main graph's documentation text
 * @param domain the model's domain, in reverse-DNS form by convention
 * @param description the model's documentation text
 * @param version the model's own version number ({@code model_version}), -1 when it has none
 *     (ONNX Runtime reports 2^63 - 1 then)
 * @param properties the custom properties, by key in key order
 */
public record ModelMetadata(String producer, String graphName, String graphDescription, String domain,
                            String description, long version, Map<String, String> properties) {

    public ModelMetadata {
        properties = Collections.unmodifiableMap(new TreeMap<>(properties));
    }

    static ModelMetadata of(OnnxModelMetadata m) {
        return new ModelMetadata(text(m.getProducerName()), text(m.getGraphName()), text(m.getGraphDescription()),
                text(m.getDomain()), text(m.getDescription()), m.getVersion() == Long.MAX_VALUE ? -1 : m.getVersion(),
                m.getCustomMetadata());
    }

    private static String text(String s) {
        return s == null ? "" : s;
    }
}
