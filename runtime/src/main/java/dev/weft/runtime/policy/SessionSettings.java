package dev.weft.runtime.policy;

/**
 * ONNX Runtime session options weft exposes.
 *
 * @param intraOpThreads threads inside one operator; 1 by default so inference leaves the other
 *     cores to the control loop
 * @param optimization graph optimisation level
 * @param spinning whether ONNX Runtime's thread pool spins while idle; off by default, since a
 *     spinning pool steals the control loop's core
 * @param warmupRuns inference calls made at load, before any control starts
 */
public record SessionSettings(int intraOpThreads, Optimization optimization, boolean spinning, int warmupRuns) {

    /** Graph optimisation levels, as ONNX Runtime defines them. */
    public enum Optimization {
        NONE, BASIC, EXTENDED, ALL
    }

    public static final SessionSettings DEFAULTS = new SessionSettings(1, Optimization.ALL, false, 20);

    public SessionSettings {
        if (intraOpThreads < 1) {
            throw new IllegalArgumentException("intra-op threads must be >= 1, got " + intraOpThreads);
        }
        if (warmupRuns < 0) {
            throw new IllegalArgumentException("warm-up runs must be >= 0, got " + warmupRuns);
        }
        if (optimization == null) {
            throw new IllegalArgumentException("optimization must be given");
        }
    }

    public SessionSettings withIntraOpThreads(int n) {
        return new SessionSettings(n, optimization, spinning, warmupRuns);
    }

    public SessionSettings withWarmupRuns(int n) {
        return new SessionSettings(intraOpThreads, optimization, spinning, n);
    }

    public SessionSettings withSpinning(boolean on) {
        return new SessionSettings(intraOpThreads, optimization, on, warmupRuns);
    }
}
