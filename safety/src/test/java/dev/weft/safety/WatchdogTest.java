package dev.weft.safety;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import org.junit.jupiter.api.Test;

class WatchdogTest {

    private static final long MS = 1_000_000L;

    private static Watchdog defaults() {
        return Watchdog.builder()
                .maxObservationAgeNanos(20 * MS)
                .minPlanTicks(5)
                .maxInferenceLatencyNanos(50 * MS)
                .maxConsecutiveOverruns(2)
                .build();
    }

    /** A healthy tick: fresh observation, plenty of plan, fast inference, no overruns, no faults. */
    private static int healthy(Watchdog w, long tick) {
        return w.check(tick, 1 * MS, 100, 5 * MS, 0, false, false, false);
    }

    @Test
    void shouldReportNothingOnAHealthyTick() {
        Watchdog w = defaults();
        assertThat(healthy(w, 0)).isZero();
        assertThat(w.activeMask()).isZero();
        assertThat(w.lastTick()).isZero();
    }

    @Test
    void shouldReportEachConditionWithItsOwnCodeAndMessage() {
        Watchdog w = defaults();
        assertThat(w.check(1, 21 * MS, 100, 5 * MS, 0, false, false, false)).isEqualTo(4);
        assertThat(w.check(1, -1, 100, 5 * MS, 0, false, false, false)).isEqualTo(4);
        assertThat(w.check(2, 1 * MS, 0, 5 * MS, 0, false, false, false)).isEqualTo(5);
        assertThat(w.check(3, 1 * MS, 4, 5 * MS, 0, false, false, false)).isEqualTo(6);
        assertThat(w.check(3, 1 * MS, 5, 5 * MS, 0, false, false, false)).isZero();
        assertThat(w.check(4, 1 * MS, 100, 51 * MS, 0, false, false, false)).isEqualTo(7);
        assertThat(w.check(4, 1 * MS, 100, -1, 0, false, false, false)).isZero();
        assertThat(w.check(5, 1 * MS, 100, 5 * MS, 3, false, false, false)).isEqualTo(8);
        assertThat(w.check(5, 1 * MS, 100, 5 * MS, 2, false, false, false)).isZero();
        assertThat(w.check(6, 1 * MS, 100, 5 * MS, 0, true, false, false)).isEqualTo(2);
        assertThat(w.check(7, 1 * MS, 100, 5 * MS, 0, false, true, false)).isEqualTo(3);
        assertThat(w.check(8, 1 * MS, 100, 5 * MS, 0, false, false, true)).isEqualTo(1);
        assertThat(WatchdogCondition.ofCode(4).message()).isEqualTo("observation is older than its bound");
        assertThat(WatchdogCondition.ofCode(5).message()).isEqualTo("no plan left ahead of the current tick");
        assertThat(WatchdogCondition.ofCode(8).message()).isEqualTo("too many consecutive loop overruns");
        assertThat(WatchdogCondition.ofCode(0)).isNull();
        assertThat(Cause.message(7)).isEqualTo("inference latency is above its bound");
    }

    @Test
    void shouldReportTheFirstConditionAndKeepAllInTheMask() {
        Watchdog w = defaults();
        int code = w.check(9, 30 * MS, 0, 60 * MS, 9, true, false, true);
        assertThat(code).isEqualTo(WatchdogCondition.OPERATOR_STOP.code());
        assertThat(w.activeMask()).isEqualTo(WatchdogCondition.OPERATOR_STOP.bit() | WatchdogCondition.PORT_FAULT.bit()
                | WatchdogCondition.STALE_OBSERVATION.bit() | WatchdogCondition.PLAN_STARVED.bit()
                | WatchdogCondition.INFERENCE_LATE.bit() | WatchdogCondition.LOOP_OVERRUNS.bit());
    }

