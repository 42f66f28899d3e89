package dev.weft.safety;

import java.util.ArrayList;
import java.util.Collections;
import java.util.EnumMap;
import java.util.List;
import java.util.Map;

/**
 * Checks, every tick, the conditions the runtime feeds it as primitives and reports the first one
 * present. Every condition is on unless it was turned off with {@link Builder#disable}, which needs a
 * reason; {@link #disabled()} lists those so the runtime can log them at start.
 *
 * <p>Bounds and their defaults: observation age {@value #DEFAULT_MAX_OBSERVATION_AGE_NANOS} ns,
 * plan remaining at least {@value #DEFAULT_MIN_PLAN_TICKS} ticks, inference latency
 * {@value #DEFAULT_MAX_INFERENCE_LATENCY_NANOS} ns, at most {@value #DEFAULT_MAX_CONSECUTIVE_OVERRUNS}
 * consecutive overruns (the condition is seen when the run is longer than the bound).
 *
 * <p>Threading and allocation: one instance belongs to the control thread; {@link #check} allocates
 * nothing. The builder is for setup code only.
 */
public final class Watchdog {

    /** Default bound on observation age: 100 ms. */
    public static final long DEFAULT_MAX_OBSERVATION_AGE_NANOS = 100_000_000L;
    /** Default least number of planned ticks ahead. */
    public static final int DEFAULT_MIN_PLAN_TICKS = 2;
    /** Default bound on inference latency: 250 ms. */
    public static final long DEFAULT_MAX_INFERENCE_LATENCY_NANOS = 250_000_000L;
    /** Default longest tolerated run of consecutive overruns. */
    public static final int DEFAULT_MAX_CONSECUTIVE_OVERRUNS = 3;

    private final long maxObservationAgeNanos;
    private final int minPlanTicks;
    private final long maxInferenceLatencyNanos;
    private final int maxConsecutiveOverruns;
    private final int enabledMask;
    private final List<DisabledCondition> disabled;

    private int activeMask;
    private int lastCode;
    private long lastTick = -1;

    private Watchdog(Builder b) {
        this.maxObservationAgeNanos = b.maxObservationAgeNanos;
        this.minPlanTicks = b.minPlanTicks;
        this.maxInferenceLatencyNanos = b.maxInferenceLatencyNanos;
        this.maxConsecutiveOverruns = b.maxConsecutiveOverruns;
        int mask = 0;
        List<DisabledCondition> off = new ArrayList<>();
        for (WatchdogCondition c : WatchdogCondition.values()) {
            String reason = b.disabled.get(c);
            if (reason == null) {
                mask |= c.bit();
            } else {
                off.add(new DisabledCondition(c, reason));
            }
        }
        this.enabledMask = mask;
        this.disabled = Collections.unmodifiableList(off);
    }

    /** A builder with every condition on and the default bounds. */
    public static Builder builder() {
        return new Builder();
    }

    /**
     * Checks one tick.
     *
     * @param tick                  the control tick being checked
     * @param observationAgeNanos   age of the latest observation at this tick; a negative value means
     *                              the age is unknown and counts as stale
     * @param planTicksRemaining    planned ticks left ahead of this tick (0 or less: starved)
     * @param inferenceLatencyNanos latency of the latest finished inference, or the age of the one in
     *                              flight if that is larger; negative when no inference has run yet
     * @param consecutiveOverruns   length of the current run of ticks that missed their deadline
     * @param portFault             whether the command port reports a fault
     * @param nonFiniteOutput       whether the policy output used this tick had NaN or an infinity
     * @param operatorStop          whether the operator asked for a stop
     * @return code of the condition present that comes first in the cause order (a failed part before the symptoms it brings; docs/safety.md), or 0 when none
     */
    public int check(long tick, long observationAgeNanos, int planTicksRemaining, long inferenceLatencyNanos,
                     int consecutiveOverruns, boolean portFault, boolean nonFiniteOutput, boolean operatorStop) {
        return check(tick, observationAgeNanos, planTicksRemaining, inferenceLatencyNanos, consecutiveOverruns,
                portFault, nonFiniteOutput, operatorStop, 0);
    }

