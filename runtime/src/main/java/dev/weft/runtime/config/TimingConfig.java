package dev.weft.runtime.config;

/**
 * Timing of the control loop and of inference requests. All times in seconds.
 *
 * @param controlPeriod the control period Δc, {@code > 0}
 * @param policyStep the time between two actions of a chunk Δp, {@code >= controlPeriod}
 * @param schedule when the loop hands an inference request to the worker
 * @param everyTicks ticks between requests for {@link QuerySchedule#FIXED}, {@code >= 1}; 0 for
 *     {@link QuerySchedule#WHEN_IDLE}
 * @param spinWindow how long before each deadline the loop stops parking and spins, in
 *     {@code [0, controlPeriod)}
 * @param dryRunLatency the inference latency a dry run on virtual time models, s (rounded up to
 *     whole ticks), instead of the latency it measures: the same files on any machine and load;
 *     NaN when not configured
 */
public record TimingConfig(double controlPeriod, double policyStep, QuerySchedule schedule, int everyTicks,
                           double spinWindow, double dryRunLatency) {

    /** Without a configured dry-run latency (dry runs model the measured one). */
    public TimingConfig(double controlPeriod, double policyStep, QuerySchedule schedule, int everyTicks,
                        double spinWindow) {
        this(controlPeriod, policyStep, schedule, everyTicks, spinWindow, Double.NaN);
    }

    /** The dry-run latency in whole control ticks (rounded up, at least 1), or −1 when not configured. */
    public long dryRunLatencyTicks() {
        return Double.isNaN(dryRunLatency) ? -1 : Math.max(1, (long) Math.ceil(dryRunLatency / controlPeriod - 1e-9));
    }

    /** When the control loop asks the policy for a new chunk. */
    public enum QuerySchedule {
        /** Every {@code everyTicks} control ticks; a request that falls due while one is in flight waits for the next. */
        FIXED("fixed"),
        /** On the first tick at which the inference worker has no request in hand. */
        WHEN_IDLE("when_idle");

        private final String label;

        QuerySchedule(String label) {
            this.label = label;
        }

        /** The word configuration uses. */
        public String label() {
            return label;
        }
    }

    public TimingConfig {
        if (schedule == null) {
            throw new IllegalArgumentException("a query schedule must be given");
        }
    }

    /** The step ratio {@code r = policyStep / controlPeriod}, not necessarily a whole number. */
    public double stepRatio() {
        return policyStep / controlPeriod;
    }

    /** The control rate {@code 1 / controlPeriod} in Hz. */
    public double controlRate() {
        return 1.0 / controlPeriod;
    }
}
