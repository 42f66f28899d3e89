package dev.weft.runtime.config;

import java.util.List;
import java.util.OptionalDouble;
import java.util.OptionalLong;

/**
 * The {@code gates} section: the thresholds a dry run is judged by. A dry run passes when every
 * configured threshold holds. Commands outside the limiter's bounds always fail a dry run; that
 * threshold is fixed at zero and has no key.
 *
 * @param rmsErrorMax per joint (in joint order, joint units), the largest root-mean-square error
 *     accepted; empty when not gated
 * @param maxErrorMax per joint, the largest absolute error accepted; empty when not gated
 * @param stopsMax controlled stops accepted, {@code >= 0}
 * @param starvedTicksMax ticks with no plan accepted, {@code >= 0}
 * @param inferenceP99Max the largest 99th percentile of inference latency accepted, in seconds; empty
 *     when not gated
 * @param staleDroppedMax actions dropped as stale (already past when their chunk arrived) accepted;
 *     empty when not gated
 */
public record GatesConfig(List<Double> rmsErrorMax, List<Double> maxErrorMax, long stopsMax, long starvedTicksMax,
                          OptionalDouble inferenceP99Max, OptionalLong staleDroppedMax) {

    /** The gates when the section is left out: no stop, no starved tick; errors and latency not gated. */
    public static final GatesConfig DEFAULTS = new GatesConfig(List.of(), List.of(), 0, 0, OptionalDouble.empty(),
            OptionalLong.empty());

    public GatesConfig {
        if (rmsErrorMax == null || maxErrorMax == null || inferenceP99Max == null || staleDroppedMax == null) {
            throw new IllegalArgumentException("every gate must be given (empty for none)");
        }
        rmsErrorMax = List.copyOf(rmsErrorMax);
        maxErrorMax = List.copyOf(maxErrorMax);
        for (List<Double> l : List.of(rmsErrorMax, maxErrorMax)) {
            for (double v : l) {
                if (!(v >= 0) || Double.isInfinite(v)) {
                    throw new IllegalArgumentException("error thresholds must be finite and >= 0, got " + v);
                }
            }
        }
        if (stopsMax < 0 || starvedTicksMax < 0) {
            throw new IllegalArgumentException("stop and starved-tick thresholds must be >= 0");
        }
        if (inferenceP99Max.isPresent() && !(inferenceP99Max.getAsDouble() > 0
                && Double.isFinite(inferenceP99Max.getAsDouble()))) {
            throw new IllegalArgumentException("the inference latency threshold must be finite and > 0");
        }
        if (staleDroppedMax.isPresent() && staleDroppedMax.getAsLong() < 0) {
            throw new IllegalArgumentException("the stale-dropped threshold must be >= 0");
        }
    }

    /** True when the root-mean-square error is gated (then {@link #rmsErrorMax()} has one value per joint). */
    public boolean gatesRmsError() {
        return !rmsErrorMax.isEmpty();
    }

    /** True when the largest error is gated (then {@link #maxErrorMax()} has one value per joint). */
    public boolean gatesMaxError() {
        return !maxErrorMax.isEmpty();
    }
}
