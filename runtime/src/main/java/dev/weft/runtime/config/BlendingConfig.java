package dev.weft.runtime.config;

import dev.weft.filters.Interpolation;

/**
 * How overlapping chunks are blended into one plan, and how the plan is read between its points.
 * Fields that belong to a method other than {@link #method()} hold their defaults.
 *
 * @param method the blender
 * @param interpolation how plan points are joined when a control tick falls between two of them
 * @param weightRate ensembling weight rate m ({@code w_i = exp(-m·i)}), {@code >= 0}
 * @param favour which prediction of a tick gets weight 1 in ensembling
 * @param executedSteps for {@link Method#LATEST}: leading steps of a chunk that are executed,
 *     or 0 for all of them
 * @param fadeSteps for {@link Method#CROSSFADE}: length of the fade in policy steps, {@code >= 1}
 * @param weights for {@link Method#ENSEMBLE}: tapered weights (the default) or the exact published ones
 * @param taperSteps for tapered ensembling: length of each chunk's taper in policy steps, {@code >= 0},
 *     or NaN for the default, half the chunk length (whole steps) but at least one step ({@link #taperSteps(int)})
 */
public record BlendingConfig(Method method, Interpolation interpolation, double weightRate, Favour favour,
                             int executedSteps, int fadeSteps, Weights weights, double taperSteps) {

    /** Which weights temporal ensembling uses. */
    public enum Weights {
        /**
         * {@code exp(-m·i)} times a smooth taper at each chunk's entry and exit, so a chunk entering or
         * leaving the ensemble does not step the plan.
         */
        TAPERED("tapered"),
        /** Exactly {@code exp(-m·i)}, as published (Zhao et al. 2023): the plan steps where a chunk ends. */
        PUBLISHED("published");

        private final String label;

        Weights(String label) {
            this.label = label;
        }

        public String label() {
            return label;
        }
    }

    /** The taper in policy steps for chunks of {@code chunkLength} steps: 0 with published weights. */
    public double taperSteps(int chunkLength) {
        if (weights == Weights.PUBLISHED) {
            return 0.0;
        }
        return Double.isNaN(taperSteps) ? Math.max(1, chunkLength / 2) : taperSteps;
    }

    /** The blending methods, with the words configuration uses. */
    public enum Method {
        /** Exponential temporal ensembling of every chunk that covers a tick. */
        ENSEMBLE("ensemble"),
        /** The newest chunk alone, from its arrival on. */
        LATEST("latest"),
        /** The newest chunk, faded in linearly over the old plan. */
        CROSSFADE("crossfade");

        private final String label;

        Method(String label) {
            this.label = label;
        }

        public String label() {
            return label;
        }
    }

    /** Which end of the predictions for one tick temporal ensembling weights most. */
    public enum Favour {
        /** {@code i = 0} is the oldest prediction for the tick. */
        OLDEST("oldest"),
        /** {@code i = 0} is the newest prediction for the tick. */
        NEWEST("newest");

        private final String label;

        Favour(String label) {
            this.label = label;
        }

        public String label() {
            return label;
        }
    }

    /** Weight rate used when none is configured. */
    public static final double DEFAULT_WEIGHT_RATE = 0.01;

    /** Ensembling, oldest first, m = 0.01, tapered weights with the default taper, natural cubic spline. */
    public static final BlendingConfig DEFAULTS = new BlendingConfig(Method.ENSEMBLE, Interpolation.CUBIC_SPLINE,
            DEFAULT_WEIGHT_RATE, Favour.OLDEST, 0, 0, Weights.TAPERED, Double.NaN);

    public BlendingConfig {
        if (method == null || interpolation == null || favour == null || weights == null) {
            throw new IllegalArgumentException("method, interpolation, favour and weights must be given");
        }
    }
}
