package dev.weft.runtime.config;

/**
 * The optional smoothing filter between blender and limiter. Frequencies in Hz; fields that belong
 * to a method other than {@link #method()} are 0.
 *
 * @param method the filter
 * @param cutoff Butterworth −3 dB frequency, in {@code (0, controlRate/2)}
 * @param minCutoff One Euro cutoff at rest, {@code > 0}
 * @param beta One Euro speed coefficient, {@code >= 0}
 * @param derivativeCutoff One Euro cutoff of the speed estimate, {@code > 0}
 */
public record SmoothingConfig(Method method, double cutoff, double minCutoff, double beta, double derivativeCutoff) {

    /** The smoothing methods, with the words configuration uses. */
    public enum Method {
        /** No smoothing. */
        NONE("none"),
        /** Second-order Butterworth low-pass per joint. */
        BUTTERWORTH("butterworth"),
        /** One Euro filter per joint. */
        ONE_EURO("one_euro");

        private final String label;

        Method(String label) {
            this.label = label;
        }

        public String label() {
            return label;
        }
    }

    /** No smoothing. */
    public static final SmoothingConfig NONE = new SmoothingConfig(Method.NONE, 0, 0, 0, 0);

    public SmoothingConfig {
        if (method == null) {
            throw new IllegalArgumentException("a smoothing method must be given");
        }
    }
}