    /**
     * Checks one tick, with conditions the caller detected itself: the ones this class cannot see
     * from the figures above (an exception caught in the tick, a telemetry failure, a plan outside
     * the range, an observation from another clock domain, a stalled loop).
     *
     * @param reported bits ({@link WatchdogCondition#bit()}) of the conditions the caller saw at this
     *     tick, of any condition; they are masked by the enabled conditions like the others
     * @see #check(long, long, int, long, int, boolean, boolean, boolean)
     */
    public int check(long tick, long observationAgeNanos, int planTicksRemaining, long inferenceLatencyNanos,
                     int consecutiveOverruns, boolean portFault, boolean nonFiniteOutput, boolean operatorStop,
                     int reported) {
        int seen = reported;
        if (operatorStop) {
            seen |= WatchdogCondition.OPERATOR_STOP.bit();
        }
        if (portFault) {
            seen |= WatchdogCondition.PORT_FAULT.bit();
        }
        if (nonFiniteOutput) {
            seen |= WatchdogCondition.NON_FINITE_OUTPUT.bit();
        }
        if (observationAgeNanos < 0 || observationAgeNanos > maxObservationAgeNanos) {
            seen |= WatchdogCondition.STALE_OBSERVATION.bit();
        }
        if (planTicksRemaining <= 0) {
            seen |= WatchdogCondition.PLAN_STARVED.bit();
        } else if (planTicksRemaining < minPlanTicks) {
            seen |= WatchdogCondition.PLAN_LOW.bit();
        }
        if (inferenceLatencyNanos > maxInferenceLatencyNanos) {
            seen |= WatchdogCondition.INFERENCE_LATE.bit();
        }
        if (consecutiveOverruns > maxConsecutiveOverruns) {
            seen |= WatchdogCondition.LOOP_OVERRUNS.bit();
        }
        seen &= enabledMask;
        activeMask = seen;
        lastTick = tick;
        lastCode = first(seen);
        return lastCode;
    }

    /**
     * The order in which conditions present at the same tick name the cause: the operator's stop,
     * then a part that failed (the loop, a tick step, the port, the telemetry, the policy, the
     * observation, the plan), then the symptoms that follow from such a failure (a stale
     * observation, overruns, late inference, a plan running out). A stalled loop or a failed
     * policy starves the plan, so the plan running out is never the cause when they are present.
     */
    private static final WatchdogCondition[] PRIORITY = {
        WatchdogCondition.OPERATOR_STOP,
        WatchdogCondition.LOOP_STALLED,
        WatchdogCondition.TICK_EXCEPTION,
        WatchdogCondition.PORT_EXCEPTION,
        WatchdogCondition.PORT_FAULT,
        WatchdogCondition.TELEMETRY_FAULT,
        WatchdogCondition.POLICY_FAILED,
        WatchdogCondition.NON_FINITE_OBSERVATION,
        WatchdogCondition.OBSERVATION_AHEAD,
        WatchdogCondition.NON_FINITE_OUTPUT,
        WatchdogCondition.PLAN_OUT_OF_RANGE,
        WatchdogCondition.STALE_OBSERVATION,
        WatchdogCondition.FRAME_STALE,
        WatchdogCondition.LOOP_OVERRUNS,
        WatchdogCondition.INFERENCE_LATE,
        WatchdogCondition.PLAN_STARVED,
        WatchdogCondition.PLAN_LOW,
    };

    private static int first(int seen) {
        if (seen == 0) {
            return 0;
        }
        for (WatchdogCondition c : PRIORITY) {
            if ((seen & c.bit()) != 0) {
                return c.code();
            }
        }
        return Integer.numberOfTrailingZeros(seen) + 1;
    }

    /** Bits ({@link WatchdogCondition#bit()}) of every enabled condition present at the last check. */
    public int activeMask() {
        return activeMask;
    }

