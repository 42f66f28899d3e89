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

    /** The configuration's gates. */
    public static GateThresholds of(dev.weft.runtime.config.GatesConfig g) {
        return new GateThresholds(g.gatesRmsError() ? toArray(g.rmsErrorMax()) : null,
                g.gatesMaxError() ? toArray(g.maxErrorMax()) : null, g.stopsMax(), -1, g.starvedTicksMax(),
                g.inferenceP99Max().isPresent() ? g.inferenceP99Max().getAsDouble() : Double.NaN,
                g.staleDroppedMax().isPresent() ? g.staleDroppedMax().getAsLong() : -1);
    }

    private static double[] toArray(java.util.List<Double> values) {
        double[] out = new double[values.size()];
        for (int i = 0; i < out.length; i++) {
            out[i] = values.get(i);
        }
        return out;
    }

    /**
     * Applies one {@code NAME=VALUE} override from the command line.
     *
     * @throws IllegalArgumentException naming the gate or the value when either is not understood
     */
    public GateThresholds with(String assignment) {
        int eq = assignment.indexOf('=');
        if (eq <= 0) {
            throw new IllegalArgumentException("--gate " + assignment + ": write NAME=VALUE, such as stops_max=0");
        }
        String name = assignment.substring(0, eq).trim();
        String text = assignment.substring(eq + 1).trim();
        double value;
        try {
            value = Double.parseDouble(text);
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException("--gate " + name + ": not a number: " + text);
        }
        if (!(value >= 0) || Double.isInfinite(value)) {
            throw new IllegalArgumentException("--gate " + name + ": must be a finite number >= 0, got " + text);
        }
        return switch (name) {
            case "rms_error_max" -> withRmsErrorMax(new double[] {value});
            case "max_error_max" -> withMaxErrorMax(new double[] {value});
            case "stops_max" -> withStops(stopsMin, whole(name, value));
            case "stops_min" -> withStops(whole(name, value), stopsMax);
            case "starved_ticks_max" -> withStarvedTicksMax(whole(name, value));
            case "inference_p99_max" -> withInferenceP99Max(value);
            case "stale_dropped_max" -> withStaleDroppedMax(whole(name, value));
            default -> throw new IllegalArgumentException("--gate " + name + ": no such gate; gates: rms_error_max,"
                    + " max_error_max, stops_max, stops_min, starved_ticks_max, inference_p99_max, stale_dropped_max");
        };
    }

    private static long whole(String name, double v) {
        if (v != Math.rint(v)) {
            throw new IllegalArgumentException("--gate " + name + ": must be a whole number, got " + v);
        }
        return (long) v;
    }

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
