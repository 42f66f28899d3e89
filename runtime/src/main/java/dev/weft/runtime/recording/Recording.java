package dev.weft.runtime.recording;

import java.util.List;

/**
 * A recorded trajectory, checked: strictly increasing times (seconds), and at every sample an
 * observation vector and the action that was commanded (both finite). Immutable.
 *
 * <p>Samples are stored row-major: {@code observations[i·observationSize() + k]}.
 */
public final class Recording {

    private final String source;
    private final double[] times;
    private final double[] observations;
    private final double[] actions;
    private final List<String> observationNames;
    private final List<String> actionNames;

    /**
     * @param source where it was read from, for messages and reports (a file, a file and dataset)
     * @param times sample times in seconds, strictly increasing, finite
     * @param observations {@code times.length × observationNames.size()} values, row-major, finite
     * @param actions {@code times.length × actionNames.size()} values, row-major, finite
     * @throws IllegalArgumentException when the sizes disagree (readers check values and say where)
     */
    public Recording(String source, double[] times, double[] observations, double[] actions,
                     List<String> observationNames, List<String> actionNames) {
        int n = times.length;
        if (n < 1) {
            throw new IllegalArgumentException(source + ": a recording needs at least one sample");
        }
        if (observations.length != n * observationNames.size() || actions.length != n * actionNames.size()) {
            throw new IllegalArgumentException(source + ": value arrays do not match " + n + " samples");
        }
        this.source = source;
        this.times = times.clone();
        this.observations = observations.clone();
        this.actions = actions.clone();
        this.observationNames = List.copyOf(observationNames);
        this.actionNames = List.copyOf(actionNames);
    }

    public String source() {
        return source;
    }

    /** Number of samples. */
    public int length() {
        return times.length;
    }

    /** Time of sample {@code i}, seconds. */
    public double time(int i) {
        return times[i];
    }

    public int observationSize() {
        return observationNames.size();
    }

    public int actionSize() {
        return actionNames.size();
    }

    public List<String> observationNames() {
        return observationNames;
    }

    public List<String> actionNames() {
        return actionNames;
    }

    /** Copies sample {@code i}'s observation into {@code out}. Allocation-free. */
    public void observation(int i, double[] out) {
        System.arraycopy(observations, i * observationNames.size(), out, 0, observationNames.size());
    }

    /** Copies sample {@code i}'s action into {@code out}. Allocation-free. */
    public void action(int i, double[] out) {
        System.arraycopy(actions, i * actionNames.size(), out, 0, actionNames.size());
    }

    /** The index of the last sample at or before {@code t} seconds, or -1 when {@code t} precedes the first. */
    public int sampleAtOrBefore(double t) {
        int lo = 0;
        int hi = times.length - 1;
        if (t < times[0]) {
            return -1;
        }
        while (lo < hi) {
            int mid = (lo + hi + 1) >>> 1;
            if (times[mid] <= t) {
                lo = mid;
            } else {
                hi = mid - 1;
            }
        }
        return lo;
    }
}
