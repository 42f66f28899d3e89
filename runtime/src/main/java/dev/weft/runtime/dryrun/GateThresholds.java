package dev.weft.runtime.dryrun;

/**
 * What a dry run is judged by. A threshold that is {@code NaN} (or negative, for counts) is not
 * checked; bound violations are always checked against 0.
 *
 * @param rmsErrorMax per joint, the largest RMS difference between command and recorded action; null = not checked
 * @param maxErrorMax per joint, the largest difference; null = not checked
 * @param stopsMax the most stops allowed (default 0)
 * @param stopsMin the fewest stops required (for an episode meant to make weft stop); -1 = not checked
 * @param starvedTicksMax the most starved ticks allowed (default 0)
 * @param inferenceP99MaxSeconds the largest p99 inference latency, seconds; NaN = not checked
 * @param staleDroppedMax the most stale chunk steps allowed; -1 = not checked
 */
public record GateThresholds(double[] rmsErrorMax, double[] maxErrorMax, long stopsMax, long stopsMin,
                             long starvedTicksMax, double inferenceP99MaxSeconds, long staleDroppedMax) {

    /** No stops, no starvation, no bound violation; nothing else checked. */
    public static final GateThresholds DEFAULTS = new GateThresholds(null, null, 0, -1, 0, Double.NaN, -1);

    public GateThresholds withStops(long min, long max) {
        return new GateThresholds(rmsErrorMax, maxErrorMax, max, min, starvedTicksMax, inferenceP99MaxSeconds,
                staleDroppedMax);
    }

    public GateThresholds withRmsErrorMax(double[] perJoint) {
        return new GateThresholds(perJoint, maxErrorMax, stopsMax, stopsMin, starvedTicksMax, inferenceP99MaxSeconds,
                staleDroppedMax);
    }

    public GateThresholds withMaxErrorMax(double[] perJoint) {
        return new GateThresholds(rmsErrorMax, perJoint, stopsMax, stopsMin, starvedTicksMax, inferenceP99MaxSeconds,
                staleDroppedMax);
    }

    public GateThresholds withStarvedTicksMax(long n) {
        return new GateThresholds(rmsErrorMax, maxErrorMax, stopsMax, stopsMin, n, inferenceP99MaxSeconds,
                staleDroppedMax);
    }

    public GateThresholds withInferenceP99Max(double seconds) {
        return new GateThresholds(rmsErrorMax, maxErrorMax, stopsMax, stopsMin, starvedTicksMax, seconds,
                staleDroppedMax);
    }

    public GateThresholds withStaleDroppedMax(long n) {
        return new GateThresholds(rmsErrorMax, maxErrorMax, stopsMax, stopsMin, starvedTicksMax, inferenceP99MaxSeconds,
                n);
    }
}