    /** Code returned by the last check, 0 before the first. */
    public int lastCode() {
        return lastCode;
    }

    /** Tick of the last check, -1 before the first. */
    public long lastTick() {
        return lastTick;
    }

    /** Whether a condition is checked. */
    public boolean isEnabled(WatchdogCondition condition) {
        return (enabledMask & condition.bit()) != 0;
    }

    /** Conditions turned off, with their reasons, in code order. Unmodifiable. */
    public List<DisabledCondition> disabled() {
        return disabled;
    }

    /** Bound on observation age in nanoseconds. */
    public long maxObservationAgeNanos() {
        return maxObservationAgeNanos;
    }

    /** Least number of planned ticks ahead. */
    public int minPlanTicks() {
        return minPlanTicks;
    }

    /** Bound on inference latency in nanoseconds. */
    public long maxInferenceLatencyNanos() {
        return maxInferenceLatencyNanos;
    }

    /** Longest tolerated run of consecutive overruns. */
    public int maxConsecutiveOverruns() {
        return maxConsecutiveOverruns;
    }

    /** Collects bounds and explicit disables; {@link #build()} validates. Not thread-safe. */
    public static final class Builder {
        private long maxObservationAgeNanos = DEFAULT_MAX_OBSERVATION_AGE_NANOS;
        private int minPlanTicks = DEFAULT_MIN_PLAN_TICKS;
        private long maxInferenceLatencyNanos = DEFAULT_MAX_INFERENCE_LATENCY_NANOS;
        private int maxConsecutiveOverruns = DEFAULT_MAX_CONSECUTIVE_OVERRUNS;
        private final Map<WatchdogCondition, String> disabled = new EnumMap<>(WatchdogCondition.class);

        private Builder() {
        }

        /** Bound on observation age, &gt; 0 ns. */
        public Builder maxObservationAgeNanos(long nanos) {
            if (nanos <= 0) {
                throw new IllegalArgumentException("watchdog: max observation age must be > 0 ns, was " + nanos);
            }
            this.maxObservationAgeNanos = nanos;
            return this;
        }

        /** Least number of planned ticks ahead, &gt;= 1 (1 makes {@link WatchdogCondition#PLAN_LOW} the same as starvation). */
        public Builder minPlanTicks(int ticks) {
            if (ticks < 1) {
                throw new IllegalArgumentException("watchdog: min plan ticks must be >= 1, was " + ticks);
            }
            this.minPlanTicks = ticks;
            return this;
        }

        /** Bound on inference latency, &gt; 0 ns. */
        public Builder maxInferenceLatencyNanos(long nanos) {
            if (nanos <= 0) {
                throw new IllegalArgumentException("watchdog: max inference latency must be > 0 ns, was " + nanos);
            }
            this.maxInferenceLatencyNanos = nanos;
            return this;
        }

        /** Longest tolerated run of consecutive overruns, &gt;= 0 (0: the first overrun trips it). */
        public Builder maxConsecutiveOverruns(int overruns) {
            if (overruns < 0) {
                throw new IllegalArgumentException("watchdog: max consecutive overruns must be >= 0, was " + overruns);
            }
            this.maxConsecutiveOverruns = overruns;
            return this;
        }

        /**
         * Turns a condition off. The reason is kept and listed by {@link Watchdog#disabled()}.
         *
         * @throws IllegalArgumentException when the condition is null or the reason is empty
         */
        public Builder disable(WatchdogCondition condition, String reason) {
            if (condition == null) {
                throw new IllegalArgumentException("watchdog: condition to disable must not be null");
            }
            if (reason == null || reason.isBlank()) {
                throw new IllegalArgumentException("watchdog: disabling " + condition
                        + " needs a non-empty reason");
            }
            disabled.put(condition, reason.strip());
            return this;
        }

        /** Builds the watchdog. */
        public Watchdog build() {
            return new Watchdog(this);
        }
    }
}
