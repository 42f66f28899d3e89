package dev.weft.runtime.dryrun;

import java.util.List;

/**
 * The figures of one dry run: what {@code summary.json} holds and the report's metrics table
 * shows. Units: seconds and the configuration's joint units (radians, metres); latencies in
 * milliseconds where the name says {@code Ms}.
 *
 * @param name the run's name (the recording's file name, or an episode's name)
 * @param recording where the recording was read from
 * @param joints joint names, in action order
 * @param closedLoop true when observations came from the simulated plant, false when from the recording
 * @param realtime true when paced at the control period on the real clock
 * @param controlPeriod Δc, seconds
 * @param latencyTicks the modelled inference latency, ticks (virtual time); -1 on real time
 * @param ticks ticks run
 * @param commands command frames the port wrote
 * @param telemetryRows telemetry rows written (whole rows in telemetry.csv)
 * @param telemetryHanded telemetry rows the loop handed to the recorder (one per tick run)
 * @param telemetryLost telemetry rows lost (never in the file); handed = written + lost
 * @param boundViolations ticks where the command file's finite differences exceed a limit (re-checked independently); must be 0
 * @param rmsError per joint, RMS of command − recorded action over ticks where the recording has one
 * @param maxError per joint, largest |command − recorded action|
 * @param limitActive ticks on which each limit shaped the command of at least one joint
 * @param staleDropped chunk steps dropped because their time had passed
 * @param deferredQueries due queries the busy policy could not take at their tick (issued once it was free)
 * @param starvedTicks ticks with no plan
 * @param watchdogEvents ticks on which a watchdog condition appeared (rising edges)
 * @param stops every stop: tick and cause
 * @param inferenceMs measured inference latency of the policy in this run
 * @param periodErrorMs loop period error, only on real time (null otherwise)
 * @param passed the verdict: every gate passed
 * @param gates each gate with its threshold, value and result
 */
public record DryRunSummary(String name, String recording, List<String> joints, boolean closedLoop, boolean realtime,
                            double controlPeriod, long latencyTicks, long ticks, long commands, long telemetryRows,
                            long telemetryHanded, long telemetryLost, long boundViolations, double[] rmsError, double[] maxError, LimitCounts limitActive,
                            long staleDropped, long deferredQueries, long starvedTicks, long watchdogEvents, List<Stop> stops,
                            Percentiles inferenceMs, Percentiles periodErrorMs, boolean passed, List<Gate> gates) {

    /** Ticks on which each limit shaped the command. */
    public record LimitCounts(long position, long velocity, long acceleration, long jerk) {
    }

    /** A stop: the tick it started, its time, its cause code's name and message. */
    public record Stop(long tick, double timeSeconds, int causeCode, String cause) {
    }

    /** Median, 99th percentile and maximum. */
    public record Percentiles(double p50, double p99, double max) {
    }

    /** A pass/fail check of one figure against its threshold. */
    public record Gate(String name, double threshold, double value, boolean passed) {
    }
}
