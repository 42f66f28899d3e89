package dev.weft.runtime.config;

import java.util.EnumSet;
import java.util.List;
import java.util.Set;

/**
 * The watchdog's bounds and the conditions explicitly switched off. Times in seconds.
 *
 * @param observationAgeMax oldest observation the loop acts on, {@code >= controlPeriod}
 * @param planRemainingMin least plan ahead before the watchdog stops; 0 stops only on starvation
 * @param inferenceLatencyMax longest an inference request may take, {@code > 0}
 * @param overrunsMax consecutive ticks that may miss their deadline, {@code >= 1}
 * @param disabled the conditions switched off, each with its reason, in the order given
 * @param observationAheadMax how far an observation's time stamp may lie ahead of the loop's clock
 *     before it is a fault (another clock domain), {@code >= 0}
 * @param planRangeSlack how far a chunk's action may lie outside its joint's position bounds
 *     before the chunk is a policy fault, {@code >= 0} (position units)
 * @param stallPeriods control periods without a completed tick before the loop monitor raises the
 *     loop-stalled alarm, {@code >= 1}
 */
public record WatchdogConfig(double observationAgeMax, double planRemainingMin, double inferenceLatencyMax,
                             int overrunsMax, List<Disabled> disabled, double observationAheadMax,
                             double planRangeSlack, int stallPeriods) {

    /** Default of {@link #observationAheadMax()}, seconds. */
    public static final double DEFAULT_OBSERVATION_AHEAD_MAX = 0.001;
    /** Default of {@link #stallPeriods()}. */
    public static final int DEFAULT_STALL_PERIODS = 3;

    /** The bounds with the defaults for the observation-ahead tolerance, the plan range slack and the stall bound. */
    public WatchdogConfig(double observationAgeMax, double planRemainingMin, double inferenceLatencyMax,
                          int overrunsMax, List<Disabled> disabled) {
        this(observationAgeMax, planRemainingMin, inferenceLatencyMax, overrunsMax, disabled,
                DEFAULT_OBSERVATION_AHEAD_MAX, 0.0, DEFAULT_STALL_PERIODS);
    }

    /** The conditions the watchdog checks, with the names configuration uses. */
    public enum Condition {
        /** The newest observation is older than {@code observationAgeMax}. */
        OBSERVATION_AGE("observation_age", true),
        /** Less plan remains than {@code planRemainingMin} (or none at all). */
        PLAN_REMAINING("plan_remaining", true),
        /** An inference request has been in flight longer than {@code inferenceLatencyMax}. */
        INFERENCE_LATENCY("inference_latency", true),
        /** More than {@code overrunsMax} consecutive ticks missed their deadline. */
        OVERRUNS("overruns", true),
        /** The command port reported a fault. */
        PORT_FAULT("port_fault", true),
        /** The policy produced a NaN or infinite value. */
        NON_FINITE_OUTPUT("non_finite_output", true),
        /** The operator asked for a stop; never switched off. */
        OPERATOR_STOP("operator_stop", false);

        private final String label;
        private final boolean canDisable;

        Condition(String label, boolean canDisable) {
            this.label = label;
            this.canDisable = canDisable;
        }

        public String label() {
            return label;
        }

        /** False for the conditions no configuration may switch off. */
        public boolean canDisable() {
            return canDisable;
        }
    }

    /**
     * One condition switched off.
     *
     * @param condition the condition, one that {@link Condition#canDisable() can be disabled}
     * @param reason why, as the run's log and report show it; not blank
     */
    public record Disabled(Condition condition, String reason) {
        public Disabled {
            if (condition == null || reason == null || reason.isBlank()) {
                throw new IllegalArgumentException("a disabled condition needs a condition and a reason");
            }
            if (!condition.canDisable()) {
                throw new IllegalArgumentException(condition.label() + " cannot be disabled");
            }
        }
    }

    public WatchdogConfig {
        if (disabled == null) {
            throw new IllegalArgumentException("disabled must be given (empty for none)");
        }
        disabled = List.copyOf(disabled);
    }

    /** True unless {@code c} is in {@link #disabled()}. */
    public boolean enabled(Condition c) {
        for (Disabled d : disabled) {
            if (d.condition() == c) {
                return false;
            }
        }
        return true;
    }

    /** The conditions that are checked. */
    public Set<Condition> enabledConditions() {
        Set<Condition> out = EnumSet.noneOf(Condition.class);
        for (Condition c : Condition.values()) {
            if (enabled(c)) {
                out.add(c);
            }
        }
        return out;
    }
}
