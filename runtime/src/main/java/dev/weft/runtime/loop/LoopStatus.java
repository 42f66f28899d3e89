package dev.weft.runtime.loop;

import dev.weft.runtime.telemetry.RowCounts;

/**
 * A snapshot of a running loop, for status lines and the embedding API.
 *
 * @param state supervisor state, lower case
 * @param ticks ticks run (executed; a skipped deadline is not a tick run)
 * @param overruns ticks that ended after the next deadline
 * @param skipped deadlines skipped because the loop was more than a period late
 * @param planTicks ticks of plan ahead at the latest tick
 * @param watchdogMask conditions present at the latest tick
 * @param chunksAccepted chunks merged into the plan
 * @param staleSteps chunk steps dropped because their time had passed
 * @param inferences inferences finished (any status)
 * @param inferenceFailures inferences that threw or returned non-finite values
 * @param deferredQueries due ticks (fixed schedule) at which the busy worker could not take the
 *     query; the query waits for the first free tick (one request for the due ticks it missed),
 *     the schedule staying on its grid
 * @param portDropped frames the port dropped
 * @param telemetry what became of the telemetry rows (handed over, written, lost, pending), or null
 *     when the run records no telemetry
 */
public record LoopStatus(String state, long ticks, long overruns, long skipped, long planTicks, int watchdogMask,
                         long chunksAccepted, long staleSteps, long inferences, long inferenceFailures,
                         long deferredQueries, long portDropped, RowCounts telemetry) {

    /** Telemetry rows lost so far; 0 when the run records no telemetry. */
    public long telemetryLost() {
        return telemetry == null ? 0 : telemetry.lost();
    }
}