    @Test
    void aFailedPartNamesTheCauseBeforeTheSymptomsItBrings() {
        Watchdog w = defaults();
        // a loop that stalled also ran out of plan and let the observation age
        assertThat(w.check(9, 30 * MS, 0, 5 * MS, 0, false, false, false, WatchdogCondition.LOOP_STALLED.bit()))
                .isEqualTo(WatchdogCondition.LOOP_STALLED.code());
        // a policy that throws leaves inference late and the plan low
        assertThat(w.check(10, 1 * MS, 1, 600 * MS, 0, false, false, false, WatchdogCondition.POLICY_FAILED.bit()))
                .isEqualTo(WatchdogCondition.POLICY_FAILED.code());
        // a port that threw beats the port's own fault flag, which may follow from it
        assertThat(w.check(11, 1 * MS, 100, 5 * MS, 0, true, false, false, WatchdogCondition.PORT_EXCEPTION.bit()))
                .isEqualTo(WatchdogCondition.PORT_EXCEPTION.code());
        // the operator's stop comes first of all
        assertThat(w.check(12, 1 * MS, 0, 5 * MS, 0, false, false, true, WatchdogCondition.LOOP_STALLED.bit()))
                .isEqualTo(WatchdogCondition.OPERATOR_STOP.code());
        // each condition alone is its own code
        for (WatchdogCondition c : WatchdogCondition.values()) {
            assertThat(w.check(13, 1 * MS, 100, 5 * MS, 0, false, false, false, c.bit())).as(c.name())
                    .isEqualTo(c.code());
        }
    }

    @Test
    void disablingNeedsAReasonAndIsListed() {
        assertThatThrownBy(() -> Watchdog.builder().disable(WatchdogCondition.INFERENCE_LATE, " "))
                .hasMessage("watchdog: disabling INFERENCE_LATE needs a non-empty reason");
        assertThatThrownBy(() -> Watchdog.builder().disable(null, "x"))
                .hasMessage("watchdog: condition to disable must not be null");
        Watchdog w = Watchdog.builder()
                .disable(WatchdogCondition.INFERENCE_LATE, "bench run with a deliberately slow policy")
                .build();
        assertThat(w.isEnabled(WatchdogCondition.INFERENCE_LATE)).isFalse();
        assertThat(w.isEnabled(WatchdogCondition.PLAN_STARVED)).isTrue();
        assertThat(w.disabled()).containsExactly(new DisabledCondition(WatchdogCondition.INFERENCE_LATE,
                "bench run with a deliberately slow policy"));
        assertThat(w.check(0, 0, 100, Long.MAX_VALUE, 0, false, false, false)).isZero();
        assertThat(Watchdog.builder().build().disabled()).isEmpty();
    }

    @Test
    void shouldRejectBadBounds() {
        assertThatThrownBy(() -> Watchdog.builder().maxObservationAgeNanos(0))
                .hasMessage("watchdog: max observation age must be > 0 ns, was 0");
        assertThatThrownBy(() -> Watchdog.builder().minPlanTicks(0))
                .hasMessage("watchdog: min plan ticks must be >= 1, was 0");
        assertThatThrownBy(() -> Watchdog.builder().maxInferenceLatencyNanos(-5))
                .hasMessage("watchdog: max inference latency must be > 0 ns, was -5");
        assertThatThrownBy(() -> Watchdog.builder().maxConsecutiveOverruns(-1))
                .hasMessage("watchdog: max consecutive overruns must be >= 0, was -1");
    }

    @Test
    void checkAllocatesNothing() {
        Watchdog w = defaults();
        long sum = 0;
        for (int k = 0; k < 50_000; k++) {
            sum += w.check(k, (k % 30) * MS, k % 9, (k % 70) * MS, k % 4, (k & 64) != 0, (k & 128) != 0, false);
        }
        long[] total = {0};
        long bytes = AllocationMeter.leastBytes(() -> {
            long acc = 0;
            for (int k = 0; k < 100_000; k++) {
                acc += w.check(k, (k % 30) * MS, k % 9, (k % 70) * MS, k % 4, (k & 64) != 0, (k & 128) != 0, false);
            }
            total[0] += acc;
        });
        assertThat(sum + total[0]).isPositive();
        assertThat(bytes).isZero();
    }
}
